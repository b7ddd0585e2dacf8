/**
 * Spearman's rank correlation ρ_s (Spearman 1904): Pearson's r of the
 * mid-ranks (Zar 2010, §19.9).
 *
 * p-value (two-sided), from S = Σd², the sum of squared rank differences:
 * - without ties, n ≤ 9: the exact null distribution of S over all n!
 *   orderings (exact enumeration, cached per n);
 * - without ties, 10 ≤ n ≤ 1290: the Edgeworth series of Best & Roberts
 *   (1975, Applied Statistics 24, 377–379, algorithm AS 89) for the tail
 *   probability of S;
 * - without ties, n > 1290, and with ties at every n: the t approximation
 *   t = ρ√((n − 2)/(1 − ρ²)) on n − 2 df (Zar 2010, eq. 19.38). With ties
 *   S no longer has the tabulated null distribution, so ties keep the t
 *   approximation whatever n.
 * The two-sided p is twice the smaller tail, capped at 1: the tail is
 * P(S ≥ s) when ρ < 0 (s above its null mean (n³ − n)/6), P(S ≤ s)
 * otherwise. These are the ranges and the doubling rule of the
 * general-purpose statistics environment R's rank-correlation test, so the
 * p-values agree with it.
 *
 * Why exact only up to n = 9: that is where the reference environment
 * stops, so p agrees with it to rounding. Full enumeration costs O(n!·n),
 * about 20 ms once for 9! = 362,880 orderings (cached per n; Spearman's p is
 * found once per region, never inside a rearrangement loop, which uses ρ
 * alone). A dynamic programme over the set of ranks already placed
 * (O(2^n·n·n³)) would give the exact distribution up to n ≈ 14 in well
 * under a second (0.4 s at n = 14, measured on a busy 2-core machine); it
 * is used only by the tests, which measure the Edgeworth series against it: for p ≥ 0.001
 * its largest relative error is 24 % at n = 10, 15 % at 11, 9 % at 12 and
 * 6 % at 13 (the t approximation's: 53 %, 47 %, 43 %, 41 %).
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
import { normalCdf } from "./distributions";
import { require } from "./errors";
import { spearmanDistribution, twoSidedExactP } from "./exact-rank-distributions";
import { type RankResult, averageRanks } from "./ranks";

/** Largest n for which the exact permutation distribution is used. */
export const SPEARMAN_EXACT_MAX_N = 9;

/** Largest n for which the Edgeworth series (AS 89) is used; the t approximation beyond. */
export const SPEARMAN_EDGEWORTH_MAX_N = 1290;

/** How a Spearman p-value was found. */
export type SpearmanPMethod = "exact" | "edgeworth" | "t";

export interface SpearmanResult extends CorrelationResult {
  exact: boolean;
  pMethod: SpearmanPMethod;
  /** S = Σ(rank difference)², the statistic of the exact and Edgeworth p-values. */
  s: number;
}

// Edgeworth-series coefficients (Best & Roberts 1975, AS 89).
const C1 = 0.2274;
const C2 = 0.2531;
const C3 = 0.1745;
const C4 = 0.0758;
const C5 = 0.1033;
const C6 = 0.3932;
const C7 = 0.0879;
const C8 = 0.0151;
const C9 = 0.0072;
const C10 = 0.0831;
const C11 = 0.0131;
const C12 = 4.6e-4;

/**
 * Upper tail P(S ≥ s) of S = Σd² among n untied ranks under independence,
 * by the Edgeworth series of Best & Roberts (1975, algorithm AS 89):
 * with x = (6(s − 1)/(n³ − n) − 1)·√(n − 1) (a continuity-corrected
 * standardized ρ, sign reversed), P ≈ 1 − Φ(x) + u(x)·e^(−x²/2), u an odd
 * polynomial in x with coefficients in 1/n. Clamped to [0, 1]. Cost O(1).
 * Meant for n ≥ 7 (the series' published range); requires n ≥ 2.
 */
export function spearmanEdgeworthUpperTail(n: number, s: number): number {
  require(Number.isInteger(n) && n >= 2, "spearmanEdgeworthUpperTail requires n ≥ 2");
  const b = 1 / n;
  const x = ((6 * (s - 1) * b) / (n * n - 1) - 1) * Math.sqrt(n - 1);
  const y = x * x;
  const u =
    x *
    b *
    (C1 +
      b * (C2 + C3 * b) +
      y *
        (-C4 +
          b * (C5 + C6 * b) -
          y * b * (C7 + C8 * b - y * (C9 - C10 * b + y * b * (C11 - C12 * y)))));
  const p = u / Math.exp(y / 2) + normalCdf(-x);
  return p < 0 ? 0 : p > 1 ? 1 : p;
}

/**
 * Two-sided p-value of H0: ρ_s = 0 from S = Σd² among n untied ranks:
 * exact for n ≤ 9, the Edgeworth series (AS 89) for 10 ≤ n ≤ 1290, the
 * t approximation beyond (see the file comment). Cost O(1), plus a one-time
 * O(n!·n) enumeration per n ≤ 9 (cached).
 * Requires n ≥ 2 and an even integer 0 ≤ s ≤ (n³ − n)/3 (S of a permutation).
 */
export function spearmanTwoSidedP(n: number, s: number): { p: number; method: SpearmanPMethod } {
  require(Number.isInteger(n) && n >= 2, "spearmanTwoSidedP requires n ≥ 2");
  const max = (n * n * n - n) / 3;
  require(Number.isInteger(s) &&
    s >= 0 &&
    s <= max &&
    s % 2 === 0, "spearmanTwoSidedP requires S to be an even integer between 0 and (n³ − n)/3");
  if (n <= SPEARMAN_EXACT_MAX_N)
    return { p: twoSidedExactP(spearmanDistribution(n), s), method: "exact" };
  if (n <= SPEARMAN_EDGEWORTH_MAX_N) {
    // S is symmetric about max/2: P(S ≤ s) = P(S ≥ max − s).
    const tail = spearmanEdgeworthUpperTail(n, s > max / 2 ? s : max - s);
    return { p: Math.min(1, 2 * tail), method: "edgeworth" };
  }
  return { p: correlationP(1 - (2 * s) / max, n - 2), method: "t" };
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
  require(x.length === y.length, "spearmanCorrelation requires two variables of equal length");
  const n = x.length;
  require(n >= 3, "spearmanCorrelation requires at least three pairs");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]) &&
      Number.isFinite(y[i]), "spearmanCorrelation requires finite values");
  return spearmanFromRanks(averageRanks(x), averageRanks(y), options);
}

/**
 * spearmanCorrelation from the mid-ranks and tie groups of the two
 * variables (averageRanks of each), for callers that have them already.
 */
export function spearmanFromRanks(
  rx: RankResult,
  ry: RankResult,
  options: { level?: number } = {},
): SpearmanResult {
  const { level = 0.95 } = options;
  const n = rx.ranks.length;
  require(ry.ranks.length === n, "spearmanCorrelation requires two variables of equal length");
  require(n >= 3, "spearmanCorrelation requires at least three pairs");
  const r = pearsonR(rx.ranks, ry.ranks);
  require(r !== null, "spearmanCorrelation requires variables that are not constant");
  let s = 0;
  for (let i = 0; i < n; i++) {
    const d = rx.ranks[i] - ry.ranks[i];
    s += d * d;
  }
  const df = n - 2;
  const ties = rx.ties.length > 0 || ry.ties.length > 0;
  // With ties: the t approximation at every n (S has no tabulated null distribution then).
  const { p, method } =
    ties || n > SPEARMAN_EDGEWORTH_MAX_N
      ? { p: correlationP(r, df), method: "t" as const }
      : spearmanTwoSidedP(n, s);
  const exact = method === "exact";
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
    pMethod: method,
    s,
  };
}
