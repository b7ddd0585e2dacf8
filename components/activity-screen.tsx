import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { Choice } from "./choice";
import { Card, Empty, Failure, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { useActivity, type ActivityEvent } from "../hooks/use-activity";
import { useMembers } from "../hooks/use-team";
import { setAsideEventFacts, setAsideEventWords } from "../contract/set-aside-words";
import { signOffSettingWords } from "../contract/sign-off";
import {
  fitApprovedWords,
  fitCancelledWords,
  fitRunWords,
  fitSealedWords,
  noticesFailedWords,
  noticesSentWords,
  planCountersignedWords,
  planRegisteredWords,
  memberRemovedWords,
  type PersonFacts,
  roleChangedWords,
} from "../contract/activity-words";
import { useFits } from "../hooks/use-fits";
import { dateWords } from "../contract/dates";
import { type NoticeKind, noticeKinds } from "../contract/notices";

const kindOptions = [
  { value: "", label: "Everything" },
  { value: "study", label: "Study" },
  { value: "member", label: "Members" },
  { value: "invitation", label: "Invitations" },
  { value: "dataset", label: "Data" },
  { value: "roster", label: "Roster" },
  { value: "model", label: "Models" },
  { value: "fit", label: "Fits" },
  { value: "participant", label: "Set aside" },
  { value: "notice", label: "E-mail notices" },
] as const;

/** The audit trail, newest first, filterable by person and kind. */
export function ActivityScreen(props: { studyId: string }) {
  const [person, setPerson] = useState("");
  const [kind, setKind] = useState("");
  const members = useMembers(props.studyId);
  const activity = useActivity(props.studyId, {
    person: person || undefined,
    kind: kind || undefined,
  });
  const fits = useFits(props.studyId);
  const names = new Map(
    (members.data ?? []).filter((m) => m.name).map((m) => [m.userId, m.name as string]),
  );
  const fitModels = new Map((fits.data ?? []).map((f) => [f.id, f.model.name]));
  const personOptions = [
    { value: "", label: "Everyone" },
    ...(members.data ?? []).map((m) => ({ value: m.userId, label: m.name ?? m.email ?? m.userId })),
  ];
  return (
    <View style={styles.root}>
      <Card>
        <Choice label="Who" options={personOptions} value={person} onChange={setPerson} />
        <Choice label="What" options={kindOptions} value={kind} onChange={setKind} />
      </Card>
      {activity.isPending ? (
        <Pending />
      ) : activity.isError ? (
        <Failure error={activity.error} onRetry={() => activity.refetch()} />
      ) : activity.data.length === 0 ? (
        <Empty title="Nothing recorded for this filter" />
      ) : (
        <View style={styles.list} accessibilityRole="list">
          {activity.data.map((event) => (
            <EventRow key={event.id} event={event} names={names} fitModels={fitModels} />
          ))}
        </View>
      )}
    </View>
  );
}

function EventRow({
  event,
  names,
  fitModels,
}: {
  event: ActivityEvent;
  names: ReadonlyMap<string, string>;
  fitModels: ReadonlyMap<string, string>;
}) {
  const who = event.actor?.name ?? event.actor?.email ?? "Covarion";
  // A set-aside's sentence quotes its reason itself.
  const reason = setAsideEventFacts(event) ? null : reasonOf(event);
  return (
    <View style={styles.row} testID="activity-event">
      <Txt kind="small">
        <Txt kind="small" style={{ fontWeight: "600" }}>
          {who}
        </Txt>{" "}
        {describeEvent(event, names, fitModels)}
      </Txt>
      {reason ? (
        <Txt kind="caption" style={{ color: palette.inkSoft }}>
          Reason: {reason}
        </Txt>
      ) : null}
      <Txt kind="caption">
        {new Date(event.at).toLocaleString()} · {event.kind}
      </Txt>
    </View>
  );
}

function field(value: unknown, key: string): string | null {
  if (value && typeof value === "object" && key in value) {
    const v = (value as Record<string, unknown>)[key];
    return v === null || v === undefined ? null : String(v);
  }
  return null;
}

function reasonOf(event: ActivityEvent): string | null {
  return field(event.after, "reason") ?? field(event.before, "reason");
}

/** The person an event about a member names: as recorded, with the name of a current member where the event predates names. */
function personOf(
  event: ActivityEvent,
  recorded: unknown,
  names: ReadonlyMap<string, string>,
): PersonFacts {
  return {
    name: field(recorded, "name") ?? names.get(event.targetId ?? "") ?? null,
    email: field(recorded, "email"),
    role: field(recorded, "role"),
  };
}

/**
 * One plain sentence per event kind; unknown kinds fall back to their name.
 * `names` maps a member's id to their name; `fitModels` a fit's id to its model's name.
 */
export function describeEvent(
  event: ActivityEvent,
  names: ReadonlyMap<string, string> = new Map(),
  fitModels: ReadonlyMap<string, string> = new Map(),
): string {
  const after = event.after;
  const before = event.before;
  switch (event.kind) {
    case "study.created":
      return `created the study “${field(after, "name") ?? ""}”`;
    case "study.updated":
      return "changed the study's settings";
    case "study.deleted": {
      const until = field(after, "restorableUntil");
      return until
        ? `deleted the study (an Owner could restore it until ${dateWords(until)})`
        : "deleted the study";
    }
    case "study.restored":
      return "restored the deleted study";
    case "study.archived":
      return "archived the study (read-only for everyone)";
    case "study.unarchived":
      return "unarchived the study";
    case "study.sign_off_changed":
      return signOffSettingWords(field(after, "secondPersonSignOff") === "true");
    case "invitation.sent":
      return `invited ${field(after, "email") ?? "someone"} as ${field(after, "role") ?? "a member"}`;
    case "invitation.accepted":
      return `accepted an invitation as ${field(after, "role") ?? "a member"}`;
    case "invitation.revoked":
      return `revoked the invitation of ${field(before, "email") ?? field(after, "email") ?? "someone"}`;
    case "member.role_changed":
      return roleChangedWords(personOf(event, before, names), field(after, "role"));
    case "member.removed":
      return memberRemovedWords(personOf(event, before, names));
    case "member.left":
      return "left the study";
    case "participant.set_aside":
    case "participant.restored": {
      const facts = setAsideEventFacts(event);
      return facts ? setAsideEventWords(facts) : event.kind;
    }
    case "dataset.confirmed":
      return `stored ${field(after, "kind") === "brain" ? "brain table" : "participant sheet"} version ${field(after, "version") ?? "?"} (${field(after, "fileName") ?? "file"})`;
    case "dataset.identifier_confirmed":
      return "kept a column that looks like a direct identifier";
    case "roster.mapping_confirmed":
      return `confirmed that ${field(after, "brainId") ?? "?"} in the brain table is ${field(after, "sheetId") ?? "?"} in the participant sheet`;
    case "model.created":
      return `saved the model “${field(after, "name") ?? ""}”`;
    case "model.updated":
      return `changed the model “${field(after, "name") ?? field(before, "name") ?? ""}”`;
    case "model.deleted":
      return `deleted the model “${field(before, "name") ?? ""}”`;
    case "fit.run":
      return fitRunWords(field(after, "modelName"), field(after, "seed"), field(after, "setAside"));
    case "fit.cancelled":
      return fitCancelledWords(fitModels.get(event.targetId ?? "") ?? null);
    case "fit.requeued":
      return "re-queued a fit after a restart";
    case "fit.approved":
      return fitApprovedWords(fitModels.get(event.targetId ?? "") ?? null);
    case "fit.sealed":
      return fitSealedWords(
        fitModels.get(event.targetId ?? "") ?? null,
        field(after, "sha256") ?? "",
        field(after, "singlePersonSignOff") === "true",
      );
    case "notice.sent":
    case "notice.failed": {
      const notice = field(after, "notice") as NoticeKind | null;
      if (!notice || !noticeKinds.includes(notice)) return event.kind.replace(/[._]/g, " ");
      const count = Number(field(after, "count") ?? 0);
      const model = fitModels.get(event.targetId ?? "") ?? null;
      return event.kind === "notice.sent"
        ? noticesSentWords(notice, count, model)
        : noticesFailedWords(notice, count, model, field(after, "error"));
    }
    case "plan.registered":
      return planRegisteredWords(
        field(after, "title") ?? "",
        field(after, "sha256") ?? "",
        field(after, "replaces") !== null,
      );
    case "plan.countersigned":
      return planCountersignedWords(field(after, "sha256") ?? "");
    default:
      return event.kind.replace(/[._]/g, " ");
  }
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  list: { gap: space.xs },
  row: {
    backgroundColor: palette.surface,
    borderWidth: 1,
    borderColor: palette.line,
    borderRadius: 8,
    padding: space.md,
    gap: 2,
  },
});
