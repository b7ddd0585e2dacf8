/**
 * The study's Set aside section (under Data): every current set-aside with
 * its participant, scope, reason, who and when, with Restore for the roles
 * that may restore; restored ones below as history (collapsed), with who
 * restored them, when and why. A reader who may not see participant-level
 * rows (a Viewer of a restricted study) sees the same list without ids.
 */
import { type ReactNode, useState } from "react";
import { Pressable, StyleSheet, View } from "react-native";
import { useSetAsides, type SetAsideView } from "../../hooks/use-set-asides";
import { restoredLine, scopeLabel, setAsideLine } from "../../contract/set-aside-words";
import { fonts, palette, radius, space } from "../theme";
import { Badge, Card, Failure, Heading, Notice, Pending, Txt } from "../ui";
import { RestoreForm } from "./restore-form";

export function SetAsideSection(props: { studyId: string; canRestore: boolean }) {
  const list = useSetAsides(props.studyId);
  const [historyOpen, setHistoryOpen] = useState(false);
  if (list.isPending) return <Pending label="Loading the set-asides…" />;
  if (list.isError)
    return (
      <Failure
        error={list.error}
        title="The set-asides could not be loaded"
        onRetry={() => list.refetch()}
      />
    );
  const current = list.data.filter((s) => s.active);
  const history = list.data.filter((s) => !s.active);
  const withheld = list.data.some((s) => s.participant === null);
  return (
    <Card testID="set-aside-section">
      <View style={styles.head}>
        <Heading level={2} style={styles.shrink}>
          Set aside
        </Heading>
        <Badge
          label={`${current.length} current`}
          tone={current.length > 0 ? "accent" : "neutral"}
        />
      </View>
      <Txt kind="small" style={styles.muted}>
        Participants left out of new fits, each with a written reason; nothing is deleted. Fits
        already made keep the list they were made with. Set a participant aside from a fit's region
        detail.
      </Txt>
      {withheld ? (
        <Notice testID="set-aside-ids-withheld">
          This study restricts participant-level rows: your role sees the count, scopes and reasons,
          not who.
        </Notice>
      ) : null}
      {current.length === 0 ? (
        <Txt kind="small" testID="set-aside-none">
          Nobody is set aside: new fits use every matched participant.
        </Txt>
      ) : (
        <View style={styles.list} accessibilityRole="list">
          {current.map((s) => (
            <SetAsideRow key={s.id} setAside={s}>
              {props.canRestore ? <RestoreForm studyId={props.studyId} setAside={s} /> : null}
            </SetAsideRow>
          ))}
        </View>
      )}
      {history.length > 0 ? (
        <View style={styles.list}>
          <Pressable
            accessibilityRole="button"
            accessibilityState={{ expanded: historyOpen }}
            onPress={() => setHistoryOpen(!historyOpen)}
            style={styles.disclosure}
            testID="set-aside-history-toggle"
          >
            <Txt kind="label">
              {historyOpen ? "▾" : "▸"} History: {history.length} restored
            </Txt>
          </Pressable>
          {historyOpen ? (
            <View style={styles.list} accessibilityRole="list" testID="set-aside-history">
              {history.map((s) => (
                <SetAsideRow key={s.id} setAside={s} />
              ))}
            </View>
          ) : null}
        </View>
      ) : null}
    </Card>
  );
}

function SetAsideRow(props: { setAside: SetAsideView; children?: ReactNode }) {
  const s = props.setAside;
  const restored = restoredLine(s);
  return (
    <View
      style={[styles.row, !s.active && styles.rowRestored]}
      testID={s.active ? "set-aside-row" : "set-aside-history-row"}
    >
      <View style={styles.rowHead}>
        <Txt kind="lead" style={styles.participant}>
          {s.participant ?? "Participant (id withheld)"}
        </Txt>
        <Badge label={scopeLabel(s.region)} tone={s.region === null ? "danger" : "neutral"} />
        {s.active ? null : <Badge label="Restored" tone="success" />}
      </View>
      <Txt kind="small">{setAsideLine(s)}</Txt>
      {restored ? <Txt kind="small">{restored}</Txt> : null}
      {props.children}
    </View>
  );
}

const styles = StyleSheet.create({
  head: {
    flexDirection: "row",
    flexWrap: "wrap",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.sm,
  },
  shrink: { flexShrink: 1 },
  muted: { color: palette.muted },
  list: { gap: space.sm },
  row: {
    gap: space.xs,
    padding: space.md,
    borderWidth: 1,
    borderColor: palette.line,
    borderRadius: radius.md,
    backgroundColor: palette.surface,
  },
  rowRestored: { backgroundColor: palette.canvas },
  rowHead: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  participant: { fontFamily: fonts.semibold },
  disclosure: {
    minHeight: 44,
    justifyContent: "center",
    paddingHorizontal: space.xs,
    borderRadius: radius.sm,
  },
});
