/**
 * The join report: which versions were joined, the rule applied in plain
 * words, and the counts and lists of matched participants, those only in the
 * brain table or only in the sheet, duplicates, and near misses. A near miss
 * is never merged silently: an Owner or Analyst may confirm it as a mapping,
 * in two steps, and the mapping is then listed as recorded. Roles that may
 * not read participant-level rows see the counts only.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import {
  type NearMiss,
  type MappingView,
  type RosterReport,
  useConfirmMappings,
} from "../../hooks/use-roster";
import { formatCount } from "../charts/number-format";
import { fonts, palette, radius, space, type } from "../theme";
import { Button, Card, Heading, Notice, Txt } from "../ui";
import { formatWhen } from "./dataset-format";
import { ProblemList } from "./problem-list";

export function JoinReport(props: { studyId: string; report: RosterReport; canMap: boolean }) {
  const { report } = props;
  const c = report.counts;
  const tiles = [
    { key: "matched", label: "matched", value: c.matched },
    { key: "only-brain", label: "only in brain table", value: c.onlyInBrainTable },
    { key: "only-sheet", label: "only in sheet", value: c.onlyInParticipantSheet },
    { key: "duplicates", label: "duplicates", value: c.duplicates },
    { key: "near-misses", label: "near misses", value: c.nearMisses },
    { key: "mappings", label: "confirmed mappings", value: c.mappings },
  ];
  return (
    <Card testID="join-report">
      <Heading level={2}>Join report</Heading>
      {report.brainTable === null || report.participantSheet === null ? (
        <Notice>
          Upload and confirm both a brain table and a participant sheet to join them into the
          roster.
        </Notice>
      ) : (
        <Txt kind="small">
          Joins the brain table <Txt kind="mono">{report.brainTable.fileName}</Txt> (version{" "}
          {report.brainTable.version}) with the participant sheet{" "}
          <Txt kind="mono">{report.participantSheet.fileName}</Txt> (version{" "}
          {report.participantSheet.version}).
        </Txt>
      )}
      <View style={styles.tiles} accessibilityRole="list">
        {tiles.map((t) => (
          <View
            key={t.key}
            style={[
              styles.tile,
              t.key === "near-misses" && t.value > 0 ? styles.tileAttention : null,
            ]}
            testID={`count-${t.key}`}
          >
            <Txt style={styles.tileValue}>{formatCount(t.value)}</Txt>
            <Txt kind="caption">{t.label}</Txt>
          </View>
        ))}
      </View>
      <View style={styles.rule}>
        <Txt kind="label">The rule applied</Txt>
        <Txt kind="small" testID="join-rule">
          {report.rule}
        </Txt>
      </View>
      {report.rowsVisible ? (
        <>
          <NearMisses
            studyId={props.studyId}
            nearMisses={report.nearMisses ?? []}
            canMap={props.canMap}
          />
          <Mappings mappings={report.mappings ?? []} />
          <IdList
            title="Only in the brain table"
            hint="These participants have contrast values but no row in the participant sheet."
            ids={report.onlyInBrainTable ?? []}
            testID="only-in-brain-table"
          />
          <IdList
            title="Only in the participant sheet"
            hint="These participants have a sheet row but no contrast values."
            ids={report.onlyInParticipantSheet ?? []}
            testID="only-in-sheet"
          />
          {(report.duplicates ?? []).length > 0 ? (
            <View style={styles.section} testID="duplicates">
              <Heading level={3}>Duplicates</Heading>
              <Txt kind="caption">
                Ids that the rule makes one participant within the same file; they are not joined
                until one file is corrected.
              </Txt>
              {(report.duplicates ?? []).map((d) => (
                <Txt key={`${d.source}-${d.key}`} kind="small">
                  {d.file}: {d.ids.join(", ")} (all read as “{d.key}”)
                </Txt>
              ))}
            </View>
          ) : null}
        </>
      ) : (
        <Notice testID="counts-only">
          This study restricts participant-level rows: your role sees these counts, not the
          participant ids.
        </Notice>
      )}
    </Card>
  );
}

function NearMisses(props: { studyId: string; nearMisses: readonly NearMiss[]; canMap: boolean }) {
  const [asking, setAsking] = useState<string | null>(null);
  const confirm = useConfirmMappings(props.studyId);
  if (props.nearMisses.length === 0) return null;
  return (
    <View style={styles.section} testID="near-misses">
      <Heading level={3}>Near misses (not merged)</Heading>
      <Txt kind="caption">
        These ids look alike but the rule does not join them. They stay apart — one in each “only
        in” list — until someone confirms that they are the same participant.
      </Txt>
      {props.nearMisses.map((n) => {
        const key = `${n.brainId}\u0000${n.sheetId}`;
        return (
          <View key={key} style={styles.nearMiss} testID="near-miss">
            <Txt kind="small">
              Brain table <Txt kind="mono">{n.brainId}</Txt> and sheet{" "}
              <Txt kind="mono">{n.sheetId}</Txt>: {n.reason}.
            </Txt>
            {props.canMap && asking !== key ? (
              <Button
                label="Confirm as the same participant…"
                variant="secondary"
                onPress={() => setAsking(key)}
                style={styles.start}
                testID="start-mapping"
              />
            ) : null}
            {props.canMap && asking === key ? (
              <View style={styles.ask}>
                <Txt kind="small">
                  Record that brain-table id {n.brainId} and sheet id {n.sheetId} are the same
                  participant? The mapping is logged under your name and applies to later versions
                  that hold both ids.
                </Txt>
                {confirm.error ? (
                  <ProblemList error={confirm.error} title="The mapping was not recorded" />
                ) : null}
                <View style={styles.actions}>
                  <Button
                    label="Record the mapping"
                    onPress={() =>
                      confirm.mutate([{ brainId: n.brainId, sheetId: n.sheetId }], {
                        onSuccess: () => setAsking(null),
                      })
                    }
                    busy={confirm.isPending}
                    testID="confirm-mapping"
                  />
                  <Button
                    label="Not now"
                    variant="secondary"
                    onPress={() => {
                      setAsking(null);
                      confirm.reset();
                    }}
                  />
                </View>
              </View>
            ) : null}
          </View>
        );
      })}
    </View>
  );
}

function Mappings(props: { mappings: readonly MappingView[] }) {
  if (props.mappings.length === 0) return null;
  return (
    <View style={styles.section} testID="mappings">
      <Heading level={3}>Confirmed mappings</Heading>
      {props.mappings.map((m) => (
        <Txt key={`${m.brainId}\u0000${m.sheetId}`} kind="small" testID="mapping">
          Brain table <Txt kind="mono">{m.brainId}</Txt> = sheet <Txt kind="mono">{m.sheetId}</Txt>{" "}
          · recorded {formatWhen(m.createdAt)}
          {m.applied ? "" : " · not applied: the current versions do not hold both ids"}
        </Txt>
      ))}
    </View>
  );
}

/** Ids shown at most this many at first; the rest behind "Show all". */
const IDS_SHOWN = 40;

function IdList(props: { title: string; hint: string; ids: readonly string[]; testID: string }) {
  const [all, setAll] = useState(false);
  if (props.ids.length === 0) return null;
  const shown = all ? props.ids : props.ids.slice(0, IDS_SHOWN);
  return (
    <View style={styles.section} testID={props.testID}>
      <Heading level={3}>
        {props.title} ({formatCount(props.ids.length)})
      </Heading>
      <Txt kind="caption">{props.hint}</Txt>
      <Txt kind="mono" selectable>
        {shown.join(", ")}
        {shown.length < props.ids.length ? ", …" : ""}
      </Txt>
      {props.ids.length > IDS_SHOWN ? (
        <Button
          label={all ? "Show fewer" : `Show all ${formatCount(props.ids.length)}`}
          variant="quiet"
          onPress={() => setAll(!all)}
          style={styles.start}
        />
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  tiles: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
  tile: {
    flexGrow: 1,
    flexBasis: 96,
    borderWidth: 1,
    borderColor: palette.line,
    borderRadius: radius.md,
    paddingVertical: space.sm,
    paddingHorizontal: space.md,
    backgroundColor: palette.canvas,
  },
  tileAttention: { backgroundColor: palette.warningSoft, borderColor: palette.accent },
  tileValue: { fontFamily: fonts.bold, fontSize: type.title, fontVariant: ["tabular-nums"] },
  rule: { gap: 2, marginTop: space.xs },
  section: {
    gap: space.xs,
    marginTop: space.sm,
    paddingTop: space.sm,
    borderTopWidth: 1,
    borderTopColor: palette.line,
  },
  nearMiss: { gap: space.xs },
  start: { alignSelf: "flex-start" },
  ask: {
    gap: space.sm,
    padding: space.md,
    borderRadius: radius.md,
    backgroundColor: palette.warningSoft,
  },
  actions: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
});
