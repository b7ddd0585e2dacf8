/**
 * Worker-thread task for the parallel permutation driver: runs every
 * rearrangement of a plan over one block of regions. Workers compute only —
 * no database, no files; the main thread combines the blocks.
 *
 * The generator is created from the seed inside the worker, so every worker
 * walks the same rearrangements as the single-thread `linearPermutationTest`
 * with `createRng(seed)`. Cancellation and progress go through a shared
 * Int32Array: slot 0 is the cancel flag set by the main thread, slot 1 + w is
 * worker w's progress in millionths.
 */
import { countExtremeRearrangements, type LinearPermutationPlan, type RearrangementCounts } from "../stats/permutation-kernel";
import { createRng } from "../stats/rng";

export interface PermutationTask {
  plan: LinearPermutationPlan;
  /** this block's reduced-model residuals, regions × n */
  residuals: Float64Array;
  residualSquares: Float64Array;
  observed: Float64Array;
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
    plan: task.plan,
    residuals: task.residuals,
    residualSquares: task.residualSquares,
    observed: task.observed,
    rng: createRng(task.seed),
    maxT: task.maxT,
    keepNull: task.keepNull,
    onProgress: (fraction) => Atomics.store(control, 1 + task.worker, Math.round(fraction * 1e6)),
    shouldCancel: () => Atomics.load(control, 0) === 1,
  });
}
