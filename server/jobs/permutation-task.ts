/**
 * Worker-thread task for the parallel permutation driver: runs every
 * rearrangement of a draw over one slice of the regions (blocks of regions
 * on the same participants). Workers compute only — no database, no
 * files; the main thread combines the slices.
 *
 * The generator is created from the seed inside the worker, so every worker
 * walks the same rearrangements as the single-thread
 * `sharedLinearPermutationTest` with `createRng(seed)`. Cancellation and
 * progress go through a shared Int32Array: slot 0 is the cancel flag set by
 * the main thread, slot 1 + w is worker w's progress in millionths.
 */
import {
  countExtremeRearrangements,
  type RearrangementCounts,
  type RearrangementDraw,
  type RegionBlock,
} from "../stats/permutation-kernel";
import { createRng } from "../stats/rng";

export interface PermutationTask {
  draw: RearrangementDraw;
  /** this worker's regions, block by block (a block may be a slice of a larger one) */
  blocks: RegionBlock[];
  seed: number;
  maxT: boolean;
  keepNull: boolean;
  /** shared control words: [cancel, progress of worker 0, progress of worker 1, …] */
  control: SharedArrayBuffer;
  worker: number;
}

export default function runPermutationTask(task: PermutationTask): RearrangementCounts {
  const control = new Int32Array(task.control);
  return countExtremeRearrangements({
    draw: task.draw,
    blocks: task.blocks,
    rng: createRng(task.seed),
    maxT: task.maxT,
    keepNull: task.keepNull,
    onProgress: (fraction) => Atomics.store(control, 1 + task.worker, Math.round(fraction * 1e6)),
    shouldCancel: () => Atomics.load(control, 0) === 1,
  });
}
