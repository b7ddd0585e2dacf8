/**
 * A fit: its header (the model in plain words, N, what it set aside and
 * why, the fit it re-runs, whether newer data exist; fit/fit-header.tsx),
 * progress while it runs, then the region
 * table and forest plot beside the selected region's detail (side by side on
 * a wide screen, one column on a phone).
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { ForestPlot } from "./charts/forest-plot";
import { RegionTable } from "./fit/region-table";
import { RegionDetailPanel } from "./fit/region-detail";
import { ProgressBar } from "./fit/progress-bar";
import { VarianceShares } from "./fit/variance-shares";
import type { VarianceShareInput } from "./fit/variance-shares-layout";
import { PublishPanel } from "./fit/publish-panel";
import { FitHeader } from "./fit/fit-header";
import { Button, Card, Failure, Heading, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { can, useStudy } from "../hooks/use-study";
import { useCancelFit, useFit, type FitView } from "../hooks/use-fits";
import { modelSpecSchema, type ModelSpec, type RegionResult } from "../contract/spec";

export function FitScreen(props: { studyId: string; fitId: string }) {
  const study = useStudy(props.studyId);
  const fit = useFit(props.fitId);
  if (fit.isPending || study.isPending) return <Pending label="Loading the fit…" />;
  if (fit.isError) return <Failure error={fit.error} onRetry={() => fit.refetch()} />;
  if (study.isError) return <Failure error={study.error} onRetry={() => study.refetch()} />;
  return (
    <FitBody
      fit={fit.data}
      canRun={can(study.data, "fits.run")}
      canSetAside={can(study.data, "participants.set-aside")}
    />
  );
}

/** The model fields of the fit's recipe (the recipe holds them at its top level). */
function specOf(fit: FitView): ModelSpec | null {
  if (!fit.recipe) return null;
  const fields: Record<string, unknown> = {};
  for (const key of Object.keys(modelSpecSchema.shape))
    if (fit.recipe[key] !== undefined) fields[key] = fit.recipe[key];
  const parsed = modelSpecSchema.safeParse(fields);
  return parsed.success ? parsed.data : null;
}

function estimateLabel(spec: ModelSpec | null): string {
  if (!spec) return "Estimate";
  if (spec.kind === "one-sample") return "Mean";
  if (spec.kind === "two-group") return "Difference";
  if (spec.estimator === "rank" || spec.estimator === "skipped" || spec.estimator === "bend")
    return "Correlation";
  return "Slope";
}

function FitBody({
  fit,
  canRun,
  canSetAside,
}: {
  fit: FitView;
  canRun: boolean;
  canSetAside: boolean;
}) {
  const spec = specOf(fit);
  const regions = (fit.result?.regions ?? []) as RegionResult[];
  const [selected, setSelected] = useState<string | null>(null);
  const cancel = useCancelFit(fit.id);
  const active = selected ?? regions[0]?.region ?? null;
  return (
    <View style={styles.root}>
      <Card testID="fit-header">
        <FitHeader fit={fit} spec={spec} regions={regions} canRun={canRun} />
        {fit.model.caution ? (
          <Notice tone="caution" title="Circular region selection" testID="fit-circularity">
            {fit.model.caution}
          </Notice>
        ) : null}
        {fit.status === "done" ? <PublishPanel fit={fit} /> : null}
      </Card>

      {fit.status === "queued" || fit.status === "running" ? (
        <Card>
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
            />
          ) : null}
        </Card>
      ) : null}
      {fit.status === "failed" ? (
        <Notice tone="danger" title="The fit failed">
          {fit.error?.message ?? "No reason was recorded."}
        </Notice>
      ) : null}
      {fit.status === "cancelled" ? (
        <Notice>This fit was cancelled before it finished.</Notice>
      ) : null}

      {fit.status === "done" && regions.length > 0 ? (
        <View style={styles.split}>
          <View style={styles.left}>
            <Card>
              <Heading level={3}>Regions</Heading>
              <RegionTable
                regions={regions}
                estimateLabel={estimateLabel(spec)}
                selectedRegion={active}
                onSelect={setSelected}
              />
            </Card>
            <Card>
              <Heading level={3}>Estimates with 95% intervals</Heading>
              <ForestPlot
                rows={regions.map((r) => ({
                  region: r.region,
                  estimate: r.estimate,
                  low: r.ciLow,
                  high: r.ciHigh,
                }))}
                estimateLabel={estimateLabel(spec)}
                intervalLabel="95% CI"
                selectedRegion={active}
                onSelect={setSelected}
                testID="forest-plot"
              />
            </Card>
            {spec?.weights === "first-level-se" ? (
              <Card>
                <Heading level={3}>Measurement noise and true differences</Heading>
                <VarianceShares
                  regions={varianceRows(regions, spec.tau2Method)}
                  testID="variance-shares"
                />
              </Card>
            ) : null}
            {(fit.result?.notes as string[] | undefined)?.length ? (
              <Txt kind="caption" style={{ color: palette.muted }}>
                {(fit.result?.notes as string[]).join(" ")}
              </Txt>
            ) : null}
          </View>
          <View style={styles.right}>
            {active ? (
              <RegionDetailPanel
                key={active}
                fit={fit}
                region={active}
                canRun={canRun}
                canSetAside={canSetAside && fit.participantsVisible}
              />
            ) : null}
          </View>
        </View>
      ) : null}
    </View>
  );
}

/** The weighted fit's per-region variance components, for the shares plot (regions without them are left out). */
function varianceRows(
  regions: readonly RegionResult[],
  tau2Method: "dl" | "reml",
): VarianceShareInput[] {
  return regions
    .filter(
      (r) =>
        typeof r.tau2 === "number" &&
        typeof r.noiseShare === "number" &&
        typeof r.trueShare === "number",
    )
    .map((r) => ({
      region: r.region,
      tau2: r.tau2 as number,
      i2: (r.i2 as number | undefined) ?? 0,
      noiseShare: r.noiseShare as number,
      trueShare: r.trueShare as number,
      tau2Method,
    }));
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  split: { flexDirection: "row", flexWrap: "wrap", gap: space.lg, alignItems: "flex-start" },
  left: { flexGrow: 1, flexShrink: 1, flexBasis: 420, minWidth: 0, gap: space.lg },
  right: { flexGrow: 1, flexShrink: 1, flexBasis: 420, minWidth: 0 },
});
