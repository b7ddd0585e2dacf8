/**
 * Mann–Whitney U test (Wilcoxon rank-sum test) of H0: the two samples come
 * from the same distribution (Mann & Whitney 1947; Hollander & Wolfe 1999,
 * §4.1), with the Hodges–Lehmann shift estimate median(x1_i − x2_j) and its
 * distribution-free interval (§4.2–4.3).
 *
 * U = Σ ranks(first) − n1(n1+1)/2 with mid-ranks (pairs first > second, ties
 * counted one half). p-value:
 * - exact when n1 < 50, n2 < 50 and no ties: min(1, 2·min(P(U ≤ u), P(U ≥ u)));
 * - otherwise normal approximation with tie-corrected variance
 *   (n1n2/12)·((N+1) − Σ(t³−t)/(N(N−1))) and continuity correction 0.5.
 * Interval: differences D_(k) … D_(n1n2+1−k) with k the smallest u having
 * P(U ≤ u) ≥ α/2 (exact; at least 1) or
 * k = ⌊n1n2/2 − z_{1−α/2}·√(n1n2(N+1)/12)⌋ (approximation; at least 1).
 */
import { sortedCopy } from "./descriptive";
import { normalCdf, normalQuantile } from "./distributions";
import { require } from "./errors";
import { discreteQuantile, rankSumDistribution, twoSidedExactP } from "./exact-rank-distributions";
import { differenceMedian, kthDifference } from "./hodges-lehmann";
import { averageRanks } from "./ranks";

export interface MannWhitneyResult {
  n1: number;
  n2: number;
  u: number;
  z: number | null;
  p: number;
  exact: boolean;
  /** U/(n1·n2): probability that a first-group value exceeds a second-group value (ties one half). */
  probabilitySuperiority: number;
  /** Hodges–Lehmann shift, first minus second. */
  estimate: number;
  ciLow: number;
  ciHigh: number;
}

/**
 * Cost O(N log N), N = n1 + n2. Throws StatsError with fewer than one value
 * in a group (two in total), non-finite values, or all values tied.
 */
export function mannWhitneyU(
  x1: ArrayLike<number>,
  x2: ArrayLike<number>,
  options: { level?: number } = {},
): MannWhitneyResult {
  const { level = 0.95 } = options;
  require(level > 0 && level < 1, "mannWhitneyU requires 0 < level < 1");
  const n1 = x1.length;
  const n2 = x2.length;
  require(n1 >= 1 &&
    n2 >= 1 &&
    n1 + n2 >= 3, "mannWhitneyU requires at least one value per group and three in total");
  const all = new Float64Array(n1 + n2);
  for (let i = 0; i < n1; i++) {
    require(Number.isFinite(x1[i]), "mannWhitneyU requires finite values");
    all[i] = x1[i];
  }
  for (let i = 0; i < n2; i++) {
    require(Number.isFinite(x2[i]), "mannWhitneyU requires finite values");
    all[n1 + i] = x2[i];
  }
  const { ranks, ties } = averageRanks(all);
  let w = 0;
  for (let i = 0; i < n1; i++) w += ranks[i];
  const u = w - (n1 * (n1 + 1)) / 2;
  const N = n1 + n2;
  const exact = n1 < 50 && n2 < 50 && ties.length === 0;
  const alpha = 1 - level;
  let p: number;
  let z: number | null = null;
  let k: number;
  if (exact) {
    const dist = rankSumDistribution(n1, n2);
    p = twoSidedExactP(dist, u);
    k = Math.max(1, discreteQuantile(dist, alpha / 2));
  } else {
    let tieSum = 0;
    for (const t of ties) tieSum += t * t * t - t;
    const variance = ((n1 * n2) / 12) * (N + 1 - tieSum / (N * (N - 1)));
    require(variance > 0, "mannWhitneyU requires values that are not all tied");
    const centred = u - (n1 * n2) / 2;
    z = (centred - 0.5 * Math.sign(centred)) / Math.sqrt(variance);
    p = Math.min(1, 2 * Math.min(normalCdf(z), normalCdf(-z)));
    k = Math.max(
      1,
      Math.floor(
        (n1 * n2) / 2 - normalQuantile(1 - alpha / 2) * Math.sqrt((n1 * n2 * (N + 1)) / 12),
      ),
    );
  }
  const total = n1 * n2;
  k = Math.min(k, Math.floor((total + 1) / 2));
  const a = sortedCopy(x1);
  const b = sortedCopy(x2);
  return {
    n1,
    n2,
    u,
    z,
    p,
    exact,
    probabilitySuperiority: u / total,
    estimate: differenceMedian(a, b),
    ciLow: kthDifference(a, b, k),
    ciHigh: kthDifference(a, b, total + 1 - k),
  };
}
