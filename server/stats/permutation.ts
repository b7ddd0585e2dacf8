/**
 * Permutation inference: the linear-model test with a fast kernel
 * (Freedman–Lane or sign flipping, optional max-T over regions). The generic
 * test for any statistic without a kernel (Welch t, rank or robust
 * correlations…) is in generic-permutation.ts.
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
import { extremeThreshold, memberPositions } from "./rearrangements";
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

/** Checks that every one of n participants is listed in some member list (shared-draw tests, linear and generic). Cost O(n + Σ m). */
export function checkCovered(
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
