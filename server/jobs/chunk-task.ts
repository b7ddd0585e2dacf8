/**
 * Worker-thread task for a split fit's chunks (fit-chunks.ts), in the
 * embedded path's chunk pool (fit-jobs.ts) and in worker processes
 * (server/worker/fit-worker.ts):
 *
 * - `{ type: "plan", spec, data }`: the fit's chunks (`fitChunks`), or null
 *   when it is not split — the preparation and estimates a permutation
 *   test's chunks need, off the request thread.
 * - `{ type: "permutation", task }`: one chunk of a least-squares
 *   permutation test (permutation-task.ts).
 * - `{ type: "curve", spec, data, block }`: one null block of a
 *   specification curve's joint test (`curveNullBlock`).
 * - `{ type: "prediction", plan, input, from, to, control }`: outer splits
 *   from … to − 1 of a planned prediction (`predictionSplit`); slot 0 of
 *   `control` set to 1 cancels.
 * - `{ type: "merge", before, chunks }`: the merge of a split permutation
 *   test (`finishSplitFit`): the fit's result without its participants'
 *   rows, from the fit before its test and every chunk (fit-chunks.ts
 *   `mergeTask`). Needs no data: O(regions × rearrangements).
 *
 * A statistical precondition comes back as `{ ok: false, code, message }`
 * (the fit's reason for failing: it would fail the same way on any try);
 * any other error is thrown. Threads compute only — no database, no files.
 * In a web server the thread lowers its priority below the request
 * thread's with its first task (thread-priority.ts); a worker process,
 * which serves no requests, sends `fullPriority` and keeps its threads at
 * normal priority (a lowered thread cannot raise itself again).
 */
import type { FitData, ModelSpec } from "../../contract/spec";
import { StatsError } from "../stats/errors";
import { curveNullBlock } from "../stats/fit/specification-curve";
import type { RearrangementChunk } from "../stats/permutation";
import { type FitBeforeTest, type FitSummary, finishSplitFit } from "../stats/run-fit";
import {
  type PredictionInput,
  type PredictionPlan,
  predictionSplit,
} from "../stats/prediction/cross-validate";
import { type ChunkResult, type FitChunks, fitChunks } from "./fit-chunks";
import runPermutationTask, { type PermutationTask } from "./permutation-task";
import { lowerWorkerThreadPriority } from "./thread-priority";

let lowered = false;

export type ChunkTask =
  | { type: "permutation"; task: PermutationTask }
  | { type: "curve"; spec: ModelSpec; data: FitData; block: number }
  | {
      type: "prediction";
      plan: PredictionPlan;
      input: PredictionInput;
      from: number;
      to: number;
      control: SharedArrayBuffer;
    }
  | { type: "merge"; before: FitBeforeTest; chunks: RearrangementChunk[] };

export type ChunkTaskInput = (ChunkTask | { type: "plan"; spec: ModelSpec; data: FitData }) & {
  /** A worker process: keep the thread at normal priority. */
  fullPriority?: boolean;
};

export type ChunkTaskOutcome<T> =
  | { ok: true; value: T }
  | { ok: false; code: string; message: string };

/** Computes one chunk (or plans a fit); see the module comment. */
export default function runChunkTask(
  input: ChunkTaskInput,
): ChunkTaskOutcome<ChunkResult | FitChunks | FitSummary | null> {
  if (!input.fullPriority && !lowered) {
    // Chunks run behind the request thread (see thread-priority.ts).
    lowered = true;
    lowerWorkerThreadPriority();
  }
  try {
    if (input.type === "plan") return { ok: true, value: fitChunks(input.spec, input.data) };
    if (input.type === "merge")
      return { ok: true, value: finishSplitFit(input.before, input.chunks) };
    if (input.type === "permutation")
      return { ok: true, value: { kind: "permutation", counts: runPermutationTask(input.task) } };
    if (input.type === "prediction") {
      const control = new Int32Array(input.control);
      const shouldCancel = () => Atomics.load(control, 0) === 1;
      const partials = [];
      for (let s = input.from; s < input.to; s++)
        partials.push(predictionSplit(input.plan, input.input, s, { shouldCancel }));
      return { ok: true, value: { kind: "prediction", partials } };
    }
    return {
      ok: true,
      value: { kind: "curve", nulls: curveNullBlock(input.spec, input.data, input.block) },
    };
  } catch (e) {
    if (e instanceof StatsError) return { ok: false, code: e.code, message: e.message };
    throw e;
  }
}
