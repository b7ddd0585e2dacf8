/**
 * Fits as background jobs.
 *
 * A pool of worker threads (piscina) sized to the machine —
 * `os.availableParallelism() − 1`, at least 1, so one core stays free for
 * requests — runs `runFit` off the request thread (server/jobs/fit-task.ts).
 * A split fit (fit-chunks.ts: a blocked least-squares permutation test or
 * a specification curve's joint test) first has its chunks computed on a
 * second pool of `os.availableParallelism()` threads (chunk-task.ts, every
 * core, all at the lower thread priority, so the request thread stays
 * first in line), which also plans it; its fit thread then merges them
 * (`FitTask.merged`) — the numbers of the fit computed in one piece. A
 * permutation test's region rows and estimates do not depend on the test:
 * the fit thread computes the regions before the test (`regionsBeforeTestByRegion`)
 * and stores their rows while the chunks run, and a chunk thread then merges
 * the chunks into them and the plan's split test (`mergeTask`: counts,
 * p-values, the correction over regions).
 * Progress: the chunk share done is the first 90 %.
 * The main thread alone reads and writes the database (one process owns
 * it), always through the `FitJobStore` it is given (services/fit-store.ts
 * implements it; no job imports a service): it builds the fit's data from
 * the versions its recipe names (through the `FitDataSource` it is given),
 * hands data and model to a worker, receives `started`, throttled
 * `progress` and then one message per region (its diagnostics and plot
 * data as JSON text, in one transferred buffer of UTF-8 bytes:
 * `regionRowsOf`) through a MessagePort, and records status, progress
 * (at most every `progressWriteMs`), time left, each region's rows as they
 * arrive, and finally the result.
 *
 * Life cycle: queued → running → done | failed | cancelled. A statistical
 * precondition (StatsError, or an intake problem building the data) fails
 * the fit with its message; any other error fails it with a generic
 * message and is logged. Cancel aborts the task (AbortSignal; the pool ends
 * the worker thread) and marks the fit cancelled.
 *
 * Restart: `recover()` re-queues every fit left queued or running by a
 * previous process. A fit is deterministic (fixed data versions, fixed
 * seed), so running it again gives the numbers it would have given; a fit
 * whose data can no longer be read fails with that reason. A re-queued fit
 * keeps its first start time (`startedAt` is never overwritten once set),
 * its progress starts again from 0, and the re-queue is recorded in the
 * audit trail (`fit.requeued`, no actor, with the status and progress it
 * was left at) in the same transaction.
 *
 * Listeners (the server-sent events route) receive every progress and
 * status change of a fit as it happens; `subscribeAll` listeners (the
 * e-mail notices) those of every fit this process runs. With an `events`
 * relay (a channel on the database, see `createFitJobs`) a fit's listeners
 * in every process on the same database receive its events, whichever
 * process runs it, and a fit cancelled in one process stops in the one
 * that runs it.
 */
import { availableParallelism } from "node:os";
import { MessageChannel } from "node:worker_threads";
import type { Piscina } from "piscina";
import { type Recipe, specOfRecipe } from "../../contract/recipe";
import type { FitData } from "../../contract/spec";
import type { FitProgress, FitStatus } from "../../contract/views/fits";
import { IntakeError } from "../intake/errors";
import type { FitSummary } from "../stats/run-fit";
import type { IdMapping } from "../intake/roster";
import type { ChunkTaskInput, ChunkTaskOutcome } from "./chunk-task";
import {
  type ChunkResult,
  chunkKind,
  chunkTaskOf,
  type FitChunks,
  type MergedChunks,
  mergedChunks,
  mergeTask,
  transferablesOf,
} from "./fit-chunks";
import type { FitTask, FitTaskMessage, FitTaskOutcome } from "./fit-task";
import { regionRowsOf } from "./region-rows";
import { secondsLeftOf } from "./time-left";
import { workerPool } from "./worker-pool";

/** The data a fit runs on: dataset versions, confirmed id mappings and the session. */
export interface FitInputs {
  brainVersionId: string;
  sheetVersionId: string | null;
  mappings: readonly IdMapping[];
  /** The session fitted when the brain table has several; null: the first in natural order. */
  session: string | null;
}

/** Builds (and may keep) the fit data of given inputs (services/fit-inputs.ts). */
export interface FitDataSource {
  get(inputs: FitInputs): Promise<FitData>;
  /** The fit data and the session it holds (null: the brain table has none). */
  built(inputs: FitInputs): Promise<{ data: FitData; session: string | null }>;
}

/** A queued fit as its job reads it. */
export interface QueuedFit {
  recipe: Recipe;
  inputs: FitInputs;
}

/** One region's rows as the worker sends them. */
export interface RegionRowInput {
  position: number;
  region: string;
  participants: string;
  plot: string | null;
}

export interface RequeuedFit {
  id: string;
  createdAt: Date;
}

/**
 * What a fit job records, and where (services/fit-store.ts). Each status
 * change names the statuses it may move from and answers whether it moved.
 */
export interface FitJobStore {
  /** The fit when it is queued; null when it is gone or already taken. */
  queuedFit(fitId: string): Promise<QueuedFit | null>;
  clearRegionRows(fitId: string): Promise<void>;
  storeRegionRow(fitId: string, row: RegionRowInput): Promise<void>;
  /** queued → running (its first start time kept). */
  markRunning(fitId: string, at: Date): Promise<boolean>;
  writeProgress(fitId: string, fraction: number, secondsLeft: number | null): Promise<void>;
  /** queued | running → failed; the progress it stopped at, or null when it had finished. */
  markFailed(
    fitId: string,
    code: string,
    message: string,
    at: Date,
  ): Promise<{ progress: number } | null>;
  /** queued | running → done with its result, in one short transaction, unless `abandoned()`. */
  markDone(
    fitId: string,
    summary: unknown,
    at: Date,
    startedAt: Date,
    abandoned: () => boolean,
  ): Promise<boolean>;
  /** Every fit left queued or running → queued, each with its `fit.requeued` audit event. */
  requeueLeftovers(at: Date): Promise<RequeuedFit[]>;
}

export interface FitEvent {
  type: "progress" | "status";
  fitId: string;
  status: FitStatus;
  progress: FitProgress;
  error: { code: string; message: string } | null;
}

/** Carries fit events to every process on the database, this one included. */
export interface FitEventRelay {
  publish(event: FitEvent): void;
  subscribe(handler: (event: FitEvent) => void): () => void;
}

/** Where queued fits go instead of this process's threads: a job queue that worker processes serve (server/worker/). */
export interface FitDispatch {
  enqueue(fitId: string): Promise<void>;
  close(): Promise<void>;
}

export interface FitJobsOptions {
  store: FitJobStore;
  /**
   * A job queue for the fits (PostgreSQL server): `enqueue` hands each fit
   * to it and this process computes none; the workers' events arrive
   * through `events`.
   */
  dispatch?: FitDispatch;
  /** Without it, a fit's events reach only this process's listeners. */
  events?: FitEventRelay;
  data: FitDataSource;
  /** Worker threads for whole fits and merges (default: available parallelism − 1, at least 1). */
  threads?: number;
  /** Worker threads for a split fit's chunks (default: available parallelism). */
  chunkThreads?: number;
  clock?: () => Date;
  log?: (error: unknown, context: string) => void;
  /** Least time between two progress writes to the database (default 500 ms). */
  progressWriteMs?: number;
  /**
   * Start the worker threads now and keep them (a server). Default false:
   * threads start with the first fit and end after a minute idle (tests,
   * scripts), since loading the engine in a thread takes seconds.
   */
  warm?: boolean;
}

export const INTERNAL_FAILURE =
  "The fit stopped because of an internal error on the server. It has been logged.";

/** Default pool size for this machine. */
export function defaultFitThreads(): number {
  return Math.max(1, availableParallelism() - 1);
}

/** Default chunk pool size: every core (its threads run at the lower priority). */
export function defaultChunkThreads(): number {
  return Math.max(1, availableParallelism());
}

/** Share of a split fit's progress its chunks make; the merge makes the rest. */
const CHUNK_SHARE = 0.9;

interface Running {
  controller: AbortController;
  startedAt: number | null;
  progress: FitProgress;
  /** The fit thread's progress f is reported as from + span·f (a split fit's merge: the last 10 %). */
  span: { from: number; span: number };
  lastWrite: number;
  /** Region rows are stored one after another as the worker sends them. */
  storing: Promise<void>;
  /** Resolves with the number of regions once the worker's last region is stored. */
  stored: Promise<number>;
  markStored: (count: number) => void;
  storeFailed: (error: unknown) => void;
}

export class FitJobs {
  readonly threads: number;
  readonly chunkThreads: number;
  /** Built fit data, shared with previews and region detail. */
  readonly data: FitDataSource;
  private readonly store: FitJobStore;
  private readonly clock: () => Date;
  private readonly log: (error: unknown, context: string) => void;
  private readonly progressWriteMs: number;
  private pool: Piscina | null = null;
  private chunkPool: Piscina | null = null;
  private readonly warm: boolean;
  private readonly running = new Map<string, Running>();
  private readonly pending = new Set<Promise<void>>();
  private readonly listeners = new Map<string, Set<(e: FitEvent) => void>>();
  private readonly everyFit = new Set<(e: FitEvent) => void>();
  private readonly events: FitEventRelay | null;
  private readonly dispatch: FitDispatch | null;
  private readonly stopRelay: () => void;
  private closed = false;

  constructor(options: FitJobsOptions) {
    this.store = options.store;
    this.threads = options.threads ?? defaultFitThreads();
    if (!(Number.isInteger(this.threads) && this.threads >= 1))
      throw new Error(`FitJobs: threads must be a positive whole number (got ${this.threads})`);
    this.chunkThreads = options.chunkThreads ?? defaultChunkThreads();
    if (!(Number.isInteger(this.chunkThreads) && this.chunkThreads >= 1))
      throw new Error(
        `FitJobs: chunkThreads must be a positive whole number (got ${this.chunkThreads})`,
      );
    this.clock = options.clock ?? (() => new Date());
    this.log = options.log ?? ((error, context) => console.error(`[covarion] ${context}:`, error));
    this.progressWriteMs = options.progressWriteMs ?? 500;
    this.data = options.data;
    this.warm = options.warm ?? false;
    this.events = options.events ?? null;
    this.dispatch = options.dispatch ?? null;
    this.stopRelay =
      this.events?.subscribe((event) => {
        // Cancelled in another process: stop computing here too (the fit is already marked).
        if (event.status === "cancelled")
          this.running.get(event.fitId)?.controller.abort(new Error("cancelled"));
        this.deliver(event);
      }) ?? (() => {});
    if (this.warm && !this.dispatch) this.getPool();
  }

  /** Starts a queued fit (its row must exist with status "queued"). */
  enqueue(fitId: string): void {
    if (this.closed) throw new Error("FitJobs: closed");
    if (this.dispatch) {
      const sent = this.dispatch
        .enqueue(fitId)
        .catch((error) => this.log(error, `fit ${fitId}: queue`));
      this.pending.add(sent);
      void sent.finally(() => this.pending.delete(sent));
      return;
    }
    if (this.running.has(fitId)) return;
    let markStored: (count: number) => void = () => {};
    let storeFailed: (error: unknown) => void = () => {};
    const stored = new Promise<number>((resolve, reject) => {
      markStored = resolve;
      storeFailed = reject;
    });
    stored.catch(() => {});
    this.running.set(fitId, {
      controller: new AbortController(),
      startedAt: null,
      progress: { fraction: 0, secondsLeft: null },
      span: { from: 0, span: 1 },
      lastWrite: 0,
      storing: Promise.resolve(),
      stored,
      markStored,
      storeFailed,
    });
    const job = this.execute(fitId).catch((error) => this.log(error, `fit ${fitId}`));
    this.pending.add(job);
    void job.finally(() => this.pending.delete(job));
  }

  /** Live progress of a fit this process is running, or null. */
  live(fitId: string): FitProgress | null {
    return this.running.get(fitId)?.progress ?? null;
  }

  /** Calls `listener` with every event of the fit until the returned function is called. */
  subscribe(fitId: string, listener: (e: FitEvent) => void): () => void {
    const set = this.listeners.get(fitId) ?? new Set();
    set.add(listener);
    this.listeners.set(fitId, set);
    return () => {
      set.delete(listener);
      if (set.size === 0) this.listeners.delete(fitId);
    };
  }

  /**
   * Calls `listener` with every event of every fit (after the change it
   * reports has committed) until the returned function is called; the app's
   * e-mail notices listen here for fits that become done.
   */
  subscribeAll(listener: (e: FitEvent) => void): () => void {
    this.everyFit.add(listener);
    return () => {
      this.everyFit.delete(listener);
    };
  }

  /**
   * Cancels a queued or running fit: `mark` records the cancellation in the
   * database (status, who, the audit event) and answers whether the fit was
   * still unfinished; then the task is aborted and listeners are told.
   * Returns false when the fit had already finished.
   */
  async cancel(fitId: string, mark: () => Promise<boolean>): Promise<boolean> {
    const changed = await mark();
    if (!changed) return false;
    const run = this.running.get(fitId);
    run?.controller.abort(new Error("cancelled"));
    this.emit({
      type: "status",
      fitId,
      status: "cancelled",
      progress: run?.progress ?? { fraction: 0, secondsLeft: null },
      error: null,
    });
    return true;
  }

  /**
   * Re-queues fits a previous process left queued or running (see the
   * module comment). Returns their ids, oldest first.
   */
  async recover(): Promise<string[]> {
    const rows = await this.store.requeueLeftovers(this.clock());
    rows.sort((a, b) => a.createdAt.getTime() - b.createdAt.getTime() || (a.id < b.id ? -1 : 1));
    for (const row of rows) {
      this.enqueue(row.id);
      this.emit({
        type: "status",
        fitId: row.id,
        status: "queued",
        progress: { fraction: 0, secondsLeft: null },
        error: null,
      });
    }
    return rows.map((r) => r.id);
  }

  /** Resolves when no fit is queued or running in this process. */
  async whenIdle(): Promise<void> {
    while (this.pending.size > 0) await Promise.allSettled([...this.pending]);
  }

  /** Aborts running tasks and stops the worker threads (fits stay queued/running in the table for the next start). */
  async close(): Promise<void> {
    this.closed = true;
    this.stopRelay();
    for (const run of this.running.values()) run.controller.abort(new Error("shutting down"));
    await Promise.allSettled([...this.pending]);
    await this.dispatch?.close();
    const pools = [this.pool, this.chunkPool];
    this.pool = null;
    this.chunkPool = null;
    await Promise.all(pools.map((pool) => pool?.destroy()));
  }

  private getPool(): Piscina {
    if (!this.pool) {
      this.pool = workerPool("fit-task.ts", {
        minThreads: this.warm ? this.threads : 0,
        maxThreads: this.threads,
        idleTimeout: this.warm ? Number.POSITIVE_INFINITY : 60_000,
      });
    }
    return this.pool;
  }

  private getChunkPool(): Piscina {
    if (!this.chunkPool) {
      this.chunkPool = workerPool("chunk-task.ts", {
        minThreads: 0,
        maxThreads: this.chunkThreads,
        idleTimeout: 60_000,
      });
    }
    return this.chunkPool;
  }

  /** Runs one chunk task (a plan, or a merge) on the chunk pool. */
  private runChunkTask<T>(
    input: ChunkTaskInput,
    signal: AbortSignal,
    transferList: ArrayBuffer[] = [],
  ): Promise<ChunkTaskOutcome<T>> {
    return this.getChunkPool().run(input, { signal, transferList }) as Promise<ChunkTaskOutcome<T>>;
  }

  /**
   * A split fit's chunks, computed on the chunk pool (at most one task per
   * thread in flight); progress is their share done, up to CHUNK_SHARE.
   * Null when the fit is not split after all; a StatsError's outcome when a
   * chunk (or the plan) fails a precondition. Throws when aborted.
   */
  private async computeChunks(
    fitId: string,
    run: Running,
    spec: FitTask["spec"],
    data: FitData,
  ): Promise<MergedChunks | null | { ok: false; code: string; message: string }> {
    const signal = run.controller.signal;
    const planned = await this.runChunkTask<FitChunks | null>({ type: "plan", spec, data }, signal);
    if (!planned.ok) return planned;
    const plan = planned.value;
    if (!plan) return null;
    const control = new Int32Array(new SharedArrayBuffer(8));
    const results: ChunkResult[] = new Array(plan.chunks);
    let next = 0;
    let done = 0;
    let failed: { ok: false; code: string; message: string } | null = null;
    const runner = async () => {
      while (next < plan.chunks && !failed) {
        const chunk = next++;
        const outcome = await this.runChunkTask<ChunkResult>(
          chunkTaskOf(plan, chunk, control.buffer as SharedArrayBuffer),
          signal,
        );
        if (!outcome.ok) {
          failed ??= outcome;
          Atomics.store(control, 0, 1);
          return;
        }
        results[chunk] = outcome.value;
        done++;
        await this.onProgress(fitId, run, { type: "progress", fraction: done / plan.chunks });
      }
    };
    await Promise.all(Array.from({ length: Math.min(this.chunkThreads, plan.chunks) }, runner));
    if (failed) return failed;
    return mergedChunks(plan, results);
  }

  /** A fit this process runs changed: its `subscribeAll` listeners here, its listeners everywhere. */
  private emit(event: FitEvent): void {
    if (this.events) this.events.publish(event);
    else this.deliver(event);
    this.tell([...this.everyFit], event);
  }

  private deliver(event: FitEvent): void {
    this.tell([...(this.listeners.get(event.fitId) ?? [])], event);
  }

  private tell(listeners: Iterable<(e: FitEvent) => void>, event: FitEvent): void {
    for (const listener of listeners) {
      try {
        listener(event);
      } catch (error) {
        this.log(error, `fit ${event.fitId} listener`);
      }
    }
  }

  private async execute(fitId: string): Promise<void> {
    const run = this.running.get(fitId) as Running;
    try {
      const fit = await this.store.queuedFit(fitId);
      if (!fit) return;
      let data: FitData;
      let spec: ReturnType<typeof specOfRecipe>;
      try {
        spec = specOfRecipe(fit.recipe);
        data = await this.data.get(fit.inputs);
      } catch (error) {
        if (error instanceof IntakeError)
          return await this.fail(fitId, error.problems[0]?.code ?? "invalid_data", error.message);
        this.log(error, `fit ${fitId}: building its data`);
        return await this.fail(
          fitId,
          "data_unavailable",
          "The fit's data versions could not be read.",
        );
      }
      if (run.controller.signal.aborted) return;
      // Rows left by an interrupted earlier run of the same fit are replaced.
      await this.store.clearRegionRows(fitId);
      let merged: MergedChunks | null = null;
      let rowsStored = false;
      if (chunkKind(spec)) {
        await this.onProgress(fitId, run, { type: "started" });
        run.span = { from: 0, span: CHUNK_SHARE };
        // A permutation test's region rows do not depend on the test: the fit thread computes them while the chunks run.
        const rowsChannel = chunkKind(spec) === "permutation" ? new MessageChannel() : null;
        rowsChannel?.port1.on("message", (message: FitTaskMessage) => {
          if (message.type === "region" || message.type === "regions-done")
            this.onMessage(fitId, run, message);
        });
        const rows = rowsChannel
          ? (this.getPool().run(
              { spec, data, port: rowsChannel.port2, rows: "only" } satisfies FitTask,
              { transferList: [rowsChannel.port2], signal: run.controller.signal },
            ) as Promise<FitTaskOutcome>)
          : Promise.resolve(null);
        const [chunks, rowsOutcome] = await Promise.allSettled([
          this.computeChunks(fitId, run, spec, data),
          rows.then(async (outcome) => {
            if (outcome?.ok) await run.stored;
            return outcome;
          }),
        ]);
        rowsChannel?.port1.close();
        const failed = async (code: string, message: string) => {
          await run.storing.catch(() => {});
          await this.store.clearRegionRows(fitId);
          if (!run.controller.signal.aborted) await this.fail(fitId, code, message);
        };
        for (const settled of [chunks, rowsOutcome])
          if (settled.status === "rejected") {
            // Cancelled (already marked) or shutting down (left for recovery): no rows kept.
            if (run.controller.signal.aborted) return await failed("", "");
            this.log(settled.reason, `fit ${fitId}: chunks`);
            return await failed("internal_error", INTERNAL_FAILURE);
          }
        const chunked = (
          chunks as PromiseFulfilledResult<Awaited<ReturnType<FitJobs["computeChunks"]>>>
        ).value;
        const rowsDone = (rowsOutcome as PromiseFulfilledResult<FitTaskOutcome | null>).value;
        if (chunked && "ok" in chunked) return await failed(chunked.code, chunked.message);
        if (rowsDone && !rowsDone.ok) return await failed(rowsDone.code, rowsDone.message);
        rowsStored = rowsDone !== null;
        merged = chunked;
        if (merged?.kind === "permutation" && rowsDone?.regionsBeforeTest)
          merged = { ...merged, regions: rowsDone.regionsBeforeTest };
        run.span = merged ? { from: CHUNK_SHARE, span: 1 - CHUNK_SHARE } : { from: 0, span: 1 };
      }
      const merge = merged ? mergeTask(merged) : null;
      if (merge && merged) {
        // The split test and the regions before it are at hand: a chunk thread adds the counts (no data, no rows).
        let outcome: ChunkTaskOutcome<FitSummary>;
        try {
          outcome = await this.runChunkTask<FitSummary>(
            merge,
            run.controller.signal,
            transferablesOf(merged),
          );
        } catch (error) {
          await this.store.clearRegionRows(fitId);
          if (run.controller.signal.aborted) return; // cancelled (already marked) or shutting down (left for recovery)
          this.log(error, `fit ${fitId}: merge`);
          return await this.fail(fitId, "internal_error", INTERNAL_FAILURE);
        }
        if (!outcome.ok) {
          await this.store.clearRegionRows(fitId);
          return await this.fail(fitId, outcome.code, outcome.message);
        }
        return await this.finish(fitId, run, outcome.value);
      }
      const channel = new MessageChannel();
      channel.port1.on("message", (message: FitTaskMessage) => this.onMessage(fitId, run, message));
      const task: FitTask = {
        spec,
        data,
        port: channel.port2,
        ...(rowsStored ? { rows: "skip" as const } : {}),
        ...(merged ? { merged } : {}),
      };
      let outcome: FitTaskOutcome;
      try {
        outcome = (await this.getPool().run(task, {
          transferList: [channel.port2, ...(merged ? transferablesOf(merged) : [])],
          signal: run.controller.signal,
        })) as FitTaskOutcome;
        if (outcome.ok) await run.stored;
      } catch (error) {
        channel.port1.close();
        await run.storing.catch(() => {});
        await this.store.clearRegionRows(fitId);
        if (run.controller.signal.aborted) return; // cancelled (already marked) or shutting down (left for recovery)
        this.log(error, `fit ${fitId}`);
        return await this.fail(fitId, "internal_error", INTERNAL_FAILURE);
      }
      channel.port1.close();
      if (!outcome.ok) {
        // Rows of the regions diagnosed before the failure may still be on their way to storage.
        await run.storing.catch(() => {});
        await this.store.clearRegionRows(fitId);
        return await this.fail(fitId, outcome.code, outcome.message);
      }
      await this.finish(fitId, run, outcome.summary);
    } finally {
      this.running.delete(fitId);
    }
  }

  private onMessage(fitId: string, run: Running, message: FitTaskMessage): void {
    if (message.type === "region") {
      run.storing = run.storing.then(async () => {
        if (run.controller.signal.aborted) return;
        await this.store.storeRegionRow(fitId, regionRowsOf(message));
        // The embedded database answers within microtasks: yield to the event loop so requests are served between regions.
        await new Promise<void>((resolve) => setImmediate(resolve));
      });
      return;
    }
    if (message.type === "regions-done") {
      run.storing.then(
        () => run.markStored(message.count),
        (error) => run.storeFailed(error),
      );
      return;
    }
    void this.onProgress(fitId, run, message).catch((error) =>
      this.log(error, `fit ${fitId}: progress`),
    );
  }

  private async onProgress(
    fitId: string,
    run: Running,
    message: Extract<FitTaskMessage, { type: "started" | "progress" }>,
  ): Promise<void> {
    const nowMs = this.clock().getTime();
    if (message.type === "started") {
      if (run.startedAt !== null) return; // a split fit started with its chunks
      run.startedAt = nowMs;
      if (await this.store.markRunning(fitId, new Date(nowMs)))
        this.emit({
          type: "status",
          fitId,
          status: "running",
          progress: run.progress,
          error: null,
        });
      return;
    }
    const fraction = run.span.from + run.span.span * Math.min(1, Math.max(0, message.fraction));
    const elapsed = run.startedAt === null ? 0 : nowMs - run.startedAt;
    const secondsLeft = secondsLeftOf(fraction, elapsed);
    run.progress = { fraction, secondsLeft };
    this.emit({ type: "progress", fitId, status: "running", progress: run.progress, error: null });
    if (nowMs - run.lastWrite >= this.progressWriteMs) {
      run.lastWrite = nowMs;
      await this.store.writeProgress(fitId, fraction, secondsLeft);
    }
  }

  private async fail(fitId: string, code: string, message: string): Promise<void> {
    const failed = await this.store.markFailed(fitId, code, message, this.clock());
    if (failed) {
      this.emit({
        type: "status",
        fitId,
        status: "failed",
        progress: { fraction: failed.progress, secondsLeft: null },
        error: { code, message },
      });
    }
  }

  /**
   * Marks a fit done once its region rows are stored (they arrive one by
   * one from the worker and are stored outside any transaction, yielding
   * to the event loop after each, so readers are never held up behind one
   * long write): in one short transaction, the result and status "done" —
   * unless the fit was cancelled meanwhile, in which case its rows are
   * removed again.
   */
  private async finish(fitId: string, run: Running, summary: unknown): Promise<void> {
    const done = await this.store.markDone(
      fitId,
      summary,
      this.clock(),
      new Date(run.startedAt ?? this.clock().getTime()),
      () => run.controller.signal.aborted,
    );
    if (done)
      this.emit({
        type: "status",
        fitId,
        status: "done",
        progress: { fraction: 1, secondsLeft: 0 },
        error: null,
      });
    else await this.store.clearRegionRows(fitId);
  }
}
