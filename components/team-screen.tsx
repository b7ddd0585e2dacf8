import { useState } from "react";
import { StyleSheet, Switch, View } from "react-native";
import { useRouter } from "expo-router";
import { Choice, type ChoiceOption } from "./choice";
import { NoticeSetting } from "./notice-setting";
import { Badge, Button, Card, Failure, Field, Heading, Notice, Pending, Txt } from "./ui";
import { palette, radius, space } from "./theme";
import { roleLabel } from "./studies-screen";
import {
  can,
  useArchiveStudy,
  useDeleteStudy,
  useStudy,
  useUnarchiveStudy,
  useUpdateStudy,
  type StudyDetail,
} from "../hooks/use-study";
import { useMe } from "../hooks/use-me";
import {
  useChangeRole,
  useInvite,
  useMembers,
  usePendingInvitations,
  useRemoveMember,
  useRevokeInvitation,
  type Member,
} from "../hooks/use-team";
import type { Role } from "../hooks/use-studies";
import { secondPersonSignOffExplanation, secondPersonSignOffLabel } from "../contract/sign-off";
import { restorableUntil, restoreWindowDays } from "../contract/study-lifecycle";
import { dateWords } from "../contract/dates";
import { mutateThen } from "../hooks/mutate-then";

export const roleOptions: readonly ChoiceOption<Role>[] = [
  { value: "owner", label: "Owner", hint: "manages members and can do everything" },
  {
    value: "analyst",
    label: "Analyst",
    hint: "uploads data, builds models, runs fits, sets participants aside",
  },
  {
    value: "reviewer",
    label: "Reviewer",
    hint: "reads everything, comments, approves fits for sealing",
  },
  { value: "viewer", label: "Viewer", hint: "reads results only" },
];

export function TeamScreen(props: { studyId: string }) {
  const study = useStudy(props.studyId);
  if (study.isPending) return <Pending />;
  if (study.isError) return <Failure error={study.error} onRetry={() => study.refetch()} />;
  return (
    <View style={styles.root}>
      <Members study={study.data} />
      <NoticeSetting studyId={props.studyId} />
      {can(study.data, "invitations.create") ? <Invite studyId={props.studyId} /> : null}
      {can(study.data, "invitations.list") ? (
        <PendingList studyId={props.studyId} canRevoke={can(study.data, "invitations.revoke")} />
      ) : null}
      {can(study.data, "study.update") ? (
        <Settings study={study.data} />
      ) : (
        <SignOffSetting study={study.data} />
      )}
      {can(study.data, "study.archive") || can(study.data, "study.unarchive") ? (
        <ArchiveStudy study={study.data} />
      ) : null}
      {can(study.data, "study.delete") ? <DeleteStudy study={study.data} /> : null}
    </View>
  );
}

function Members({ study }: { study: StudyDetail }) {
  const members = useMembers(study.id);
  const me = useMe();
  const manage = can(study, "members.update");
  return (
    <Card testID="members">
      <Heading level={2}>Members</Heading>
      {members.isPending ? (
        <Pending />
      ) : members.isError ? (
        <Failure error={members.error} onRetry={() => members.refetch()} />
      ) : (
        members.data.map((member) => (
          <MemberRow
            key={member.userId}
            studyId={study.id}
            member={member}
            manage={manage}
            isMe={member.userId === me.data?.id}
            archived={study.archivedAt !== null}
          />
        ))
      )}
    </Card>
  );
}

function MemberRow({
  studyId,
  member,
  manage,
  isMe,
  archived,
}: {
  studyId: string;
  member: Member;
  manage: boolean;
  isMe: boolean;
  archived: boolean;
}) {
  const change = useChangeRole(studyId);
  const remove = useRemoveMember(studyId);
  const router = useRouter();
  const [editing, setEditing] = useState(false);
  const [confirming, setConfirming] = useState(false);
  const error = change.error ?? remove.error;
  const who = member.name ?? member.email ?? "this member";
  return (
    <View style={styles.member} testID="member-row">
      <View style={styles.memberHead}>
        <View style={{ flexShrink: 1 }}>
          <Txt style={{ fontWeight: "600" }}>{member.name ?? member.email ?? "Unnamed member"}</Txt>
          {member.name ? <Txt kind="caption">{member.email}</Txt> : null}
        </View>
        <Badge
          label={roleLabel(member.role) + (isMe ? " (you)" : "")}
          tone={member.role === "owner" ? "accent" : "neutral"}
        />
      </View>
      {error ? <Notice tone="danger">{error.message}</Notice> : null}
      {manage && editing ? (
        <Choice
          label={`Role of ${member.email ?? "member"}`}
          options={roleOptions}
          value={member.role}
          onChange={(role) =>
            change.mutate({ userId: member.userId, role }, { onSuccess: () => setEditing(false) })
          }
        />
      ) : null}
      {manage && !isMe && confirming ? (
        <View style={styles.confirm} testID="remove-confirm">
          <Txt kind="small">
            Remove {who} ({roleLabel(member.role)}) from this study? They lose access at once; what
            they did stays in the activity.
          </Txt>
          <View style={styles.confirmActions}>
            <Button
              variant="danger"
              label={`Remove ${who}`}
              onPress={() =>
                remove.mutate(member.userId, { onSuccess: () => setConfirming(false) })
              }
              busy={remove.isPending}
              testID="confirm-remove-member"
            />
            <Button
              variant="quiet"
              label="Keep"
              onPress={() => setConfirming(false)}
              testID="cancel-remove-member"
            />
          </View>
        </View>
      ) : null}
      <View style={styles.actions}>
        {manage ? (
          <Button
            variant="quiet"
            label={editing ? "Done" : "Change role"}
            onPress={() => setEditing(!editing)}
          />
        ) : null}
        {manage && !isMe && !confirming ? (
          <Button
            variant="quiet"
            label="Remove"
            onPress={() => setConfirming(true)}
            testID="remove-member"
          />
        ) : null}
        {isMe && !archived ? (
          <Button
            variant="quiet"
            label="Leave this study"
            onPress={() => mutateThen(remove, member.userId, () => router.replace("/studies"))}
            busy={remove.isPending}
          />
        ) : null}
      </View>
    </View>
  );
}

function Invite({ studyId }: { studyId: string }) {
  const [email, setEmail] = useState("");
  const [role, setRole] = useState<Role>("viewer");
  const invite = useInvite(studyId);
  const [sentTo, setSentTo] = useState<string | null>(null);
  const submit = () =>
    invite.mutate(
      { email: email.trim(), role },
      {
        onSuccess: () => {
          setSentTo(email.trim());
          setEmail("");
        },
      },
    );
  return (
    <Card testID="invite">
      <Heading level={2}>Invite by e-mail</Heading>
      <Field
        label="E-mail address"
        value={email}
        onChangeText={setEmail}
        autoCapitalize="none"
        inputMode="email"
        placeholder="colleague@lab.example"
        testID="invite-email"
        error={invite.error?.message ?? null}
      />
      <Choice
        label="Role"
        options={roleOptions}
        value={role}
        onChange={setRole}
        testID="invite-role"
      />
      <Txt kind="caption">
        {roleOptions.find((o) => o.value === role)?.hint}. The link works once, for this address,
        for 7 days.
      </Txt>
      {sentTo ? <Notice tone="success">Invitation sent to {sentTo}.</Notice> : null}
      <Button
        label="Send invitation"
        onPress={submit}
        busy={invite.isPending}
        disabled={email.trim() === ""}
        testID="send-invitation"
      />
    </Card>
  );
}

function PendingList({ studyId, canRevoke }: { studyId: string; canRevoke: boolean }) {
  const invitations = usePendingInvitations(studyId, true);
  const revoke = useRevokeInvitation(studyId);
  return (
    <Card>
      <Heading level={2}>Pending invitations</Heading>
      {invitations.isPending ? (
        <Pending />
      ) : invitations.isError ? (
        <Failure error={invitations.error} onRetry={() => invitations.refetch()} />
      ) : invitations.data.length === 0 ? (
        <Txt kind="small" style={{ color: palette.muted }}>
          None.
        </Txt>
      ) : (
        invitations.data.map((invitation) => (
          <View key={invitation.id} style={styles.memberHead} testID="pending-invitation">
            <View style={{ flexShrink: 1 }}>
              <Txt>{invitation.email}</Txt>
              <Txt kind="caption">
                {roleLabel(invitation.role)} · expires{" "}
                {new Date(invitation.expiresAt).toLocaleDateString()}
              </Txt>
            </View>
            {canRevoke ? (
              <Button
                variant="quiet"
                label="Revoke"
                onPress={() => revoke.mutate(invitation.id)}
                busy={revoke.isPending && revoke.variables === invitation.id}
              />
            ) : null}
          </View>
        ))
      )}
    </Card>
  );
}

function Settings({ study }: { study: StudyDetail }) {
  const [name, setName] = useState(study.name);
  const [description, setDescription] = useState(study.description);
  const update = useUpdateStudy(study.id);
  return (
    <Card>
      <Heading level={2}>Study settings</Heading>
      <Field label="Name" value={name} onChangeText={setName} />
      <Field
        label="Description"
        value={description}
        onChangeText={setDescription}
        multiline
        style={{ minHeight: 72, paddingTop: space.sm }}
      />
      <View style={styles.switchRow}>
        <View style={{ flexShrink: 1 }}>
          <Txt kind="label">Restrict participant-level rows</Txt>
          <Txt kind="caption">
            Viewers then see counts and results, never rows about individual participants.
          </Txt>
        </View>
        <Switch
          value={study.restricted}
          onValueChange={(restricted) => update.mutate({ restricted })}
          accessibilityLabel="Restrict participant-level rows"
        />
      </View>
      <View style={styles.switchRow}>
        <View style={{ flexShrink: 1 }}>
          <Txt kind="label">{secondPersonSignOffLabel}</Txt>
          <Txt kind="caption">{secondPersonSignOffExplanation}</Txt>
        </View>
        <Switch
          value={study.secondPersonSignOff}
          onValueChange={(secondPersonSignOff) => update.mutate({ secondPersonSignOff })}
          accessibilityLabel={secondPersonSignOffLabel}
          testID="second-person-sign-off"
        />
      </View>
      {update.error ? <Notice tone="danger">{update.error.message}</Notice> : null}
      <Button
        label="Save name and description"
        variant="secondary"
        onPress={() => update.mutate({ name: name.trim(), description: description.trim() })}
        busy={update.isPending}
      />
    </Card>
  );
}

/** "A second person signs off", read-only, for those who may not change the study's settings. */
function SignOffSetting({ study }: { study: StudyDetail }) {
  return (
    <Card testID="second-person-sign-off-state">
      <View style={styles.memberHead}>
        <Heading level={2}>{secondPersonSignOffLabel}</Heading>
        <Badge
          label={study.secondPersonSignOff ? "On" : "Off"}
          tone={study.secondPersonSignOff ? "accent" : "neutral"}
        />
      </View>
      <Txt kind="caption">{secondPersonSignOffExplanation} An Owner of the study changes it.</Txt>
    </Card>
  );
}

function ArchiveStudy({ study }: { study: StudyDetail }) {
  const archive = useArchiveStudy(study.id);
  const unarchive = useUnarchiveStudy(study.id);
  const error = archive.error ?? unarchive.error;
  return (
    <Card testID="archive-study">
      <Heading level={2}>{study.archivedAt ? "Archived" : "Archive this study"}</Heading>
      <Txt kind="small" style={{ color: palette.muted }}>
        {study.archivedAt
          ? `Archived on ${dateWords(study.archivedAt)}. Nobody can change its data, models, fits, set-asides, team or settings; everything stays readable. Unarchive it to work in it again.`
          : "Archiving makes the study read-only for every member: its data, models, fits, set-asides, team and settings can no longer change. Everything stays readable and exportable, and you can unarchive it at any time."}
      </Txt>
      {error ? <Notice tone="danger">{error.message}</Notice> : null}
      {study.archivedAt ? (
        <Button
          label="Unarchive study"
          variant="secondary"
          busy={unarchive.isPending}
          onPress={() => unarchive.mutate()}
          testID="unarchive-study"
        />
      ) : (
        <Button
          label="Archive study"
          variant="secondary"
          busy={archive.isPending}
          onPress={() => archive.mutate()}
          testID="archive-study-button"
        />
      )}
    </Card>
  );
}

function DeleteStudy({ study }: { study: StudyDetail }) {
  const [typed, setTyped] = useState("");
  const remove = useDeleteStudy(study.id);
  const router = useRouter();
  const sealed = study.counts.sealedFits;
  if (sealed > 0) {
    return (
      <Card testID="delete-study">
        <Heading level={2}>Delete this study</Heading>
        <Txt kind="small" style={{ color: palette.muted }}>
          This study has {sealed} sealed fit{sealed === 1 ? "" : "s"}, so it cannot be deleted:
          sealed results, their recipes and the activity stay reachable. Archive it instead to make
          it read-only.
        </Txt>
      </Card>
    );
  }
  return (
    <Card testID="delete-study">
      <Heading level={2}>Delete this study</Heading>
      <Txt kind="small" style={{ color: palette.muted }}>
        The study disappears for every member. You can undo this for {restoreWindowDays} days (until{" "}
        {dateWords(restorableUntil(new Date()))}) under Studies → Recently deleted; its records and
        activity are kept. Type the study's name to confirm.
      </Txt>
      <Field
        label="Study name"
        value={typed}
        onChangeText={setTyped}
        error={remove.error?.message ?? null}
      />
      <Button
        label="Delete study"
        variant="danger"
        disabled={typed !== study.name}
        busy={remove.isPending}
        onPress={() => mutateThen(remove, typed, () => router.replace("/studies"))}
      />
    </Card>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  member: {
    gap: space.xs,
    paddingVertical: space.sm,
    borderTopWidth: 1,
    borderTopColor: palette.line,
  },
  memberHead: {
    flexDirection: "row",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.sm,
  },
  actions: { flexDirection: "row", flexWrap: "wrap", gap: space.xs, marginLeft: -space.lg },
  confirm: {
    gap: space.sm,
    padding: space.md,
    borderRadius: radius.md,
    backgroundColor: palette.dangerSoft,
  },
  confirmActions: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
  switchRow: {
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.md,
  },
});
