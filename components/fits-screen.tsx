/**
 * Every fit of the study, newest first; each stays as it was run. A row
 * shows the model, the fit's stage as a badge (queued, running, done,
 * failed, cancelled, approved, sealed), who ran it and when, N, how many
 * participants it set aside, the earlier fit it re-runs with what changed,
 * and whether newer data or set-asides exist.
 */
import { Pressable, StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Badge, Card, Empty, Failure, Pending, Txt } from "./ui";
import { fonts, palette, space } from "./theme";
import { ProgressBar } from "./fit/progress-bar";
import {
  nWords,
  refitOfWords,
  setAsideCountWords,
  stageTone,
  whenWords,
} from "./fit/lineage-words";
import { useFits, type FitSummaryView } from "../hooks/use-fits";

export function FitsScreen(props: { studyId: string }) {
  const fits = useFits(props.studyId);
  if (fits.isPending) return <Pending />;
  if (fits.isError) return <Failure error={fits.error} onRetry={() => fits.refetch()} />;
  if (fits.data.length === 0) {
    return (
      <Empty title="No fits yet">
        <Txt style={{ color: palette.muted, textAlign: "center" }}>
          Run a model from the Models section. Every run is kept, with the data versions and seed it
          used.
        </Txt>
      </Empty>
    );
  }
  return (
    <View style={styles.root}>
      {fits.data.map((fit) => (
        <FitRow key={fit.id} studyId={props.studyId} fit={fit} />
      ))}
    </View>
  );
}

function FitRow({ studyId, fit }: { studyId: string; fit: FitSummaryView }) {
  const router = useRouter();
  const n = nWords(fit.n);
  const facts = [...(n ? [n] : []), setAsideCountWords(fit.setAsideCount)];
  return (
    <Pressable
      accessibilityRole="link"
      accessibilityLabel={`Fit of ${fit.model.name}, ${fit.stage}, run ${whenWords(fit.createdAt)}`}
      onPress={() => router.push(`/studies/${studyId}/fits/${fit.id}`)}
      style={({ pressed }) => [styles.row, pressed && styles.pressed]}
    >
      <Card testID="fit-row">
        <View style={styles.head}>
          <Txt style={{ fontFamily: fonts.semibold, flexShrink: 1 }}>{fit.model.name}</Txt>
          <View testID="fit-row-stage">
            <Badge label={fit.stage} tone={stageTone[fit.stage]} />
          </View>
        </View>
        <Txt kind="caption">
          Run by {fit.createdBy.name ?? "a member"} · {whenWords(fit.createdAt)}
        </Txt>
        <Txt kind="small" testID="fit-row-facts">
          {facts.join(" · ")}
        </Txt>
        {fit.refitOf ? (
          <Txt kind="small" style={{ color: palette.inkSoft }} testID="fit-row-lineage">
            {refitOfWords(fit.model.name, fit.refitOf, fit.refitOfCreatedAt)}
            {fit.changes.length > 0 ? `: ${fit.changes.join("; ")}` : ": nothing changed"}
          </Txt>
        ) : null}
        {fit.stale ? (
          <Txt kind="small" style={styles.stale} testID="fit-row-stale">
            Newer data or set-asides exist
          </Txt>
        ) : null}
        {fit.status === "running" || fit.status === "queued" ? (
          <ProgressBar fraction={fit.progress.fraction} secondsLeft={fit.progress.secondsLeft} />
        ) : null}
        {fit.error ? (
          <Txt kind="small" style={{ color: palette.danger }}>
            {fit.error.message}
          </Txt>
        ) : null}
      </Card>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.md },
  row: { minHeight: 44 },
  pressed: { opacity: 0.8 },
  head: {
    flexDirection: "row",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.sm,
  },
  stale: { color: palette.warning, fontFamily: fonts.semibold },
});
