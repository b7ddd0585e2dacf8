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
 *
 * Regions that differ in participants (empty cells) share one draw over all
 * their participants (`sharedLinearPermutationTest`,
 * `sharedGenericPermutationTest`; the rule is in rearrangements.ts), and
 * exact versus Monte Carlo is decided on all of them.
 */
import { StatsError } from "./errors";
import {
  countExtremeRearrangements,
  drawOfPlan,
  prepareLinearPermutation,
  type RearrangementDraw,
  type RegionBlock,
} from "./permutation-kernel";
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

export { TIE_TOLERANCE } from "./rearrangements";

/** How a permutation test rearranges and what it keeps (shared by the one-block and the shared-draw tests). */
export interface PermutationRunOptions {
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

export interface LinearPermutationInput extends PermutationRunOptions {
  /** row-major n × p design matrix */
  design: Float64Array;
  n: number;
  p: number;
  /** column index whose coefficient's t is the statistic */
  tested: number;
  /** regions, each of length n, complete cases */
  y: readonly Float64Array[];
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
    draw: drawOfPlan(setup.plan),
    blocks: [
      {
        plan: setup.plan,
        members: null,
        residuals: setup.residuals,
        residualSquares: setup.residualSquares,
        observed: setup.observed,
      },
    ],
    rng: input.rng,
    maxT: input.maxT === true,
    keepNull: input.keepNull === true,
    onProgress: input.onProgress,
    shouldCancel: input.shouldCancel,
  });
  return assembleLinearResult(
    setup.observed,
    runs.counts,
    runs.maxAbs,
    runs.nulls,
    runs.exact,
    runs.rearrangements,
  );
}

/** Regions on one set of participants, for `sharedLinearPermutationTest`. */
export interface LinearPermutationBlockInput {
  /** row-major n × p design matrix of these participants */
  design: Float64Array;
  n: number;
  p: number;
  tested: number;
  /** regions, each of length n */
  y: readonly Float64Array[];
  /** positions of the n participants among all participants of the test, increasing */
  members: Int32Array;
  /** names the block in error messages ("region 'x': …") */
  label?: string;
}

export interface SharedLinearPermutationInput extends PermutationRunOptions {
  /** number of participants N over all blocks; each belongs to at least one block */
  participants: number;
  blocks: readonly LinearPermutationBlockInput[];
}

export interface SharedLinearPermutationSetup {
  draw: RearrangementDraw;
  blocks: RegionBlock[];
  /** observed t of every region, blocks in order */
  observed: Float64Array;
}

/** Runs `f`, naming `label` as the region in a StatsError's message. */
function labelled<T>(label: string | undefined, f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (
      label !== undefined &&
      e instanceof StatsError &&
      e.code !== "cancelled" &&
      !e.message.startsWith("region '")
    ) {
      throw new StatsError(`region '${label}': ${e.message}`, e.code);
    }
    throw e;
  }
}

/** Checks that every one of n participants is listed in some member list. Cost O(n + Σ m). */
function checkCovered(
  name: string,
  n: number,
  lists: readonly { members: Int32Array; label?: string }[],
): void {
  const covered = new Uint8Array(n);
  for (const list of lists) {
    labelled(list.label, () => memberPositions(n, list.members));
    for (const a of list.members) covered[a] = 1;
  }
  const missing = covered.indexOf(0);
  if (missing >= 0)
    throw new StatsError(
      `${name} requires every participant to belong to a region (participant ${missing} is in none)`,
    );
}

/**
 * Prepares blocks of regions that may differ in participants for one shared
 * draw. A single block with all N participants is prepared exactly as
 * `linearPermutationTest` prepares it (two-group label assignments
 * included); otherwise the draw is the sign vectors (sign flipping) or the
 * orders (Freedman–Lane) of all N participants. Cost: the blocks' set-up,
 * O(Σ n·p² + n·p·R). Throws StatsError for malformed blocks, naming the
 * block's label.
 */
export function prepareSharedLinearPermutation(
  input: Omit<SharedLinearPermutationInput, "rng" | "onProgress" | "shouldCancel">,
): SharedLinearPermutationSetup {
  const name = "linearPermutationTest";
  const N = input.participants;
  if (!(Number.isInteger(N) && N >= 1))
    throw new StatsError(`${name} requires at least one participant (got ${N})`);
  if (input.blocks.length === 0) throw new StatsError(`${name} requires at least one region`);
  for (const b of input.blocks) {
    if (b.members.length !== b.n) {
      throw new StatsError(
        `${name} requires members to list the block's n = ${b.n} participants (got ${b.members.length})`,
      );
    }
  }
  checkCovered(name, N, input.blocks);
  const single = input.blocks.length === 1;
  const blocks: RegionBlock[] = input.blocks.map((b) =>
    labelled(b.label, () => {
      const setup = prepareLinearPermutation({
        ...b,
        scheme: input.scheme,
        resamples: input.resamples,
        shared: !single,
      });
      return {
        plan: setup.plan,
        members: b.n === N ? null : b.members,
        residuals: setup.residuals,
        residualSquares: setup.residualSquares,
        observed: setup.observed,
      };
    }),
  );
  const draw: RearrangementDraw = single
    ? drawOfPlan(blocks[0].plan)
    : {
        kind: input.scheme === "sign-flip" ? "signs" : "permutations",
        n: N,
        firstGroupSize: 0,
        resamples: input.resamples,
      };
  const observed = new Float64Array(blocks.reduce((sum, b) => sum + b.observed.length, 0));
  let offset = 0;
  for (const b of blocks) {
    observed.set(b.observed, offset);
    offset += b.observed.length;
  }
  return { draw, blocks, observed };
}

/**
 * The linear permutation test of `linearPermutationTest` for regions that
 * differ in participants: each block of regions (one set of participants)
 * has its own design, and all blocks share one draw over the N
 * participants — one sign vector, or one order σ of which each region keeps
 * its own participants in σ's order (rearrangements.ts) — so the max-T
 * p-values control the family-wise error over all regions (Westfall &
 * Young 1993, single-step max-T; Winkler et al. 2014, NeuroImage
 * 92:381–397; Freedman & Lane 1983). Exact enumeration when 2^N (or N!) is
 * at most `resamples`, otherwise Monte Carlo, as above.
 *
 * Results list the regions block by block. A single block with every
 * participant gives exactly `linearPermutationTest`. Cost per
 * rearrangement: see `countExtremeRearrangements`. Throws StatsError as
 * `prepareSharedLinearPermutation` and with code "cancelled".
 */
export function sharedLinearPermutationTest(
  input: SharedLinearPermutationInput,
): LinearPermutationResult {
  const setup = prepareSharedLinearPermutation(input);
  const runs = countExtremeRearrangements({
    draw: setup.draw,
    blocks: setup.blocks,
    rng: input.rng,
    maxT: input.maxT === true,
    keepNull: input.keepNull === true,
    onProgress: input.onProgress,
    shouldCancel: input.shouldCancel,
  });
  return assembleLinearResult(
    setup.observed,
    runs.counts,
    runs.maxAbs,
    runs.nulls,
    runs.exact,
    runs.rearrangements,
  );
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
      pMaxT[r] =
        (rearrangements - lowerBound(sorted, extremeThreshold(observed[r]))) / rearrangements;
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
