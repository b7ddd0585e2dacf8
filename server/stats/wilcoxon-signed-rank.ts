/**
 * Wilcoxon signed-rank test of H0: the distribution of x − mu is symmetric
 * about 0 (Wilcoxon 1945; Hollander & Wolfe 1999, §3.1), with the
 * Hodges–Lehmann pseudomedian and its distribution-free interval (§3.2–3.3).
 *
 * Zeros (x = mu) are dropped first and n counts the rest (Wilcoxon's original
 * rule, also the default of the general-purpose environment R).
 *
 * p-value:
 * - exact, when n < 50 and there are no ties among |x − mu| and no zeros:
 *   two-sided min(1, 2·min(P(V ≤ v), P(V ≥ v))) from the exact distribution;
 * - otherwise the normal approximation with tie-corrected variance
 *   n(n+1)(2n+1)/24 − Σ(t³ − t)/48 and continuity correction 0.5 toward the
 *   mean n(n+1)/4.
 *
 * Interval: Walsh averages W_(k) … W_(M+1−k), M = n(n+1)/2, with k the
 * smallest v having P(V ≤ v) ≥ α/2 (exact case; at least 1), or
 * k = ⌊n(n+1)/4 − z_{1−α/2}·√(n(n+1)(2n+1)/24)⌋ (normal approximation, at least 1).
 */
import { sortedCopy } from "./descriptive";
import { normalCdf, normalQuantile } from "./distributions";
import { require } from "./errors";
import {
  discreteQuantile,
  signedRankDistribution,
  twoSidedExactP,
} from "./exact-rank-distributions";
import { kthWalshSum, walshMedian } from "./hodges-lehmann";
import { averageRanks } from "./ranks";

export interface SignedRankResult {
  /** Values after dropping zeros. */
  n: number;
  zeros: number;
  /** Sum of ranks of positive differences. */
  v: number;
  /** Standardised statistic (normal approximation) or null when exact. */
  z: number | null;
  p: number;
  exact: boolean;
  /** Hodges–Lehmann pseudomedian of x (location, not minus mu). */
  estimate: number;
  ciLow: number;
  ciHigh: number;
}

/**
 * Cost O(n log n). Throws StatsError when fewer than two non-zero differences
 * remain, for non-finite values, or when all differences are tied.
 */
export function wilcoxonSignedRank(
  x: ArrayLike<number>,
  options: { mu?: number; level?: number } = {},
): SignedRankResult {
  const { mu = 0, level = 0.95 } = options;
  require(level > 0 && level < 1, "wilcoxonSignedRank requires 0 < level < 1");
  const d: number[] = [];
  for (let i = 0; i < x.length; i++) {
    require(Number.isFinite(x[i]), "wilcoxonSignedRank requires finite values");
    if (x[i] - mu !== 0) d.push(x[i] - mu);
  }
  const zeros = x.length - d.length;
  const n = d.length;
  require(n >= 2, "wilcoxonSignedRank requires at least two values different from mu");
  const abs = d.map(Math.abs);
  const { ranks, ties } = averageRanks(abs);
  let v = 0;
  for (let i = 0; i < n; i++) if (d[i] > 0) v += ranks[i];
  const exact = n < 50 && ties.length === 0 && zeros === 0;
  const alpha = 1 - level;
  const sorted = sortedCopy(d);
  const total = (n * (n + 1)) / 2;
  let p: number;
  let z: number | null = null;
  let k: number;
  if (exact) {
    const dist = signedRankDistribution(n);
    p = twoSidedExactP(dist, v);
    k = Math.max(1, discreteQuantile(dist, alpha / 2));
  } else {
    let tieSum = 0;
    for (const t of ties) tieSum += t * t * t - t;
    const variance = (n * (n + 1) * (2 * n + 1)) / 24 - tieSum / 48;
    require(variance > 0, "wilcoxonSignedRank requires differences that are not all tied");
    const centred = v - (n * (n + 1)) / 4;
    z = (centred - 0.5 * Math.sign(centred)) / Math.sqrt(variance);
    p = Math.min(1, 2 * Math.min(normalCdf(z), normalCdf(-z)));
    k = Math.max(
      1,
      Math.floor(
        (n * (n + 1)) / 4 -
          normalQuantile(1 - alpha / 2) * Math.sqrt((n * (n + 1) * (2 * n + 1)) / 24),
      ),
    );
  }
  k = Math.min(k, Math.floor((total + 1) / 2));
  return {
    n,
    zeros,
    v,
    z,
    p,
    exact,
    estimate: walshMedian(sorted) + mu,
    ciLow: kthWalshSum(sorted, k) / 2 + mu,
    ciHigh: kthWalshSum(sorted, total + 1 - k) / 2 + mu,
  };
}
