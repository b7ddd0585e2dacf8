/**
 * Kendall's rank correlation τ_b (Kendall 1938, 1945):
 * τ_b = (C − D)/√((n0 − n1)(n0 − n2)), n0 = n(n−1)/2, n1 and n2 the pairs
 * tied in x and in y.
 *
 * p-value (two-sided):
 * - exact when n < 50 and there are no ties: the distribution of the number
 *   of concordant pairs over all n! orderings (Mahonian numbers), doubled
 *   smaller tail;
 * - otherwise S = C − D over its tie-corrected null standard deviation,
 *   Var S = [v0 − vt − vu]/18 + v1/(2n(n−1)) + v2/(9n(n−1)(n−2)) (Kendall
 *   1970, "Rank Correlation Methods", eq. 4.3), normal approximation without
 *   continuity correction.
 * Interval: Fisher z with variance 0.437/(n − 4) (Fieller, Hartley & Pearson 1957).
 */
import { fisherInterval } from "./correlation";
import { normalTwoSidedP } from "./distributions";
import { require } from "./errors";
import { kendallDistribution, twoSidedExactP } from "./exact-rank-distributions";
import { averageRanks } from "./ranks";

export interface KendallResult {
  n: number;
  tau: number;
  /** C − D */
  s: number;
  z: number | null;
  p: number;
  exact: boolean;
  ciLow: number | null;
  ciHigh: number | null;
}

/**
 * Cost O(n²) pair counting. Throws StatsError for fewer than three pairs,
 * unequal lengths, non-finite values or a constant variable.
 */
export function kendallTauB(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  options: { level?: number } = {},
): KendallResult {
  const { level = 0.95 } = options;
  require(x.length === y.length, "kendallTauB requires two variables of equal length");
  const n = x.length;
  require(n >= 3, "kendallTauB requires at least three pairs");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]) && Number.isFinite(y[i]), "kendallTauB requires finite values");
  let concordant = 0;
  let discordant = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const a = Math.sign(x[i] - x[j]) * Math.sign(y[i] - y[j]);
      if (a > 0) concordant++;
      else if (a < 0) discordant++;
    }
  }
  const tx = averageRanks(x).ties;
  const ty = averageRanks(y).ties;
  const n0 = (n * (n - 1)) / 2;
  const n1 = tx.reduce((acc, t) => acc + (t * (t - 1)) / 2, 0);
  const n2 = ty.reduce((acc, t) => acc + (t * (t - 1)) / 2, 0);
  require(n0 - n1 > 0 && n0 - n2 > 0, "kendallTauB requires variables that are not constant");
  const s = concordant - discordant;
  const tau = s / Math.sqrt((n0 - n1) * (n0 - n2));
  const exact = n < 50 && tx.length === 0 && ty.length === 0;
  let p: number;
  let z: number | null = null;
  if (exact) {
    p = twoSidedExactP(kendallDistribution(n), concordant);
  } else {
    const v0 = n * (n - 1) * (2 * n + 5);
    const vt = tx.reduce((acc, t) => acc + t * (t - 1) * (2 * t + 5), 0);
    const vu = ty.reduce((acc, t) => acc + t * (t - 1) * (2 * t + 5), 0);
    const v1 =
      tx.reduce((acc, t) => acc + t * (t - 1), 0) * ty.reduce((acc, t) => acc + t * (t - 1), 0);
    const v2 =
      tx.reduce((acc, t) => acc + t * (t - 1) * (t - 2), 0) *
      ty.reduce((acc, t) => acc + t * (t - 1) * (t - 2), 0);
    const variance =
      (v0 - vt - vu) / 18 + v1 / (2 * n * (n - 1)) + v2 / (9 * n * (n - 1) * (n - 2));
    require(variance > 0, "kendallTauB requires variables that are not constant");
    z = s / Math.sqrt(variance);
    p = normalTwoSidedP(z);
  }
  const ci = fisherInterval(tau, n, { level, variance: n > 4 ? 0.437 / (n - 4) : undefined });
  return { n, tau, s, z, p, exact, ciLow: ci.low, ciHigh: ci.high };
}
