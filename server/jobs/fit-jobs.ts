/**
 * Fits as background jobs.
 *
 * A pool of worker threads (piscina) sized to the machine —
 * `os.availableParallelism() − 1`, at least 1, so one core stays free for
 * requests — runs `runFit` off the request thread (server/jobs/fit-task.ts).
 * The main thread alone reads and writes the database (one process owns
 * it): it builds the fit's data from the versions its recipe names, hands
 * data and model to a worker, receives `started`, throttled `progress` and
 * then one message per region (its diagnostics and plot data as JSON text)
 * through a MessagePort, and writes status, progress (at most every
 * `progressWriteMs`), time left, each region's rows as they arrive, and
 * finally the result.
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
 * status change of a fit as it happens.
 */
import { availableParallelism } from "node:os";
import { MessageChannel } from "node:worker_threads";
import { and, eq, inArray, sql } from "drizzle-orm";
import type { Piscina } from "piscina";
import { workerPool } from "./worker-pool";
import type { Database } from "../../db/client";
import { fitRegions, fits, type FitStatus } from "../../db/schema";
import { IntakeError } from "../intake/errors";
import type { FitData } from "../../contract/spec";
import { secondsLeftOf } from "./time-left";
import { recordEvent } from "../services/audit";
import { specOfRecipe } from "../../contract/recipe";
import { FitDataCache, type FitInputs, inputsOfFit } from "../services/fit-inputs";
import type { FitTask, FitTaskMessage, FitTaskOutcome } from "./fit-task";

export interface FitProgress {
  /** 0…1 */
  fraction: number;
  /** Estimated seconds left, or null while unknown. */
  secondsLeft: number | null;
}

export interface FitEvent {
  type: "progress" | "status";
  fitId: string;
  status: FitStatus;
  progress: FitProgress;
  error: { code: string; message: string } | null;
}

export interface FitJobsOptions {
  db: Database;
  /** Worker threads (default: available parallelism − 1, at least 1). */
  threads?: number;
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

const terminal: readonly FitStatus[] = ["done", "failed", "cancelled"];

/** Default pool size for this machine. */
export function defaultFitThreads(): number {
  return Math.max(1, availableParallelism() - 1);
}

interface Running {
  controller: AbortController;
  startedAt: number | null;
  progress: FitProgress;
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
  /** Built fit data, shared with previews and region detail. */
  readonly data: FitDataCache;
  private readonly db: Database;
  private readonly clock: () => Date;
  private readonly log: (error: unknown, context: string) => void;
  private readonly progressWriteMs: number;
  private pool: Piscina | null = null;
  private readonly warm: boolean;
  private readonly running = new Map<string, Running>();
  private readonly pending = new Set<Promise<void>>();
  private readonly listeners = new Map<string, Set<(e: FitEvent) => void>>();
  private closed = false;

  constructor(options: FitJobsOptions) {
    this.db = options.db;
    this.threads = options.threads ?? defaultFitThreads();
    if (!(Number.isInteger(this.threads) && this.threads >= 1))
      throw new Error(`FitJobs: threads must be a positive whole number (got ${this.threads})`);
    this.clock = options.clock ?? (() => new Date());
    this.log = options.log ?? ((error, context) => console.error(`[covarion] ${context}:`, error));
    this.progressWriteMs = options.progressWriteMs ?? 500;
    this.data = new FitDataCache(this.db);
    this.warm = options.warm ?? false;
    if (this.warm) this.getPool();
  }

  /** Starts a queued fit (its row must exist with status "queued"). */
  enqueue(fitId: string): void {
    if (this.closed) throw new Error("FitJobs: closed");
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
    const rows = await this.db.transaction(async (tx) => {
      const left = await tx
        .select({
          id: fits.id,
          studyId: fits.studyId,
          status: fits.status,
          progress: fits.progress,
          startedAt: fits.startedAt,
          createdAt: fits.createdAt,
        })
        .from(fits)
        .where(inArray(fits.status, ["queued", "running"]))
        .for("update");
      if (left.length === 0) return left;
      await tx
        .update(fits)
        .set({ status: "queued", progress: 0, secondsLeft: null })
        .where(
          inArray(
            fits.id,
            left.map((f) => f.id),
          ),
        );
      const at = this.clock();
      for (const fit of left) {
        await recordEvent(tx, {
          studyId: fit.studyId,
          actorId: null,
          kind: "fit.requeued",
          targetType: "fit",
          targetId: fit.id,
          before: { status: fit.status, progress: fit.progress, startedAt: fit.startedAt },
          after: { status: "queued", progress: 0 },
          at,
        });
      }
      return left;
    });
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
    for (const run of this.running.values()) run.controller.abort(new Error("shutting down"));
    await Promise.allSettled([...this.pending]);
    const pool = this.pool;
    this.pool = null;
    if (pool) await pool.destroy();
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

  private emit(event: FitEvent): void {
    for (const listener of this.listeners.get(event.fitId) ?? []) {
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
      const [fit] = await this.db.select().from(fits).where(eq(fits.id, fitId));
      if (!fit || fit.status !== "queued") return;
      let data: FitData;
      let spec: ReturnType<typeof specOfRecipe>;
      try {
        spec = specOfRecipe(fit.recipe);
        data = await this.data.get(inputsOfFit(fit) as FitInputs);
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
      await this.db.delete(fitRegions).where(eq(fitRegions.fitId, fitId));
      const channel = new MessageChannel();
      channel.port1.on("message", (message: FitTaskMessage) => this.onMessage(fitId, run, message));
      const task: FitTask = { spec, data, port: channel.port2 };
      let outcome: FitTaskOutcome;
      try {
        outcome = (await this.getPool().run(task, {
          transferList: [channel.port2],
          signal: run.controller.signal,
        })) as FitTaskOutcome;
        if (outcome.ok) await run.stored;
      } catch (error) {
        channel.port1.close();
        await run.storing.catch(() => {});
        await this.db.delete(fitRegions).where(eq(fitRegions.fitId, fitId));
        if (run.controller.signal.aborted) return; // cancelled (already marked) or shutting down (left for recovery)
        this.log(error, `fit ${fitId}`);
        return await this.fail(fitId, "internal_error", INTERNAL_FAILURE);
      }
      channel.port1.close();
      if (!outcome.ok) {
        await this.db.delete(fitRegions).where(eq(fitRegions.fitId, fitId));
        return await this.fail(fitId, outcome.code, outcome.message);
      }
      await this.finish(fitId, run, outcome);
    } finally {
      this.running.delete(fitId);
    }
  }

  private onMessage(fitId: string, run: Running, message: FitTaskMessage): void {
    if (message.type === "region") {
      run.storing = run.storing.then(async () => {
        if (run.controller.signal.aborted) return;
        const { position, region, participants, plot } = message;
        await this.db.insert(fitRegions).values({ fitId, position, region, participants, plot });
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
      run.startedAt = nowMs;
      const updated = await this.db
        .update(fits)
        .set({ status: "running", startedAt: firstStart(new Date(nowMs)), progress: 0 })
        .where(and(eq(fits.id, fitId), eq(fits.status, "queued")))
        .returning({ id: fits.id });
      if (updated.length > 0)
        this.emit({
          type: "status",
          fitId,
          status: "running",
          progress: run.progress,
          error: null,
        });
      return;
    }
    const fraction = Math.min(1, Math.max(0, message.fraction));
    const elapsed = run.startedAt === null ? 0 : nowMs - run.startedAt;
    const secondsLeft = secondsLeftOf(fraction, elapsed);
    run.progress = { fraction, secondsLeft };
    this.emit({ type: "progress", fitId, status: "running", progress: run.progress, error: null });
    if (nowMs - run.lastWrite >= this.progressWriteMs) {
      run.lastWrite = nowMs;
      await this.db
        .update(fits)
        .set({ progress: fraction, secondsLeft })
        .where(and(eq(fits.id, fitId), eq(fits.status, "running")));
    }
  }

  private async fail(fitId: string, code: string, message: string): Promise<void> {
    const updated = await this.db
      .update(fits)
      .set({
        status: "failed",
        error: message,
        errorCode: code,
        secondsLeft: null,
        finishedAt: this.clock(),
      })
      .where(and(eq(fits.id, fitId), inArray(fits.status, ["queued", "running"])))
      .returning({ progress: fits.progress });
    if (updated.length > 0) {
      this.emit({
        type: "status",
        fitId,
        status: "failed",
        progress: { fraction: updated[0].progress, secondsLeft: null },
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
  private async finish(
    fitId: string,
    run: Running,
    outcome: Extract<FitTaskOutcome, { ok: true }>,
  ): Promise<void> {
    const done = await this.db.transaction(async (tx) => {
      const [row] = await tx
        .select({ status: fits.status })
        .from(fits)
        .where(eq(fits.id, fitId))
        .for("update");
      if (!row || terminal.includes(row.status) || run.controller.signal.aborted) return false;
      await tx
        .update(fits)
        .set({
          status: "done",
          progress: 1,
          secondsLeft: 0,
          result: outcome.summary,
          finishedAt: this.clock(),
          startedAt: firstStart(new Date(run.startedAt ?? this.clock().getTime())),
        })
        .where(eq(fits.id, fitId));
      return true;
    });
    if (done)
      this.emit({
        type: "status",
        fitId,
        status: "done",
        progress: { fraction: 1, secondsLeft: 0 },
        error: null,
      });
    else await this.db.delete(fitRegions).where(eq(fitRegions.fitId, fitId));
  }
}

/** A fit's start time is its first: kept when already set (a fit re-queued after a restart), else `now`. */
function firstStart(now: Date) {
  return sql`coalesce(${fits.startedAt}, ${now.toISOString()}::timestamptz)`;
}
