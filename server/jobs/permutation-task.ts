/**
 * Worker-thread task for the parallel permutation driver: runs every
 * rearrangement of a draw over one slice of the regions (blocks of regions
 * on the same participants). Workers compute only — no database, no
 * files; the main thread combines the slices.
 *
 * The generator is created from the seed inside the worker, so every worker
 * walks the same rearrangements as the single-thread
 * `sharedLinearPermutationTest` with `createRng(seed)`; with `block` set the
 * task is one chunk of a blocked test (rearrangement block `block`, its
 * own stream, `countRearrangementChunk`). Cancellation and
 * progress go through a shared Int32Array: slot 0 is the cancel flag set by
 * the main thread, slot 1 + w is worker w's progress in millionths.
 */
import {
  countExtremeRearrangements,
  countRearrangementChunk,
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
  /** "blocks-v1": the rearrangement block this task computes; absent: all rearrangements from one stream */
  block?: number;
  maxT: boolean;
  keepNull: boolean;
  /** shared control words: [cancel, progress of worker 0, progress of worker 1, …] */
  control: SharedArrayBuffer;
  worker: number;
}

export default function runPermutationTask(task: PermutationTask): RearrangementCounts {
  const control = new Int32Array(task.control);
  const common = {
    draw: task.draw,
    blocks: task.blocks,
    maxT: task.maxT,
    keepNull: task.keepNull,
    onProgress: (fraction: number) =>
      Atomics.store(control, 1 + task.worker, Math.round(fraction * 1e6)),
    shouldCancel: () => Atomics.load(control, 0) === 1,
  };
  if (task.block !== undefined)
    return countRearrangementChunk({ ...common, seed: task.seed, block: task.block });
  return countExtremeRearrangements({ ...common, rng: createRng(task.seed) });
}
