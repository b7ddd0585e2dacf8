/**
 * Spearman's rank correlation ρ_s (Spearman 1904): Pearson's r of the
 * mid-ranks (Zar 2010, §19.9).
 *
 * p-value (two-sided):
 * - exact when n ≤ 9 and there are no ties: the distribution of
 *   S = Σd² over all n! permutations by exact enumeration, doubled smaller
 *   tail (as the general-purpose environment R does for n ≤ 9);
 * - otherwise the t approximation t = ρ√((n − 2)/(1 − ρ²)) on n − 2 df
 *   (Zar 2010, eq. 19.38). Between 10 and about 1290 R uses an Edgeworth
 *   series instead, so approximate p-values differ from R's in that range.
 *
 * Interval: Fisher z with variance 1.06/(n − 3) (Fieller, Hartley &
 * Pearson 1957).
 */
import {
  type CorrelationResult,
  correlationP,
  correlationT,
  fisherInterval,
  pearsonR,
} from "./correlation";
import { require } from "./errors";
import { spearmanDistribution, twoSidedExactP } from "./exact-rank-distributions";
import { averageRanks } from "./ranks";

/** Largest n for which the exact permutation distribution is used. */
export const SPEARMAN_EXACT_MAX_N = 9;

export interface SpearmanResult extends CorrelationResult {
  exact: boolean;
  /** S = Σ(rank difference)², reported for the exact test. */
  s: number;
}

/**
 * Cost O(n log n), plus a one-time O(n!·n) enumeration per n ≤ 9.
 * Throws StatsError for fewer than three pairs, unequal lengths, non-finite
 * values or a constant variable.
 */
export function spearmanCorrelation(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  options: { level?: number } = {},
): SpearmanResult {
  const { level = 0.95 } = options;
  require(x.length === y.length, "spearmanCorrelation requires two variables of equal length");
  const n = x.length;
  require(n >= 3, "spearmanCorrelation requires at least three pairs");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]) &&
      Number.isFinite(y[i]), "spearmanCorrelation requires finite values");
  const rx = averageRanks(x);
  const ry = averageRanks(y);
  const r = pearsonR(rx.ranks, ry.ranks);
  require(r !== null, "spearmanCorrelation requires variables that are not constant");
  let s = 0;
  for (let i = 0; i < n; i++) {
    const d = rx.ranks[i] - ry.ranks[i];
    s += d * d;
  }
  const df = n - 2;
  const exact = n <= SPEARMAN_EXACT_MAX_N && rx.ties.length === 0 && ry.ties.length === 0;
  const p = exact ? twoSidedExactP(spearmanDistribution(n), s) : correlationP(r, df);
  const ci = fisherInterval(r, n, { level, variance: n > 3 ? 1.06 / (n - 3) : undefined });
  return {
    n,
    r,
    t: exact ? null : correlationT(r, df),
    df,
    p,
    ciLow: ci.low,
    ciHigh: ci.high,
    exact,
    s,
  };
}
