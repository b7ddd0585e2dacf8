/**
 * What the variance-shares view draws for a fit weighted by first-level
 * standard errors: per region, the share of residual variance that is
 * measurement noise, mean(se²)/(mean(se²) + τ²), and the share that is true
 * differences between participants, τ²/(mean(se²) + τ²), with τ² estimated
 * by the fit's method. Kept free of React Native so it can be tested alone.
 *
 * Bad input (a share outside 0–1, shares that do not add to 1, a missing
 * number) throws a `ChartInputError` naming the field and region position.
 */
import type { RegionResult } from "../../contract/spec";
import { ChartInputError, requireFinite } from "../charts/chart-input-error";
import type { LegendEntry } from "../charts/legend-entries";
import { formatPercent, formatValue } from "../charts/number-format";
import { chart, markRoles } from "../theme";

export type Tau2Method = "dl" | "reml";

export interface VarianceShareInput {
  region: string;
  /** Residual between-participant variance τ². */
  tau2: number;
  /** Residual I² (0–1). */
  i2: number;
  noiseShare: number;
  trueShare: number;
  tau2Method: Tau2Method;
}

export interface VarianceShareRow {
  region: string;
  noiseShare: number;
  trueShare: number;
  /** "62% noise · 38% true differences" */
  words: string;
  /** "τ² = 0.031 · I² = 41%" */
  detail: string;
}

/** How far from 1 the two shares may add up (rounding in stored results). */
const SUM_TOLERANCE = 1e-6;

/** The published name of a τ² method as the view writes it. */
export function tau2MethodName(method: Tau2Method): string {
  return method === "reml" ? "restricted maximum likelihood (REML)" : "DerSimonian–Laird";
}

/** Checks the regions and turns them into bar rows. Throws ChartInputError on bad input. */
export function varianceShareRows(regions: readonly VarianceShareInput[]): VarianceShareRow[] {
  if (regions.length === 0) throw new ChartInputError("regions", "no region to draw");
  return regions.map((r, i) => {
    const noise = requireFinite(r.noiseShare, "noiseShare", i);
    const truth = requireFinite(r.trueShare, "trueShare", i);
    const tau2 = requireFinite(r.tau2, "tau2", i);
    const i2 = requireFinite(r.i2, "i2", i);
    for (const [field, value] of [
      ["noiseShare", noise],
      ["trueShare", truth],
      ["i2", i2],
    ] as const) {
      if (value < 0 || value > 1)
        throw new ChartInputError(field, `must lie between 0 and 1 (got ${value})`, i);
    }
    if (tau2 < 0) throw new ChartInputError("tau2", `must not be negative (got ${tau2})`, i);
    if (Math.abs(noise + truth - 1) > SUM_TOLERANCE) {
      throw new ChartInputError(
        "trueShare",
        `noiseShare and trueShare must add to 1 (got ${noise} + ${truth})`,
        i,
      );
    }
    if (r.tau2Method !== "dl" && r.tau2Method !== "reml")
      throw new ChartInputError(
        "tau2Method",
        `must be "dl" or "reml" (got "${String(r.tau2Method)}")`,
        i,
      );
    return {
      region: r.region,
      noiseShare: noise,
      trueShare: truth,
      words: `${formatPercent(noise)} noise · ${formatPercent(truth)} true differences`,
      detail: `τ² = ${formatValue(tau2)} · I² = ${formatPercent(i2)}`,
    };
  });
}

/** The method line under the bars, naming the τ² method(s) of the regions shown. */
export function varianceSharesMethod(
  regions: readonly Pick<VarianceShareInput, "tau2Method">[],
): string {
  const methods = [...new Set(regions.map((r) => r.tau2Method))].map(tau2MethodName).join(" and ");
  return `Shares of each region's residual variance: measurement noise = mean(se²) / (mean(se²) + τ²), true differences between participants = τ² / (mean(se²) + τ²); se the first-level standard errors, τ² estimated by ${methods}. I² after Higgins & Thompson (2002).`;
}

/** The two segments' colours. */
export const varianceColours = { noise: chart.bar, truth: markRoles.participant } as const;

/** The legend under the bars. */
export const varianceSharesLegend: readonly LegendEntry[] = [
  { kind: "band", label: "measurement noise", colour: varianceColours.noise },
  { kind: "band", label: "true differences between participants", colour: varianceColours.truth },
];

/** The accessible name of the whole list of bars. */
export const varianceSharesLabel =
  "Variance shares per region: measurement noise and true differences between participants";

/** The weighted fit's per-region variance components (regions without them are left out). */
export function varianceShareInputsOf(
  regions: readonly RegionResult[],
  tau2Method: Tau2Method,
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
