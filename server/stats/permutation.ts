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
  countRearrangementChunk,
  drawOfPlan,
  prepareLinearPermutation,
  type RearrangementCounts,
  type RearrangementDraw,
  rearrangementBlocks,
  rearrangementsOf,
  type RegionBlock,
  regionChunks,
  sliceBlocks,
} from "./permutation-kernel";
import { extremeThreshold, memberPositions } from "./rearrangements";
import type { Rng } from "./rng";

export { TIE_TOLERANCE } from "./rearrangements";

/** How a permutation test rearranges and what it keeps (shared by the one-block and the shared-draw tests). */
export interface PermutationRunOptions {
  scheme: "sign-flip" | "freedman-lane";
  resamples: number;
  rng: Rng;
  /**
   * How random rearrangements are drawn. Absent: one stream, `rng`, for all
   * of them (recipes written before blocks). "blocks-v1": in chunks of
   * region chunks (`regionChunks`) × rearrangement blocks
   * (`rearrangementBlocks`), block b's draws from
   * `createBlockRng(rng.seed, b)` (so `rng` must be fresh from
   * `createRng(seed)`); any number of threads or processes computes the
   * chunks to the same numbers. Exact enumerations list the same
   * rearrangements either way.
   */
  streams?: "blocks-v1";
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
  const block: RegionBlock = {
    plan: setup.plan,
    members: null,
    residuals: setup.residuals,
    residualSquares: setup.residualSquares,
    observed: setup.observed,
  };
  return runSetup(
    { draw: drawOfPlan(setup.plan), blocks: [block], observed: setup.observed },
    input,
  );
}

/** Runs a prepared test in one stream or in blocks (`PermutationRunOptions.streams`), on this thread. */
function runSetup(
  setup: SharedLinearPermutationSetup,
  input: PermutationRunOptions,
): LinearPermutationResult {
  const maxT = input.maxT === true;
  const keepNull = input.keepNull === true;
  if (input.streams === "blocks-v1") {
    const blocks = rearrangementBlocks(rearrangementsOf(setup.draw)).length;
    const regionParts = regionChunks(setup.observed.length);
    const all = blocks * regionParts.length;
    const chunks: RearrangementChunk[] = [];
    for (const [from, to] of regionParts) {
      const sliced = regionParts.length === 1 ? setup.blocks : sliceBlocks(setup.blocks, from, to);
      for (let b = 0; b < blocks; b++) {
        const onProgress = input.onProgress;
        const done = chunks.length;
        const counts = countRearrangementChunk({
          draw: setup.draw,
          blocks: sliced,
          seed: input.rng.seed,
          block: b,
          maxT,
          keepNull,
          onProgress: onProgress && ((f) => onProgress((done + f) / all)),
          shouldCancel: input.shouldCancel,
        });
        chunks.push({ regionFrom: from, block: b, counts });
      }
    }
    return mergeRearrangementChunks(setup.observed, setup.draw, chunks, { maxT, keepNull });
  }
  const runs = countExtremeRearrangements({
    draw: setup.draw,
    blocks: setup.blocks,
    rng: input.rng,
    maxT,
    keepNull,
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

/** One chunk's counts: regions regionFrom… (as many as its counts) × rearrangement block `block`. */
export interface RearrangementChunk {
  regionFrom: number;
  block: number;
  counts: RearrangementCounts;
}

/**
 * Merges the chunks of a blocked test (regions × rearrangement blocks of
 * `rearrangementBlocks`) into its result: per-region counts add over
 * blocks, each rearrangement's maximum |t*| is the largest of its region
 * slices' maxima, and kept null statistics go to their rearrangement's
 * place. Every chunk lands at its own place, so the result does not depend
 * on the order of `chunks`. Cost O(regions·blocks + total rearrangements,
 * + regions·total with keepNull). Throws StatsError when a chunk is outside
 * the test, a region and block are covered twice or not at all.
 */
export function mergeRearrangementChunks(
  observed: Float64Array,
  draw: RearrangementDraw,
  chunks: readonly RearrangementChunk[],
  options: { maxT: boolean; keepNull: boolean },
): LinearPermutationResult {
  const name = "linearPermutationTest";
  const regions = observed.length;
  const total = rearrangementsOf(draw);
  const ranges = rearrangementBlocks(total);
  const covered = new Uint8Array(regions * ranges.length);
  const counts = new Float64Array(regions);
  const maxAbs = options.maxT ? new Float64Array(total) : null;
  const nulls = options.keepNull
    ? Array.from({ length: regions }, () => new Float32Array(total))
    : null;
  let exact = true;
  for (const chunk of chunks) {
    const range = ranges[chunk.block];
    const part = chunk.counts;
    const width = part.counts.length;
    if (
      !range ||
      part.rearrangements !== range.count ||
      !(chunk.regionFrom >= 0 && chunk.regionFrom + width <= regions)
    ) {
      throw new StatsError(
        `${name} received a chunk outside the test (regions ${chunk.regionFrom}+${width}, block ${chunk.block})`,
      );
    }
    if ((options.maxT && !part.maxAbs) || (options.keepNull && !part.nulls)) {
      throw new StatsError(`${name} received a chunk without its maxima or null statistics`);
    }
    exact = exact && part.exact;
    for (let r = 0; r < width; r++) {
      const at = (chunk.regionFrom + r) * ranges.length + chunk.block;
      if (covered[at] === 1)
        throw new StatsError(
          `${name} received region ${chunk.regionFrom + r} of block ${chunk.block} twice`,
        );
      covered[at] = 1;
      counts[chunk.regionFrom + r] += part.counts[r];
      if (nulls && part.nulls) nulls[chunk.regionFrom + r].set(part.nulls[r], range.first);
    }
    if (maxAbs && part.maxAbs) {
      const m = part.maxAbs;
      for (let k = 0; k < range.count; k++)
        if (m[k] > maxAbs[range.first + k]) maxAbs[range.first + k] = m[k];
    }
  }
  const missing = covered.indexOf(0);
  if (missing >= 0) {
    throw new StatsError(
      `${name} is missing region ${Math.floor(missing / ranges.length)} of block ${missing % ranges.length}`,
    );
  }
  return assembleLinearResult(observed, counts, maxAbs, nulls, exact, total);
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
  return runSetup(prepareSharedLinearPermutation(input), input);
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

/**
 * The result of `sharedLinearPermutationTest` with "blocks-v1" streams from
 * its chunks computed elsewhere (worker threads or processes): the input is
 * prepared again here (its observed statistics and draw; cost as
 * `prepareSharedLinearPermutation`) and the chunks merged by
 * `mergeRearrangementChunks`. Throws StatsError as those do, and when the
 * input does not ask for "blocks-v1" streams.
 */
export function mergedLinearPermutationTest(
  input: SharedLinearPermutationInput,
  chunks: readonly RearrangementChunk[],
): LinearPermutationResult {
  if (input.streams !== "blocks-v1")
    throw new StatsError("linearPermutationTest merges chunks of blocked streams only");
  const setup = prepareSharedLinearPermutation(input);
  return mergeRearrangementChunks(setup.observed, setup.draw, chunks, {
    maxT: input.maxT === true,
    keepNull: input.keepNull === true,
  });
}
