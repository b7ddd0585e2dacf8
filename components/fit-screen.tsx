/**
 * A fit: its header (the model in plain words, N, what it set aside and
 * why, the fit it re-runs, whether newer data exist; fit/fit-header.tsx)
 * with progress while it runs and the long caution on one line, then the
 * region table across the whole width. On a wide screen the selected
 * region's detail follows below the table in two balanced columns; on a
 * phone, tapping a region opens its detail as its own view
 * (fit/region-screen.tsx) and the region last opened stays highlighted. The
 * forest plot shows the regions on the table's page, in the table's order.
 * A prediction fit shows its scores and plots (fit/prediction-view.tsx) in
 * place of the region table and region detail.
 */
import { useCallback, useRef, useState } from "react";
import { StyleSheet, useWindowDimensions, View } from "react-native";
import { useRouter } from "expo-router";
import { ForestPlot } from "./charts/forest-plot";
import { estimateLabel } from "./fit/estimate-label";
import { FigureDownloads } from "./fit/figure-downloads";
import { RegionTable } from "./fit/region-table";
import { RegionDetailPanel } from "./fit/region-detail";
import { ProgressBar } from "./fit/progress-bar";
import { VarianceShares } from "./fit/variance-shares";
import { varianceShareInputsOf } from "./fit/variance-shares-layout";
import { PublishPanel } from "./fit/publish-panel";
import { PredictionView } from "./fit/prediction-view";
import { SpecificationCurveView } from "./fit/specification-curve-view";
import type { CurveResultFields } from "../contract/specification-curve";
import type { PredictionBlock } from "../contract/prediction";
import { CircularityCaution, FitHeader } from "./fit/fit-header";
import { scrollIntoView } from "./fit/scroll-into-view";
import { regionPath } from "./fit/region-path";
import { Button, Card, Failure, Heading, Notice, Pending, Txt } from "./ui";
import { palette, radius, space, wideBreakpoint } from "./theme";
import { can, useStudy } from "../hooks/use-study";
import { useCancelFit, useFit, type FitView } from "../hooks/use-fits";
import { specOfRecipe } from "../contract/recipe";
import type { ModelSpec, RegionResult } from "../contract/spec";

export function FitScreen(props: { studyId: string; fitId: string; region?: string }) {
  const study = useStudy(props.studyId);
  const fit = useFit(props.fitId);
  if (fit.isPending || study.isPending) return <Pending label="Loading the fit…" />;
  if (fit.isError) return <Failure error={fit.error} onRetry={() => fit.refetch()} />;
  if (study.isError) return <Failure error={study.error} onRetry={() => study.refetch()} />;
  return (
    <FitBody
      fit={fit.data}
      initialRegion={props.region ?? null}
      canRun={can(study.data, "fits.run")}
      canSetAside={can(study.data, "participants.set-aside")}
    />
  );
}

/** The model fields of the fit's recipe, or null when withheld or unreadable. */
function specOf(fit: FitView): ModelSpec | null {
  if (!fit.recipe) return null;
  try {
    return specOfRecipe(fit.recipe);
  } catch {
    return null;
  }
}

function FitBody({
  fit,
  initialRegion,
  canRun,
  canSetAside,
}: {
  fit: FitView;
  initialRegion: string | null;
  canRun: boolean;
  canSetAside: boolean;
}) {
  const spec = specOf(fit);
  const regions = (fit.result?.regions ?? []) as RegionResult[];
  const wide = useWindowDimensions().width >= wideBreakpoint;
  const router = useRouter();
  const [selected, setSelected] = useState<string | null>(initialRegion);
  const [shownRegions, setShownRegions] = useState<readonly string[]>([]);
  const detailRef = useRef<View>(null);
  const regionsRef = useRef<View>(null);
  const cancel = useCancelFit(fit.id);
  const known = selected !== null && regions.some((r) => r.region === selected);
  const active = known ? selected : wide ? (regions[0]?.region ?? null) : null;
  const select = useCallback(
    (region: string) => {
      setSelected(region);
      if (wide) requestAnimationFrame(() => scrollIntoView(detailRef.current));
      else router.push(regionPath(fit.studyId, fit.id, region));
    },
    [wide, router, fit.studyId, fit.id],
  );
  const onRowsShown = useCallback((ids: readonly string[]) => setShownRegions(ids), []);
  const byRegion = new Map(regions.map((r) => [r.region, r]));
  const forestRows = (shownRegions.length > 0 ? shownRegions : regions.map((r) => r.region))
    .map((id) => byRegion.get(id))
    .filter((r): r is RegionResult => r !== undefined);
  const running = fit.status === "queued" || fit.status === "running";
  // A prediction fit has no region rows: its one `prediction` block takes their place.
  const prediction =
    fit.result?.kind === "prediction" ? (fit.result.prediction as PredictionBlock) : null;
  // A specification curve has no region rows either: its specifications and summary take their place.
  const curve =
    fit.result?.kind === "specification-curve"
      ? (fit.result as unknown as CurveResultFields)
      : null;
  return (
    <View style={styles.root}>
      <Card testID="fit-header">
        <FitHeader fit={fit} spec={spec} regions={regions} canRun={canRun} />
        {fit.model.caution ? <CircularityCaution text={fit.model.caution} /> : null}
        {running ? (
          <View style={styles.progress}>
            <Txt>{fit.status === "queued" ? "Waiting for a free worker…" : "Fitting…"}</Txt>
            <ProgressBar fraction={fit.progress.fraction} secondsLeft={fit.progress.secondsLeft} />
            {cancel.error ? <Notice tone="danger">{cancel.error.message}</Notice> : null}
            {canRun ? (
              <Button
                label="Cancel"
                variant="secondary"
                onPress={() => cancel.mutate()}
                busy={cancel.isPending}
                testID="cancel-fit"
                style={styles.cancel}
              />
            ) : null}
          </View>
        ) : null}
      </Card>

      {fit.status === "failed" ? (
        <Notice tone="danger" title="The fit failed">
          {fit.error?.message ?? "No reason was recorded."}
        </Notice>
      ) : null}
      {fit.status === "cancelled" ? (
        <Notice>This fit was cancelled before it finished.</Notice>
      ) : null}

      {fit.status === "done" && prediction ? (
        <PredictionView
          fitId={fit.id}
          block={prediction}
          trait={spec?.predictor ?? null}
          confounds={spec?.covariates ?? []}
          wide={wide}
          participantsVisible={fit.participantsVisible}
        />
      ) : null}
      {fit.status === "done" && curve ? (
        <SpecificationCurveView
          specifications={curve.specifications}
          summary={curve.summary}
          jointTest={curve.jointTest}
          rules={spec?.specifications?.exclusionRules ?? []}
          region={curve.region}
          planned={fit.plan?.curveChoice}
          open={
            canRun && spec ? { studyId: fit.studyId, curve: spec, curveModel: fit.model } : null
          }
        />
      ) : null}
      {fit.status === "done" && !prediction && !curve && regions.length > 0 ? (
        <>
          <View
            ref={regionsRef}
            style={wide ? styles.regionsWide : styles.regionsPhone}
            testID="fit-regions"
          >
            <View style={wide ? null : styles.inset}>
              <Heading level={3}>Regions</Heading>
              {!wide ? (
                <Txt kind="caption" style={styles.hint}>
                  Tap a region to open its plots and diagnostics.
                </Txt>
              ) : null}
            </View>
            <RegionTable
              regions={regions}
              estimateLabel={estimateLabel(spec)}
              selectedRegion={active}
              onSelect={select}
              wide={wide}
              onRowsShown={onRowsShown}
              edgeInset={wide ? undefined : space.lg}
              revealSelected={initialRegion !== null}
            />
          </View>
          {wide && active ? (
            <View ref={detailRef}>
              <RegionDetailPanel
                key={active}
                fit={fit}
                region={active}
                canRun={canRun}
                canSetAside={canSetAside && fit.participantsVisible}
                columns
                heading={
                  <Button
                    label="↑ Regions"
                    variant="quiet"
                    accessibilityLabel="Back up to the region table"
                    onPress={() => scrollIntoView(regionsRef.current)}
                    testID="region-up"
                  />
                }
              />
            </View>
          ) : null}
          <View style={wide ? styles.pairWide : styles.pairPhone}>
            <Card style={wide ? styles.half : null}>
              <Heading level={3}>Estimates with 95% intervals</Heading>
              <Txt kind="caption" style={styles.hint}>
                The regions on the table's page, in the table's order.
              </Txt>
              <ForestPlot
                rows={forestRows.map((r) => ({
                  region: r.region,
                  estimate: r.estimate,
                  low: r.ciLow,
                  high: r.ciHigh,
                }))}
                estimateLabel={estimateLabel(spec)}
                intervalLabel="95% CI"
                selectedRegion={active}
                onSelect={select}
                testID="forest-plot"
              />
              <FigureDownloads fitId={fit.id} name="forest" label="forest plot of every region" />
            </Card>
            {spec?.weights === "first-level-se" ? (
              <Card style={wide ? styles.half : null}>
                <Heading level={3}>Measurement noise and true differences</Heading>
                <VarianceShares
                  regions={varianceShareInputsOf(regions, spec.tau2Method)}
                  testID="variance-shares"
                />
                <FigureDownloads
                  fitId={fit.id}
                  name="variance-shares"
                  label="variance shares of every region"
                />
              </Card>
            ) : null}
          </View>
          {(fit.result?.notes as string[] | undefined)?.length ? (
            <Txt kind="caption" style={{ color: palette.muted }}>
              {(fit.result?.notes as string[]).join(" ")}
            </Txt>
          ) : null}
        </>
      ) : null}
      {fit.status === "done" ? (
        <Card>
          <PublishPanel fit={fit} />
        </Card>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  progress: { gap: space.sm },
  cancel: { alignSelf: "flex-start" },
  hint: { color: palette.muted },
  regionsWide: {
    gap: space.sm,
    padding: space.lg,
    borderRadius: radius.lg,
    borderWidth: 1,
    borderColor: palette.line,
    backgroundColor: palette.surface,
  },
  // On a phone the table runs from edge to edge of the screen so the six key columns fit without scrolling.
  regionsPhone: { gap: space.sm, marginHorizontal: -space.lg },
  inset: { paddingHorizontal: space.lg },
  pairWide: { flexDirection: "row", gap: space.lg, alignItems: "flex-start" },
  pairPhone: { gap: space.lg },
  half: { flex: 1, minWidth: 0 },
});
