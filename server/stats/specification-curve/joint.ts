/**
 * The numbers of a specification curve that need no fitting: the summary of
 * the specifications (count, median estimate, shares), the statistics of
 * the joint test of Simonsohn, Simmons & Nelson 2020 (Nature Human
 * Behaviour 4:1208–1214) on one curve, and their permutation p-values.
 *
 * Significance: p < .05, two-sided. A curve's dominant direction is the
 * sign of its median estimate (positive at exactly 0). Its statistics:
 * - the median estimate (descriptive.ts's median: by selection, O(K) a curve);
 * - the share of specifications significant in its dominant direction;
 * - Stouffer's Z = Σ zᵢ/√K with zᵢ = Φ⁻¹(1 − qᵢ), qᵢ the one-sided p-value in
 *   the dominant direction (pᵢ/2 when the estimate points that way, else
 *   1 − pᵢ/2; pᵢ floored at 1e-300 so zᵢ stays finite).
 * Each null curve is scored in its own dominant direction, so the test is
 * two-sided: p = (1 + b)/(m + 1) with b the null curves whose |median|,
 * dominant share or Z is at least the observed one (Phipson & Smyth 2010).
 */
import type { CurveSummary } from "../../../contract/specification-curve";
import { median } from "../descriptive";
import { normalQuantile } from "../distributions/normal";

export const CURVE_ALPHA = 0.05;

export interface EstimateAndP {
  estimate: number;
  p: number;
}

export function curveSummary(specs: readonly EstimateAndP[]): CurveSummary {
  const count = specs.length;
  let pos = 0;
  let sigPos = 0;
  let sigNeg = 0;
  for (const s of specs) {
    if (s.estimate > 0) pos++;
    if (s.p < CURVE_ALPHA && s.estimate > 0) sigPos++;
    if (s.p < CURVE_ALPHA && s.estimate < 0) sigNeg++;
  }
  return {
    count,
    medianEstimate: median(specs.map((s) => s.estimate)),
    sharePositive: pos / count,
    shareSignificantPositive: sigPos / count,
    shareSignificantNegative: sigNeg / count,
  };
}

export interface CurveStatistics {
  median: number;
  direction: 1 | -1;
  shareDominant: number;
  stoufferZ: number;
}

/** The joint-test statistics of one curve, in its own dominant direction. */
export function curveStatistics(
  estimates: ArrayLike<number>,
  ps: ArrayLike<number>,
): CurveStatistics {
  const K = estimates.length;
  const m = median(estimates);
  const direction: 1 | -1 = m >= 0 ? 1 : -1;
  let sig = 0;
  let zSum = 0;
  for (let k = 0; k < K; k++) {
    const p = Math.max(ps[k], 1e-300);
    const along = estimates[k] * direction > 0;
    if (along && ps[k] < CURVE_ALPHA) sig++;
    const q = along ? p / 2 : 1 - p / 2;
    zSum += -normalQuantile(q);
  }
  return { median: m, direction, shareDominant: sig / K, stoufferZ: zSum / Math.sqrt(K) };
}

/** The three permutation p-values, (1 + b)/(m + 1), of the observed curve against the null curves. */
export function jointPValues(
  observed: CurveStatistics,
  nulls: readonly CurveStatistics[],
): { pMedian: number; pShareSignificant: number; pStouffer: number } {
  let bMedian = 0;
  let bShare = 0;
  let bZ = 0;
  // A relative tolerance keeps ties of equal curves from being lost to rounding.
  const atLeast = (a: number, b: number) => a >= b - 1e-12 * Math.max(1, Math.abs(b));
  for (const n of nulls) {
    if (atLeast(Math.abs(n.median), Math.abs(observed.median))) bMedian++;
    if (atLeast(n.shareDominant, observed.shareDominant)) bShare++;
    if (atLeast(n.stoufferZ, observed.stoufferZ)) bZ++;
  }
  const d = nulls.length + 1;
  return {
    pMedian: (bMedian + 1) / d,
    pShareSignificant: (bShare + 1) / d,
    pStouffer: (bZ + 1) / d,
  };
}
