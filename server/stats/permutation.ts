/**
 * Permutation inference: the linear-model test with a fast kernel
 * (Freedman–Lane or sign flipping, optional max-T over regions) and a generic
 * test for any statistic without a kernel (Welch t, rank or robust
 * correlations…).
 *
 * Both follow one rule: when the number M of distinct rearrangements is at
 * most `resamples`, all M are enumerated and p = count(|T*| ≥ |T|) / M with the
 * identity included (exact); otherwise the identity is followed by m =
 * `resamples` random rearrangements and p = (b + 1) / (m + 1), b counting
 * |T*| ≥ |T| among the random ones (Monte Carlo; Phipson & Smyth 2010).
 * Tests are two-sided; ties are counted with a relative tolerance of 1e-10
 * (see `TIE_TOLERANCE`). `rearrangements` reports the number evaluated with
 * the identity included (M, or m + 1), and null distributions list the
 * identity first.
 */
import { StatsError } from "./errors";
import { countExtremeRearrangements, prepareLinearPermutation } from "./permutation-kernel";
import { createRearranger, extremeThreshold, progressReporter } from "./rearrangements";
import type { Rng } from "./rng";

export { TIE_TOLERANCE } from "./rearrangements";

export interface LinearPermutationInput {
  /** row-major n × p design matrix */
  design: Float64Array;
  n: number;
  p: number;
  /** column index whose coefficient's t is the statistic */
  tested: number;
  /** regions, each of length n, complete cases */
  y: readonly Float64Array[];
  scheme: "sign-flip" | "freedman-lane";
  resamples: number;
  rng: Rng;
  /** also compute family-wise p-values from the maximum |t*| over regions */
  maxT?: boolean;
  /** keep every rearranged statistic per region (identity first) */
  keepNull?: boolean;
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}

export interface LinearPermutationResult {
  /** observed t of the tested coefficient, per region */
  observed: Float64Array;
  /** two-sided permutation p, per region */
  p: Float64Array;
  /** family-wise (max-T) p, per region, when requested */
  pMaxT: Float64Array | null;
  exact: boolean;
  /** rearrangements evaluated, identity included */
  rearrangements: number;
  /** per region the t* of every rearrangement, identity first, when requested */
  nullStatistics: Float32Array[] | null;
  /** per rearrangement the maximum |t*| over regions, when max-T was requested */
  maxNull: Float64Array | null;
}

/**
 * Permutation test of one coefficient of a linear model fitted to many
 * regions, by Freedman & Lane (1983, J. Business & Economic Statistics
 * 1:292–298) or by sign flipping (Winkler et al. 2014, NeuroImage
 * 92:381–397), with optional max-T family-wise p-values (Westfall & Young
 * 1993, Resampling-Based Multiple Testing; Nichols & Holmes 2002, Human
 * Brain Mapping 15:1–25).
 *
 * - "freedman-lane": fit the reduced model (design without the tested
 *   column), permute its residuals, add back its fitted values, refit the full
 *   model; statistic = t of the tested coefficient. With a two-valued tested
 *   column and an intercept as the only other column (two groups, no
 *   covariates) this is label permutation, and exact enumeration runs over the
 *   C(n, n1) group assignments; otherwise over the n! permutations.
 * - "sign-flip": the same with the reduced residuals multiplied by random
 *   signs (2^n patterns); for a one-sample test the tested column is the
 *   intercept and, without covariates, this flips the values themselves.
 *
 * max-T: every region sees the same rearrangements; pMaxT of a region is the
 * share of rearrangements whose maximum |t*| over regions reaches its |t|.
 *
 * Cost: O(n·p² + n·p·R) set-up, then per rearrangement 2·n·p·R flops (see
 * permutation-kernel.ts); memory R·n doubles, plus R·M floats with keepNull.
 * Preconditions: n > p, full-rank design, finite values, residual variation in
 * every region. Throws StatsError naming the field otherwise, and with code
 * "cancelled" when `shouldCancel()` returns true.
 */
export function linearPermutationTest(input: LinearPermutationInput): LinearPermutationResult {
  const setup = prepareLinearPermutation(input);
  const runs = countExtremeRearrangements({
    plan: setup.plan,
    residuals: setup.residuals,
    residualSquares: setup.residualSquares,
    observed: setup.observed,
    rng: input.rng,
    maxT: input.maxT === true,
    keepNull: input.keepNull === true,
    onProgress: input.onProgress,
    shouldCancel: input.shouldCancel,
  });
  return assembleLinearResult(setup.observed, runs.counts, runs.maxAbs, runs.nulls, runs.exact, runs.rearrangements);
}

/**
 * Turns per-region counts (and per-rearrangement maxima) into p-values:
 * p = count / rearrangements; pMaxT = #{k : max_k ≥ |t_r|} / rearrangements.
 * Shared by the single-thread test and the worker-thread driver. Cost O(R·M) for max-T.
 */
export function assembleLinearResult(
  observed: Float64Array,
  counts: Float64Array,
  maxAbs: Float64Array | null,
  nulls: Float32Array[] | null,
  exact: boolean,
  rearrangements: number,
): LinearPermutationResult {
  const regions = observed.length;
  const p = new Float64Array(regions);
  for (let r = 0; r < regions; r++) p[r] = counts[r] / rearrangements;
  let pMaxT: Float64Array | null = null;
  if (maxAbs) {
    pMaxT = new Float64Array(regions);
    const sorted = Float64Array.from(maxAbs).sort();
    for (let r = 0; r < regions; r++) {
      // count of maxima ≥ threshold = M − (index of the first one ≥ threshold)
      pMaxT[r] = (rearrangements - lowerBound(sorted, extremeThreshold(observed[r]))) / rearrangements;
    }
  }
  return { observed, p, pMaxT, exact, rearrangements, nullStatistics: nulls, maxNull: maxAbs };
}

function lowerBound(sorted: Float64Array, x: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (sorted[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

export interface GenericPermutationInput {
  /** number of units (participants) */
  n: number;
  /** "labels": rearrange units (or two groups' labels); "sign-flip": flip signs */
  scheme: "sign-flip" | "labels";
  /**
   * The statistic of one rearrangement. For "labels", `order` is a
   * permutation of 0..n−1 (with `groupSizes`, its first groupSizes[0] entries
   * are the units in the first group); for "sign-flip", `signs` are ±1 and
   * `order` is the identity. The identity (order 0..n−1, all signs +1) is the
   * observed arrangement. The arrays are fresh copies for each call.
   */
  statistic: (order: Int32Array, signs: Float64Array) => number;
  resamples: number;
  rng: Rng;
  /** "labels" with two groups: [first, second], summing to n */
  groupSizes?: [number, number];
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}

export interface GenericPermutationResult {
  observed: number;
  /** two-sided permutation p */
  p: number;
  exact: boolean;
  /** rearrangements evaluated, identity included */
  rearrangements: number;
  /** the statistic of every rearrangement, identity first */
  nullStatistics: Float64Array;
}

/**
 * Permutation test for any statistic (Good 2005, Permutation, Parametric and
 * Bootstrap Tests of Hypotheses, ch. 3): evaluates `statistic` on the
 * identity and on every rearrangement — all 2^n sign patterns, all C(n, n1)
 * two-group assignments or all n! permutations when that number is at most
 * `resamples`, otherwise `resamples` random ones — and returns the two-sided p
 * by the exact / Monte Carlo rule above.
 *
 * Cost: (M or resamples + 1) calls of `statistic` plus O(n) each.
 * Preconditions: n ≥ 1 (n ≥ 2 for labels), integer resamples ≥ 1, group sizes
 * positive and summing to n, a finite observed statistic and a number (not
 * NaN) for every rearrangement; ±Infinity is allowed and compares as usual.
 * Throws StatsError otherwise, and with code "cancelled" when
 * `shouldCancel()` returns true (checked every 64 rearrangements).
 */
export function genericPermutationTest(input: GenericPermutationInput): GenericPermutationResult {
  const name = "genericPermutationTest";
  const { n, scheme, statistic, resamples, rng, groupSizes } = input;
  if (scheme !== "sign-flip" && scheme !== "labels") {
    throw new StatsError(`${name} requires scheme "sign-flip" or "labels" (got ${String(scheme)})`);
  }
  if (!(Number.isInteger(n) && n >= (scheme === "labels" ? 2 : 1))) {
    throw new StatsError(`${name} requires at least ${scheme === "labels" ? 2 : 1} units (got n = ${n})`);
  }
  if (!(Number.isInteger(resamples) && resamples >= 1)) {
    throw new StatsError(`${name} requires resamples to be a positive integer (got ${resamples})`);
  }
  if (groupSizes !== undefined) {
    const [a, b] = groupSizes;
    if (scheme !== "labels") throw new StatsError(`${name} requires scheme "labels" when groupSizes are given`);
    if (!(Number.isInteger(a) && Number.isInteger(b) && a >= 1 && b >= 1 && a + b === n)) {
      throw new StatsError(`${name} requires groupSizes to be two positive integers summing to n = ${n} (got ${a}, ${b})`);
    }
  }
  const walk = createRearranger({
    kind: scheme === "sign-flip" ? "signs" : groupSizes ? "subsets" : "permutations",
    n,
    resamples,
    rng,
    firstGroupSize: groupSizes?.[0],
  });
  const total = walk.total;
  const nullStatistics = new Float64Array(total);
  const report = progressReporter(name, total, input.onProgress, input.shouldCancel, 64);
  for (let k = 0; k < total; k++) {
    walk.next();
    const value = statistic(Int32Array.from(walk.order), Float64Array.from(walk.signs));
    if (typeof value !== "number" || Number.isNaN(value)) {
      throw new StatsError(`${name} requires the statistic to return a number for every rearrangement (rearrangement ${k} gave ${String(value)})`);
    }
    if (k === 0 && !Number.isFinite(value)) {
      throw new StatsError(`${name} requires a finite observed statistic (got ${value})`);
    }
    nullStatistics[k] = value;
    report(k + 1);
  }
  const observed = nullStatistics[0];
  const threshold = extremeThreshold(observed);
  let count = 0;
  for (let k = 0; k < total; k++) if (Math.abs(nullStatistics[k]) >= threshold) count++;
  return { observed, p: count / total, exact: walk.exact, rearrangements: total, nullStatistics };
}
