/**
 * Parallel driver for the linear permutation test on worker threads
 * (piscina). The result equals `linearPermutationTest` (or
 * `sharedLinearPermutationTest` for regions that differ in participants)
 * with `createRng(seed)` and the same `streams` exactly (same numbers, bit
 * for bit), whatever the number of threads.
 *
 * - One stream (no `streams`, recipes written before blocks): the regions
 *   are split into contiguous slices, one per thread; every thread
 *   regenerates the same rearrangement sequence from the seed, so
 *   per-region counts are concatenated and the max-T distribution is the
 *   element-wise maximum of the slices' per-rearrangement maxima.
 * - "blocks-v1": the test's chunks, region chunks × rearrangement blocks
 *   (`regionChunks`, `countRearrangementChunk`), queued on the pool in any
 *   order and merged by place (`mergeRearrangementChunks`).
 *
 * Cost: the single-thread cost divided by the number of threads, plus the
 * set-up O(n·p² + n·p·R) on the main thread and copying R·n residuals to the
 * workers (and R·M floats back with keepNull).
 */
import { workerPool } from "./worker-pool";
import { StatsError } from "../stats/errors";
import {
  assembleLinearResult,
  mergeRearrangementChunks,
  type LinearPermutationInput,
  type LinearPermutationResult,
  prepareSharedLinearPermutation,
  type SharedLinearPermutationInput,
  type SharedLinearPermutationSetup,
} from "../stats/permutation";
import {
  drawOfPlan,
  prepareLinearPermutation,
  type RearrangementCounts,
  rearrangementBlocks,
  rearrangementsOf,
  type RegionBlock,
  regionChunks,
  sliceBlocks,
} from "../stats/permutation-kernel";
import type { PermutationTask } from "./permutation-task";

export type ParallelLinearPermutationInput = Omit<LinearPermutationInput, "rng"> & {
  /** seed of the generator each worker creates (createRng(seed)) */
  seed: number;
};

export type ParallelSharedLinearPermutationInput = Omit<SharedLinearPermutationInput, "rng"> & {
  /** seed of the generator each worker creates (createRng(seed)) */
  seed: number;
};

export interface PermutationPool {
  readonly threads: number;
  /** Same contract as `linearPermutationTest`, computed on the pool's worker threads. */
  linearPermutationTest(input: ParallelLinearPermutationInput): Promise<LinearPermutationResult>;
  /** Same contract as `sharedLinearPermutationTest`, computed on the pool's worker threads. */
  sharedLinearPermutationTest(
    input: ParallelSharedLinearPermutationInput,
  ): Promise<LinearPermutationResult>;
  /** Stops the worker threads. */
  close(): Promise<void>;
}

const PROGRESS_INTERVAL_MS = 100;

/**
 * Starts a pool of worker threads for permutation jobs (default: two). The
 * task file is TypeScript, loaded through tsx in each worker. Close the pool
 * when done; an open pool keeps the process alive.
 */
export function createPermutationPool(options: { threads?: number } = {}): PermutationPool {
  const threads = options.threads ?? 2;
  if (!(Number.isInteger(threads) && threads >= 1)) {
    throw new StatsError(
      `createPermutationPool requires a positive whole number of threads (got ${threads})`,
    );
  }
  const pool = workerPool("permutation-task.ts", { minThreads: threads, maxThreads: threads });

  async function run(
    setup: SharedLinearPermutationSetup,
    input: {
      seed: number;
      streams?: "blocks-v1";
      maxT?: boolean;
      keepNull?: boolean;
      onProgress?: (fraction: number) => void;
      shouldCancel?: () => boolean;
    },
  ): Promise<LinearPermutationResult> {
    const { draw, observed } = setup;
    const regions = observed.length;
    const blocked = input.streams === "blocks-v1";
    const rearrangementBlockCount = blocked
      ? rearrangementBlocks(rearrangementsOf(draw)).length
      : 0;
    const slices = blocked ? regionChunks(regions) : splitRegions(regions, threads);
    const jobs = blocked
      ? slices.flatMap(([from], slice) =>
          Array.from({ length: rearrangementBlockCount }, (_, block) => ({ from, slice, block })),
        )
      : slices.map(([from], slice) => ({ from, slice, block: undefined }));
    const control = new Int32Array(new SharedArrayBuffer(4 * (1 + jobs.length)));
    const sliced = slices.map(([from, to]) => sliceBlocks(setup.blocks, from, to));
    const tasks = jobs.map(({ slice, block }, worker) => {
      const task: PermutationTask = {
        draw,
        blocks: sliced[slice],
        seed: input.seed,
        block,
        maxT: input.maxT === true,
        keepNull: input.keepNull === true,
        control: control.buffer as SharedArrayBuffer,
        worker,
      };
      return pool.run(task) as Promise<RearrangementCounts>;
    });

    const poll = () => {
      if (input.shouldCancel?.()) Atomics.store(control, 0, 1);
      if (input.onProgress) {
        let sum = 0;
        for (let w = 0; w < jobs.length; w++) sum += Atomics.load(control, 1 + w);
        input.onProgress(Math.min(1, sum / (1e6 * jobs.length)));
      }
    };
    poll();
    const timer = setInterval(poll, PROGRESS_INTERVAL_MS);
    let parts: RearrangementCounts[];
    try {
      parts = await Promise.all(tasks);
    } catch (error) {
      if (Atomics.load(control, 0) === 1) {
        await Promise.allSettled(tasks);
        throw new StatsError("linearPermutationTest was cancelled", "cancelled");
      }
      throw error;
    } finally {
      clearInterval(timer);
    }

    if (blocked) {
      const merged = mergeRearrangementChunks(
        observed,
        draw,
        jobs.map(({ from, block }, i) => ({
          regionFrom: from,
          block: block as number,
          counts: parts[i],
        })),
        { maxT: input.maxT === true, keepNull: input.keepNull === true },
      );
      input.onProgress?.(1);
      return merged;
    }
    const total = parts[0].rearrangements;
    const counts = new Float64Array(regions);
    const nulls: Float32Array[] | null = input.keepNull ? [] : null;
    let maxAbs: Float64Array | null = input.maxT ? new Float64Array(total) : null;
    slices.forEach(([from], w) => {
      const part = parts[w];
      counts.set(part.counts, from);
      if (nulls && part.nulls) nulls.push(...part.nulls);
      if (maxAbs && part.maxAbs) {
        const m = part.maxAbs;
        for (let k = 0; k < total; k++) if (m[k] > maxAbs[k]) maxAbs[k] = m[k];
      }
    });
    if (input.maxT !== true) maxAbs = null;
    input.onProgress?.(1);
    return assembleLinearResult(observed, counts, maxAbs, nulls, parts[0].exact, total);
  }

  async function linearPermutationTest(
    input: ParallelLinearPermutationInput,
  ): Promise<LinearPermutationResult> {
    const setup = prepareLinearPermutation(input);
    const block: RegionBlock = {
      plan: setup.plan,
      members: null,
      residuals: setup.residuals,
      residualSquares: setup.residualSquares,
      observed: setup.observed,
    };
    return run({ draw: drawOfPlan(setup.plan), blocks: [block], observed: setup.observed }, input);
  }

  async function sharedLinearPermutationTest(
    input: ParallelSharedLinearPermutationInput,
  ): Promise<LinearPermutationResult> {
    return run(prepareSharedLinearPermutation(input), input);
  }

  return {
    threads,
    linearPermutationTest,
    sharedLinearPermutationTest,
    close: () => pool.destroy(),
  };
}

/**
 * Contiguous region slices, as equal as possible and of even size where
 * possible (the kernel handles regions in pairs). Cost O(threads).
 */
export function splitRegions(regions: number, threads: number): [number, number][] {
  const count = Math.max(1, Math.min(threads, Math.ceil(regions / 2)));
  const pairs = Math.ceil(regions / 2);
  const blocks: [number, number][] = [];
  let start = 0;
  for (let b = 0; b < count; b++) {
    const size = Math.min(
      regions - start,
      2 * (Math.floor(pairs / count) + (b < pairs % count ? 1 : 0)),
    );
    blocks.push([start, start + size]);
    start += size;
  }
  return blocks;
}
