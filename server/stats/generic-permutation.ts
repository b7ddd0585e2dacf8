/**
 * The generic permutation test, for any statistic without a linear kernel
 * (Welch t, rank, robust and skipped or bend correlations): one region
 * (`genericPermutationTest`) or several regions under one shared draw of
 * their participants (`sharedGenericPermutationTest`, the rule in
 * rearrangements.ts). Exact when all rearrangements fit in `resamples`,
 * Monte Carlo otherwise, by the rule stated in permutation.ts.
 */
import { StatsError } from "./errors";
import { checkCovered } from "./permutation";
import {
  createRearranger,
  createSharedRearranger,
  extremeThreshold,
  memberPositions,
  progressReporter,
  regionSigns,
  regionSources,
} from "./rearrangements";
import type { Rng } from "./rng";

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
 * by the exact / Monte Carlo rule of permutation.ts.
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
    throw new StatsError(
      `${name} requires at least ${scheme === "labels" ? 2 : 1} units (got n = ${n})`,
    );
  }
  if (!(Number.isInteger(resamples) && resamples >= 1)) {
    throw new StatsError(`${name} requires resamples to be a positive integer (got ${resamples})`);
  }
  if (groupSizes !== undefined) {
    const [a, b] = groupSizes;
    if (scheme !== "labels")
      throw new StatsError(`${name} requires scheme "labels" when groupSizes are given`);
    if (!(Number.isInteger(a) && Number.isInteger(b) && a >= 1 && b >= 1 && a + b === n)) {
      throw new StatsError(
        `${name} requires groupSizes to be two positive integers summing to n = ${n} (got ${a}, ${b})`,
      );
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
      throw new StatsError(
        `${name} requires the statistic to return a number for every rearrangement (rearrangement ${k} gave ${String(value)})`,
      );
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

/** One region of `sharedGenericPermutationTest`. */
export interface SharedGenericRegion {
  /** positions of the region's participants among all participants of the test, increasing */
  members: Int32Array;
  /**
   * The statistic of one rearrangement over the region's own participants,
   * as for `genericPermutationTest` (fresh arrays on each call). With
   * "labels", slot k receives the value of slot `order[k]`; `slots[k]` is
   * the participant (position in `members`) that slot k stands for
   * (default: slot k is participant k).
   */
  statistic: (order: Int32Array, signs: Float64Array) => number;
  slots?: Int32Array;
  /** two-group label assignments: [first, second] (used when every region has every participant) */
  groupSizes?: [number, number];
  /** names the region in error messages */
  label?: string;
}

export interface SharedGenericPermutationResult {
  /** per region */
  observed: Float64Array;
  p: Float64Array;
  nullStatistics: Float64Array[];
  exact: boolean;
  rearrangements: number;
}

/**
 * `genericPermutationTest` for several regions under one draw, so that
 * max-T over their null statistics controls the family-wise error
 * (Westfall & Young 1993, single-step max-T; Winkler et al. 2014).
 *
 * When every region has all N participants, the draw is exactly the walk of
 * `genericPermutationTest` with the same generator (two-group label
 * assignments with `groupSizes`), the same for every region. Otherwise it
 * runs over the N participants — one sign vector, or one order σ of which
 * each region keeps its own participants in σ's order (rearrangements.ts) —
 * and exact enumeration needs 2^N (or N!) ≤ `resamples`.
 *
 * Cost: (M or resamples + 1) × Σ over regions of (statistic + O(N)).
 * Throws StatsError as `genericPermutationTest` (naming the region's
 * label), when a participant is in no region, and with code "cancelled"
 * (checked every 64 rearrangements).
 */
export function sharedGenericPermutationTest(input: {
  participants: number;
  regions: readonly SharedGenericRegion[];
  scheme: "sign-flip" | "labels";
  resamples: number;
  rng: Rng;
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}): SharedGenericPermutationResult {
  const name = "genericPermutationTest";
  const { participants: N, regions, scheme, resamples, rng } = input;
  if (scheme !== "sign-flip" && scheme !== "labels")
    throw new StatsError(`${name} requires scheme "sign-flip" or "labels" (got ${String(scheme)})`);
  if (regions.length === 0) throw new StatsError(`${name} requires at least one region`);
  if (!(Number.isInteger(N) && N >= (scheme === "labels" ? 2 : 1))) {
    throw new StatsError(
      `${name} requires at least ${scheme === "labels" ? 2 : 1} units (got n = ${N})`,
    );
  }
  if (!(Number.isInteger(resamples) && resamples >= 1))
    throw new StatsError(`${name} requires resamples to be a positive integer (got ${resamples})`);
  checkCovered(name, N, regions);
  let walk: { readonly total: number; readonly exact: boolean; next(): void };
  let arrange: (region: number) => { order: Int32Array; signs: Float64Array };
  if (regions.every((r) => r.members.length === N)) {
    const sizes = regions[0].groupSizes;
    for (const r of regions) {
      const g = r.groupSizes;
      if (g?.[0] !== sizes?.[0] || g?.[1] !== sizes?.[1])
        throw new StatsError(`${name} requires the same group sizes in every region`);
    }
    if (
      sizes &&
      !(
        scheme === "labels" &&
        Number.isInteger(sizes[0]) &&
        Number.isInteger(sizes[1]) &&
        sizes[0] >= 1 &&
        sizes[1] >= 1 &&
        sizes[0] + sizes[1] === N
      )
    ) {
      throw new StatsError(
        `${name} requires groupSizes to be two positive integers summing to n = ${N} (got ${sizes[0]}, ${sizes[1]})`,
      );
    }
    const w = createRearranger({
      kind: scheme === "sign-flip" ? "signs" : sizes ? "subsets" : "permutations",
      n: N,
      resamples,
      rng,
      firstGroupSize: sizes?.[0],
    });
    walk = w;
    arrange = () => ({ order: Int32Array.from(w.order), signs: Float64Array.from(w.signs) });
  } else {
    const w = createSharedRearranger({
      kind: scheme === "sign-flip" ? "signs" : "permutations",
      n: N,
      resamples,
      rng,
    });
    const prepared = regions.map((r) => {
      const m = r.members.length;
      const slots = r.slots ?? Int32Array.from({ length: m }, (_, k) => k);
      const slotOf = new Int32Array(m);
      for (let k = 0; k < m; k++) slotOf[slots[k]] = k;
      return { local: memberPositions(N, r.members), slots, slotOf, from: new Int32Array(m) };
    });
    walk = w;
    arrange = (idx) => {
      const { members } = regions[idx];
      const { local, slots, slotOf, from } = prepared[idx];
      const m = members.length;
      const order = new Int32Array(m);
      const signs = new Float64Array(m);
      if (scheme === "sign-flip") {
        regionSigns(w.signs, members, signs);
        for (let k = 0; k < m; k++) order[k] = k;
      } else {
        signs.fill(1);
        regionSources(w.sigma, local, from);
        // Slot k (participant slots[k]) receives the value of participant from[slots[k]], which sits in slot slotOf[…].
        for (let k = 0; k < m; k++) order[k] = slotOf[from[slots[k]]];
      }
      return { order, signs };
    };
  }
  const total = walk.total;
  const nullStatistics = regions.map(() => new Float64Array(total));
  const report = progressReporter(name, total, input.onProgress, input.shouldCancel, 64);
  for (let k = 0; k < total; k++) {
    walk.next();
    for (let r = 0; r < regions.length; r++) {
      const { order, signs } = arrange(r);
      const value = regions[r].statistic(order, signs);
      if (typeof value !== "number" || Number.isNaN(value)) {
        throw labelledError(
          regions[r].label,
          `${name} requires the statistic to return a number for every rearrangement (rearrangement ${k} gave ${String(value)})`,
        );
      }
      if (k === 0 && !Number.isFinite(value))
        throw labelledError(
          regions[r].label,
          `${name} requires a finite observed statistic (got ${value})`,
        );
      nullStatistics[r][k] = value;
    }
    report(k + 1);
  }
  const observed = Float64Array.from(nullStatistics, (v) => v[0]);
  const p = new Float64Array(regions.length);
  for (let r = 0; r < regions.length; r++) {
    const threshold = extremeThreshold(observed[r]);
    let count = 0;
    for (let k = 0; k < total; k++) if (Math.abs(nullStatistics[r][k]) >= threshold) count++;
    p[r] = count / total;
  }
  return { observed, p, nullStatistics, exact: walk.exact, rearrangements: total };
}

function labelledError(label: string | undefined, message: string): StatsError {
  return new StatsError(label === undefined ? message : `region '${label}': ${message}`);
}
