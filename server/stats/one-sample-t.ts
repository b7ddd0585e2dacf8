/**
 * One-sample Student t test of H0: mean = mu, with the two-sided confidence
 * interval for the mean (Student 1908; Zar 2010, §7.1–7.3).
 */
import { mean, sampleVariance } from "./descriptive";
import { studentTQuantile, studentTTwoSidedP } from "./distributions";
import { require } from "./errors";

export interface OneSampleTResult {
  n: number;
  mean: number;
  sd: number;
  /** Estimate tested: mean − mu. */
  estimate: number;
  se: number;
  t: number;
  df: number;
  p: number;
  ciLow: number;
  ciHigh: number;
}

/**
 * t = (x̄ − mu) / (s/√n) on n − 1 df; CI x̄ ± t_{1−α/2, n−1} s/√n (reported
 * for the mean minus mu). Cost O(n).
 * Throws StatsError for fewer than two values, non-finite values, or zero
 * variance ("oneSampleTTest requires values that are not all equal").
 */
export function oneSampleTTest(
  x: ArrayLike<number>,
  options: { mu?: number; level?: number } = {},
): OneSampleTResult {
  const { mu = 0, level = 0.95 } = options;
  const n = x.length;
  require(n >= 2, "oneSampleTTest requires at least two values");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]), "oneSampleTTest requires finite values");
  require(level > 0 && level < 1, "oneSampleTTest requires 0 < level < 1");
  const m = mean(x);
  const v = sampleVariance(x);
  require(v > 0, "oneSampleTTest requires values that are not all equal");
  const se = Math.sqrt(v / n);
  const df = n - 1;
  const t = (m - mu) / se;
  const q = studentTQuantile(0.5 + level / 2, df);
  return {
    n,
    mean: m,
    sd: Math.sqrt(v),
    estimate: m - mu,
    se,
    t,
    df,
    p: studentTTwoSidedP(t, df),
    ciLow: m - mu - q * se,
    ciHigh: m - mu + q * se,
  };
}
