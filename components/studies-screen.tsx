import { Pressable, StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Badge, Button, Card, Empty, Failure, Heading, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import {
  useDeletedStudies,
  useRestoreStudy,
  useStudies,
  type DeletedStudy,
  type StudySummary,
} from "../hooks/use-studies";
import { dateWords } from "../contract/dates";
import { mutateThen } from "../hooks/mutate-then";

export function StudiesScreen() {
  const studies = useStudies();
  const router = useRouter();
  return (
    <View style={styles.root}>
      <View style={styles.titleRow}>
        <Heading>Studies</Heading>
        <Button
          label="New study"
          variant="secondary"
          onPress={() => router.push("/studies/new")}
          testID="new-study"
        />
      </View>
      {studies.isPending ? (
        <Pending label="Loading your studies…" />
      ) : studies.isError ? (
        <Failure error={studies.error} onRetry={() => studies.refetch()} />
      ) : studies.data.length === 0 ? (
        <Empty title="No studies yet">
          <Txt style={{ color: palette.muted, textAlign: "center" }}>
            A study is your team's workspace for one cohort. Create one, or ask a study's Owner to
            invite you.
          </Txt>
        </Empty>
      ) : (
        <View style={styles.list} accessibilityRole="list">
          {studies.data.map((study) => (
            <StudyCard key={study.id} study={study} />
          ))}
        </View>
      )}
      <RecentlyDeleted />
    </View>
  );
}

/** Deleted studies the person owns that can still be restored; nothing shows when there are none. */
function RecentlyDeleted() {
  const deleted = useDeletedStudies();
  if (deleted.isPending || deleted.isError || deleted.data.length === 0) return null;
  return (
    <View style={styles.list} testID="recently-deleted">
      <Heading level={2}>Recently deleted</Heading>
      <Txt kind="small" style={{ color: palette.muted }}>
        Studies you own that were deleted. Restore brings each back for every member with everything
        it held, activity included.
      </Txt>
      {deleted.data.map((study) => (
        <DeletedCard key={study.id} study={study} />
      ))}
    </View>
  );
}

function DeletedCard({ study }: { study: DeletedStudy }) {
  const restore = useRestoreStudy();
  const router = useRouter();
  return (
    <Card testID="deleted-study-card">
      <View style={styles.cardHead}>
        <Txt kind="lead" style={styles.name}>
          {study.name}
        </Txt>
        <Badge label="Deleted" tone="danger" />
      </View>
      <Txt kind="small" style={{ color: palette.inkSoft }}>
        Deleted {dateWords(study.deletedAt)}
        {study.deletedBy?.name ? ` by ${study.deletedBy.name}` : ""} · can be restored until{" "}
        {dateWords(study.restorableUntil)}
      </Txt>
      {restore.error ? <Notice tone="danger">{restore.error.message}</Notice> : null}
      <Button
        label="Restore"
        variant="secondary"
        accessibilityLabel={`Restore ${study.name}`}
        busy={restore.isPending}
        onPress={() => mutateThen(restore, study.id, () => router.push(`/studies/${study.id}`))}
        style={{ alignSelf: "flex-start" }}
        testID="restore-study"
      />
    </Card>
  );
}

function StudyCard({ study }: { study: StudySummary }) {
  const router = useRouter();
  return (
    <Pressable
      accessibilityRole="link"
      accessibilityLabel={`${study.name}, your role: ${study.role}${study.archivedAt ? ", archived" : ""}`}
      onPress={() => router.push(`/studies/${study.id}`)}
    >
      <Card testID="study-card">
        <View style={styles.cardHead}>
          <Txt kind="lead" style={styles.name}>
            {study.name}
          </Txt>
          <View style={styles.badges}>
            {study.archivedAt ? <Badge label="Archived" /> : null}
            <Badge
              label={roleLabel(study.role)}
              tone={study.role === "owner" ? "accent" : "neutral"}
            />
          </View>
        </View>
        {study.description ? (
          <Txt kind="small" style={{ color: palette.muted }} numberOfLines={2}>
            {study.description}
          </Txt>
        ) : null}
        <Txt kind="small" style={{ color: palette.inkSoft }}>
          {count(study.counts.participants, "participant")} ·{" "}
          {count(study.counts.members, "member")} · {count(study.counts.models, "model")} ·{" "}
          {count(study.counts.fits, "fit")}
        </Txt>
      </Card>
    </Pressable>
  );
}

export function roleLabel(role: string): string {
  return role.charAt(0).toUpperCase() + role.slice(1);
}

function count(n: number, noun: string): string {
  return `${n} ${noun}${n === 1 ? "" : "s"}`;
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  list: { gap: space.md },
  titleRow: {
    flexDirection: "row",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.md,
  },
  cardHead: {
    flexDirection: "row",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.sm,
  },
  name: { flexShrink: 1, fontWeight: "600" },
  badges: { flexDirection: "row", gap: space.xs },
});
