import { Pressable, StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Badge, Card, Empty, Failure, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { ProgressBar } from "./fit/progress-bar";
import { useFits, type FitSummaryView } from "../hooks/use-fits";

const statusTone = { done: "success", failed: "danger", cancelled: "neutral", queued: "accent", running: "accent" } as const;

/** Every fit of the study, newest first; each stays as it was run. */
export function FitsScreen(props: { studyId: string }) {
  const fits = useFits(props.studyId);
  if (fits.isPending) return <Pending />;
  if (fits.isError) return <Failure error={fits.error} onRetry={() => fits.refetch()} />;
  if (fits.data.length === 0) {
    return (
      <Empty title="No fits yet">
        <Txt style={{ color: palette.muted, textAlign: "center" }}>Run a model from the Models section. Every run is kept, with the data versions and seed it used.</Txt>
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
  return (
    <Pressable accessibilityRole="link" accessibilityLabel={`Fit of ${fit.model.name}, ${fit.status}`} onPress={() => router.push(`/studies/${studyId}/fits/${fit.id}` as never)}>
      <Card testID="fit-row">
        <View style={styles.head}>
          <Txt style={{ fontWeight: "600", flexShrink: 1 }}>{fit.model.name}</Txt>
          <Badge label={fit.status} tone={statusTone[fit.status as keyof typeof statusTone] ?? "neutral"} />
        </View>
        <Txt kind="caption">
          Run by {fit.createdBy.name ?? "a member"} · {new Date(fit.createdAt).toLocaleString()}
        </Txt>
        {fit.status === "running" || fit.status === "queued" ? <ProgressBar fraction={fit.progress.fraction} secondsLeft={fit.progress.secondsLeft} /> : null}
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
  head: { flexDirection: "row", justifyContent: "space-between", alignItems: "center", gap: space.sm },
});
