/**
 * The estimate a bootstrap (bootstrap.ts) recomputes on each resample of one
 * region's participants, and the bootstrap p-value from the resampled
 * estimates.
 */
import { pearsonR } from "./correlation";
import { sortedCopy } from "./descriptive";
import { StatsError } from "./errors";
import { differenceMedian, walshMedian } from "./hodges-lehmann";
import { qrDecompose, solveLinearModel } from "./linear-model";
import { averageRanks } from "./ranks";
import type { RegionData } from "./region-data";
import { percentageBendCorrelation, skippedCorrelation } from "./robust-correlation";
import { robustLinearModel } from "./robust-regression";

/**
 * The estimate on a bootstrap resample (participants drawn with
 * replacement); NaN where the estimate does not exist on that resample (the
 * bootstrap leaves such resamples out and counts them).
 */
export function bootstrapStatistic(d: RegionData): (indices: Int32Array) => number {
  const { kind, estimator, y, design } = d;
  const p = design.p;
  const rowsOf = (indices: Int32Array) => {
    const m = indices.length;
    const x = new Float64Array(m * p);
    const z = new Float64Array(m);
    for (let k = 0; k < m; k++) {
      const i = indices[k];
      z[k] = y[i];
      for (let j = 0; j < p; j++) x[k * p + j] = design.x[i * p + j];
    }
    return { x, z, m };
  };
  const guard = (f: () => number): number => {
    try {
      const v = f();
      return Number.isFinite(v) ? v : Number.NaN;
    } catch (e) {
      if (e instanceof StatsError) return Number.NaN;
      throw e;
    }
  };
  if (kind === "one-sample" && estimator === "rank") {
    return (indices) => walshMedian(sortedCopy(Float64Array.from(indices, (i) => y[i])));
  }
  if (kind === "two-group" && estimator === "rank") {
    const ind = d.x as Float64Array;
    return (indices) => {
      const a: number[] = [];
      const b: number[] = [];
      for (const i of indices) (ind[i] === 1 ? a : b).push(y[i]);
      if (a.length === 0 || b.length === 0) return Number.NaN;
      return differenceMedian(sortedCopy(a), sortedCopy(b));
    };
  }
  if (
    kind === "association" &&
    (estimator === "rank" || estimator === "skipped" || estimator === "bend")
  ) {
    const x = d.x as Float64Array;
    return (indices) =>
      guard(() => {
        const xs = Float64Array.from(indices, (i) => x[i]);
        const ys = Float64Array.from(indices, (i) => y[i]);
        if (estimator === "rank")
          return pearsonR(averageRanks(xs).ranks, averageRanks(ys).ranks) ?? Number.NaN;
        if (estimator === "skipped") return skippedCorrelation(xs, ys).r;
        return percentageBendCorrelation(xs, ys).r;
      });
  }
  if (estimator === "huber" || estimator === "bisquare") {
    return (indices) =>
      guard(() => {
        const { x, z, m } = rowsOf(indices);
        return robustLinearModel(x, m, p, z, { psi: estimator }).coefficients[d.tested];
      });
  }
  // ols and welch: the least-squares coefficient (for two groups without covariates, the difference of means)
  return (indices) =>
    guard(() => {
      const { x, z, m } = rowsOf(indices);
      if (m <= p) return Number.NaN;
      return solveLinearModel(qrDecompose(x, m, p, undefined, { thin: false }), z).coefficients[
        d.tested
      ];
    });
}

/** Percentile-bootstrap two-sided p-value of H0: θ = 0, 2·min(A, 1 − A) with A = share of θ* below 0 (ties one half) (Wilcox 2012, §4.4.4 style). */
export function bootstrapP(distribution: Float64Array): number {
  let below = 0;
  for (const v of distribution) below += v < 0 ? 1 : v === 0 ? 0.5 : 0;
  const a = below / distribution.length;
  return Math.min(1, 2 * Math.min(a, 1 - a));
}
