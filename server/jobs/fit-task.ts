/**
 * Worker-thread task of a fit job: runs the fit (`runFitByRegion`) and, for
 * every region with participant diagnostics, the data its plots draw
 * (`regionPlotColumns`), and serializes each region's rows and plot to text
 * here, off the request thread (column by column, region-rows.ts), as UTF-8
 * bytes handed on without a copy (region-rows.ts' `regionRowsOf` reads them
 * back). Workers compute only — no database, no files; the main thread
 * writes everything.
 *
 * Messages on `port` (the main thread's end of a MessageChannel):
 * `{ type: "started" }` first; `{ type: "progress", fraction }` at most
 * every PROGRESS_INTERVAL_MS; one `{ type: "region", … }` per region of the
 * result, in the result's order, each as soon as its region is diagnosed
 * (before any resampling, so the thread never holds the whole fit's rows and
 * the main thread stores them one by one); `{ type: "regions-done", count }`
 * last. A fit that then fails has sent some regions: the main thread
 * removes their rows.
 * The task's return value is the result without its per-participant rows.
 * A statistical precondition comes back as `{ ok: false, code, message }`
 * (the fit's reason for failing); any other error is thrown (the main
 * thread logs it). Cancel: the main thread aborts the task and the pool
 * ends the worker thread. Worker threads run at a lower priority than the
 * request thread (thread-priority.ts), lowered with their first task, except
 * in a worker process (`fullPriority`), which serves no requests.
 */
import type { MessagePort } from "node:worker_threads";
import type { FitData, FitResult, ModelSpec, RegionResult } from "../../contract/spec";
import { StatsError } from "../stats/errors";
import type { ParticipantRows } from "../stats/fit/participant-rows";
import { type RegionPlotByColumn, regionPlotColumns, rosterPositions } from "../stats/region-plot";
import { FIT_LEVEL, regionsBeforeTestByRegion, runFitByRegion } from "../stats/run-fit";
import { type MergedChunks, mergeOptions } from "./fit-chunks";
import { type RegionTextBytes, encodeRegionTexts } from "./region-rows";
import { lowerWorkerThreadPriority } from "./thread-priority";

let lowered = false;

export const PROGRESS_INTERVAL_MS = 100;

export interface FitTask {
  spec: ModelSpec;
  data: FitData;
  port: MessagePort;
  /** A split fit's chunks (fit-chunks.ts), computed by other threads or worker processes: merged instead of computed here. */
  merged?: MergedChunks;
  /**
   * Region rows (default "all"): "only", for a split least-squares
   * permutation test, computes its regions before the test
   * (`regionsBeforeTestByRegion`: the per-participant diagnostics and plots,
   * which do not depend on the test, and the regions' estimates), so the
   * rows are stored while the chunks are computed and the outcome's
   * `regionsBeforeTest` is what the merge needs of the regions (the summary
   * returned is then of no use); "skip" sends none.
   */
  rows?: "all" | "only" | "skip";
  /** With rows "only": just the regions at positions from … to − 1 of the fit's regions (a worker process's part). */
  regionRange?: [number, number];
  /** A worker process (no requests to serve): keep the thread at normal priority. */
  fullPriority?: boolean;
}

export type FitTaskMessage =
  | { type: "started" }
  | { type: "progress"; fraction: number }
  | ({ type: "region"; position: number; region: string } & RegionTextBytes)
  | { type: "regions-done"; count: number };

export type FitTaskOutcome =
  | {
      ok: true;
      summary: Omit<FitResult, "participants">;
      /** rows "only": the regions' results before the test */
      regionsBeforeTest?: RegionResult[];
    }
  | { ok: false; code: string; message: string };

export default function runFitTask(task: FitTask): FitTaskOutcome {
  if (!task.fullPriority && !lowered) {
    // Fits run behind the request thread (see thread-priority.ts); a lowered thread cannot raise itself again.
    lowered = true;
    lowerWorkerThreadPriority();
  }
  const { port } = task;
  const post = (message: FitTaskMessage) => port.postMessage(message);
  post({ type: "started" });
  let last = 0;
  try {
    const onProgress = (fraction: number) => {
      const now = Date.now();
      if (now - last < PROGRESS_INTERVAL_MS && fraction < 1) return;
      last = now;
      post({ type: "progress", fraction });
    };
    if (task.rows === "only") {
      // Diagnostics and plots do not read the test: the region rows before the test are those of
      // the fit. Each region's rows are sent as soon as it is diagnosed and then let go.
      const first = task.regionRange?.[0] ?? 0;
      const regions = regionsBeforeTestByRegion(
        task.spec,
        task.data,
        { onProgress },
        task.regionRange,
        (position, region, rows) => postRegion(task, first + position, region, rows),
      );
      post({ type: "regions-done", count: regions.length });
      return { ok: true, summary: { regions, notes: [] }, regionsBeforeTest: regions };
    }
    // Each region's rows are sent as soon as they are computed and then let go: at 20,000
    // participants × 400 regions the whole fit's rows would crowd the thread's heap.
    let sent = 0;
    const summary = runFitByRegion(
      task.spec,
      task.data,
      { ...(task.merged ? mergeOptions(task.merged) : {}), onProgress },
      (position, region, rows) => {
        if (task.rows === "skip") return;
        postRegion(task, position, region, rows);
        sent++;
      },
    );
    post({ type: "regions-done", count: sent });
    return { ok: true, summary };
  } catch (e) {
    if (e instanceof StatsError) return { ok: false, code: e.code, message: e.message };
    throw e;
  }
  // The port is left open: messages still queued on it must reach the main thread, which closes its end.
}

/** Sends one region's message: its participants' rows and plot data, as JSON text in one transferred buffer. */
function postRegion(task: FitTask, position: number, region: string, rows: ParticipantRows): void {
  let plot: RegionPlotByColumn | { error: string } | null = null;
  if (rows.n > 0) {
    try {
      // Diagnosed rows know their roster positions; rows made as objects know their ids only.
      const positions = rows.byColumn
        ? rows.positions
        : rosterPositions(task.data.participants, rows.ids);
      plot = regionPlotColumns(task.spec, task.data, region, positions, { level: FIT_LEVEL });
    } catch (e) {
      if (!(e instanceof StatsError)) throw e;
      plot = { error: e.message };
    }
  }
  const texts = encodeRegionTexts(rows, plot);
  task.port.postMessage({ type: "region", position, region, ...texts } satisfies FitTaskMessage, [
    texts.bytes.buffer as ArrayBuffer,
  ]);
}
