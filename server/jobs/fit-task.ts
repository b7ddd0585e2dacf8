/**
 * Worker-thread task of a fit job: runs `runFit` and, for every region with
 * participant diagnostics, the data its plots draw (`regionPlot`). Workers
 * compute only — no database, no files; the main thread writes everything.
 *
 * Messages on `port` (the main thread's end of a MessageChannel):
 * `{ type: "started" }` first, then `{ type: "progress", fraction }` at most
 * every PROGRESS_INTERVAL_MS (and at the end). A statistical precondition
 * comes back as `{ ok: false, code, message }` (the fit's reason for
 * failing); any other error is thrown (the main thread logs it). Cancel:
 * the main thread aborts the task and the pool ends the worker thread.
 */
import type { MessagePort } from "node:worker_threads";
import type { FitData, FitResult, ModelSpec } from "../model/spec";
import { StatsError } from "../stats/errors";
import { type RegionPlot, regionPlot } from "../stats/region-plot";
import { FIT_LEVEL, runFit } from "../stats/run-fit";

export const PROGRESS_INTERVAL_MS = 100;

export interface FitTask {
  spec: ModelSpec;
  data: FitData;
  port: MessagePort;
}

export type FitTaskMessage = { type: "started" } | { type: "progress"; fraction: number };

export type FitTaskOutcome =
  | { ok: true; result: FitResult; plots: Record<string, RegionPlot | { error: string }> }
  | { ok: false; code: string; message: string };

export default function runFitTask(task: FitTask): FitTaskOutcome {
  const { port } = task;
  const post = (message: FitTaskMessage) => port.postMessage(message);
  post({ type: "started" });
  let last = 0;
  try {
    const result = runFit(task.spec, task.data, {
      onProgress: (fraction) => {
        const now = Date.now();
        if (now - last < PROGRESS_INTERVAL_MS && fraction < 1) return;
        last = now;
        post({ type: "progress", fraction });
      },
    });
    const plots: Record<string, RegionPlot | { error: string }> = {};
    const included = new Map<string, string[]>();
    for (const d of result.participants) {
      const list = included.get(d.region) ?? [];
      list.push(d.participant);
      included.set(d.region, list);
    }
    for (const [region, ids] of included) {
      try {
        plots[region] = regionPlot(task.spec, task.data, region, ids, { level: FIT_LEVEL });
      } catch (e) {
        if (!(e instanceof StatsError)) throw e;
        plots[region] = { error: e.message };
      }
    }
    post({ type: "progress", fraction: 1 });
    return { ok: true, result, plots };
  } catch (e) {
    if (e instanceof StatsError) return { ok: false, code: e.code, message: e.message };
    throw e;
  } finally {
    port.close();
  }
}
