/**
 * A worker process's work (`npm run worker`, server/worker/index.ts): takes
 * jobs from the four fit queues (server/worker/queue.ts) on the PostgreSQL
 * server and computes them in worker threads, so its main thread stays free
 * for the queue, the heartbeat and watching for cancels.
 *
 * - `fit`: a queued fit becomes running. A split fit (server/jobs/
 *   fit-chunks.ts) records its number of parts and sends one `fit-chunk`
 *   job per chunk; a split permutation test also stores its split test
 *   (the test's observed statistics, a part) and each region chunk's setup
 *   (what its chunks need; removed when the fit ends), and sends one
 *   `fit-rows` job per part of its regions. Any other fit is computed whole here, as the
 *   embedded path computes it (server/jobs/fit-task.ts).
 * - `fit-rows`: a part of a split permutation test's regions before the
 *   test (`regionsBeforeTestByRegion`: estimates, diagnostics, rows and plots,
 *   which do not depend on the test), computed on the fit thread while the
 *   chunk thread computes chunks; its rows and then its mark (with the
 *   regions' results) are stored once, as a part.
 * - `fit-chunk`: computes one chunk and stores it once (a chunk already
 *   stored is not computed again and adds nothing) — a permutation test's
 *   chunk from its region chunk's stored setup, read once per process, so
 *   that no worker but the planner loads the data or plans; progress is the share
 *   of parts stored. The one that stores the last part sends `fit-merge`
 *   (and takes it at once).
 *   While it computes, the fit's status is read every second: a fit that is
 *   no longer running (cancelled) drops the chunk. A chunk that fails on its
 *   last try fails the fit with the error.
 * - `fit-merge`: under the fit's merge lock (one party at a time, and a
 *   fit merged once), merges the stored chunks into the stored split test
 *   and regions before the test on a chunk thread (`mergeTask`: counts,
 *   p-values, the correction over regions; no data read) — or, for a curve,
 *   a prediction or parts stored without their results, runs `runFit` with
 *   the chunks in place of the test — and stores the result (and the region
 *   rows unless already stored) through the fit store
 *   (services/fit-store.ts), as the embedded path does.
 *
 * - `fit-failed` (the others' dead letter): a job whose last try failed;
 *   its fit, if still queued or running, fails with the reason.
 *
 * Every few seconds a worker writes its heartbeat with the jobs it has in
 * hand (also as soon as it takes one), and hands the jobs that no worker
 * with a heartbeat younger than `WORKER_ALIVE_SECONDS` holds back to the
 * queue as failed tries: a killed worker's chunk is computed again
 * elsewhere within about half a minute, not after its lease.
 *
 * A fit that fails, or a job that finds its fit cancelled, removes the
 * fit's region rows (they may have been stored before the chunks were all in).
 *
 * Fit events (running, progress, done, failed) go out on the database's
 * fit-event channel, so the web servers' listeners receive them.
 */
import { randomUUID } from "node:crypto";
import { hostname } from "node:os";
import { MessageChannel } from "node:worker_threads";
import type PgBoss from "pg-boss";
import type { Piscina } from "piscina";
import { specOfRecipe } from "../../contract/recipe";
import type { FitData, ModelSpec, RegionResult } from "../../contract/spec";
import type { Database } from "../../db/client";
import { IntakeError } from "../intake/errors";
import {
  type ChunkResult,
  chunkKind,
  chunkTaskOf,
  encodeChunk,
  encodeSetupChunk,
  type FitChunks,
  fitChunks,
  type MergedChunks,
  mergedOfStored,
  mergeTask,
  partCount,
  type RegionChunkSetup,
  regionChunkSetup,
  type RowsPart,
  rowsMark,
  rowsParts,
  setupChunkTask,
  splitMark,
  transferablesOf,
} from "../jobs/fit-chunks";
import type { ChunkTask, ChunkTaskOutcome } from "../jobs/chunk-task";
import { type FitEvent, INTERNAL_FAILURE } from "../jobs/fit-jobs";
import type { FitTask, FitTaskMessage, FitTaskOutcome } from "../jobs/fit-task";
import { regionRowsOf } from "../jobs/region-rows";
import { secondsLeftOf } from "../jobs/time-left";
import { workerPool } from "../jobs/worker-pool";
import { FitDataCache, inputsOfFit } from "../services/fit-inputs";
import { FitStore, fitEvents } from "../services/fit-store";
import { StatsError } from "../stats/errors";
import type { FitSummary } from "../stats/run-fit";
import {
  beat,
  fitRow,
  fitStatus,
  forgetSetups,
  forgetWorker,
  hasChunk,
  markMerged,
  planOf,
  reapStoppedWorkers,
  recordPlan,
  setupOf,
  storeChunk,
  storeSetups,
  storedChunks,
  withMergeLock,
} from "./chunk-store";
import {
  CHUNK_QUEUE,
  type ChunkJobData,
  FAILED_QUEUE,
  FIT_QUEUE,
  type FitJobData,
  MERGE_QUEUE,
  lastTryFailure,
  orphanedJobs,
  ROWS_QUEUE,
  type RowsJobData,
  startQueue,
  WORKER_STOPPED,
} from "./queue";

export interface FitWorkerOptions {
  db: Database;
  /** The longest one try of a job may run, in seconds, before the queue retries it (default six hours). */
  leaseSeconds?: number;
  /** Retries of a failed or expired job (default 3). */
  retries?: number;
  /** Seconds between the queue's maintenance passes (default 30). */
  maintenanceSeconds?: number;
  /** Seconds between heartbeats (default 5). */
  heartbeatSeconds?: number;
  log?: (error: unknown, context: string) => void;
}

/** How often a computing chunk or fit reads its fit's status (a cancel drops it). */
const WATCH_MS = 1000;

export class FitWorker {
  readonly id = randomUUID();
  readonly host = hostname();
  private readonly db: Database;
  private readonly store: FitStore;
  private readonly data: FitDataCache;
  private readonly events: ReturnType<typeof fitEvents>;
  private readonly log: (error: unknown, context: string) => void;
  private readonly startedAt = new Date();
  private readonly plans = new Map<string, Promise<FitChunks>>();
  /** Region-chunk setups read or made here, by fit and region chunk (the last few). */
  private readonly setups = new Map<string, RegionChunkSetup>();
  /** A read of a fit's stored setup in progress, by fit. */
  private readonly reading = new Map<string, Promise<RegionChunkSetup | null>>();
  /** The queue takers (pg-boss worker ids) of each queue in this process. */
  private readonly takers = new Map<string, string[]>();
  private boss: PgBoss | null = null;
  private chunkPool: Piscina | null = null;
  private fitPool: Piscina | null = null;
  private heartbeat: ReturnType<typeof setInterval> | null = null;
  /** The jobs in hand, by id: their queues (written with each heartbeat). */
  private readonly held = new Map<string, string>();
  /** The heartbeat being written: one write at a time, each with the jobs in hand when it starts. */
  private beating: Promise<void> = Promise.resolve();
  /** Whether a look for stopped workers is under way (one at a time). */
  private handingBack = false;
  private stopped = false;

  private constructor(private readonly options: FitWorkerOptions) {
    this.db = options.db;
    this.store = new FitStore(options.db);
    this.data = new FitDataCache(options.db, 2);
    this.events = fitEvents(options.db);
    this.log = options.log ?? ((error, context) => console.error(`[covarion] ${context}:`, error));
  }

  /** Starts a worker on `db`: heartbeat, the queue, and one thread each for chunks and whole fits. */
  static async start(options: FitWorkerOptions): Promise<FitWorker> {
    const worker = new FitWorker(options);
    await worker.begin();
    return worker;
  }

  private async begin(): Promise<void> {
    await this.beat();
    this.heartbeat = setInterval(
      () =>
        void this.beat()
          .then(() => this.handBackJobsOfStoppedWorkers())
          .catch((error) => this.log(error, "worker heartbeat")),
      (this.options.heartbeatSeconds ?? 5) * 1000,
    );
    this.chunkPool = workerPool("chunk-task.ts", { minThreads: 1, maxThreads: 1 });
    // Started now and kept: loading the engine in a thread takes seconds, which a merge should not wait for.
    this.fitPool = workerPool("fit-task.ts", {
      minThreads: 1,
      maxThreads: 1,
      idleTimeout: Number.POSITIVE_INFINITY,
    });
    const boss = await startQueue(this.db, {
      supervise: true,
      leaseSeconds: this.options.leaseSeconds,
      retries: this.options.retries,
      maintenanceSeconds: this.options.maintenanceSeconds,
    });
    this.boss = boss;
    await this.serve<FitJobData>(boss, FIT_QUEUE, (job) => this.planFit(job));
    // Two chunk jobs in hand for the one chunk thread: while one computes, the other's reads
    // and the last one's storing are done, so the thread does not wait on the database between chunks.
    await this.serve<ChunkJobData>(boss, CHUNK_QUEUE, (job) => this.computeChunk(job), 2);
    await this.serve<RowsJobData>(boss, ROWS_QUEUE, (job) => this.computeRows(job));
    await this.serve<FitJobData>(boss, MERGE_QUEUE, (job) => this.merge(job.data.fitId));
    await this.serve<FitJobData>(boss, FAILED_QUEUE, (job) => this.lastTryFailed(job));
  }

  /**
   * Takes a queue's jobs, `takers` at a time (each taker one job at a time);
   * after each, looks for the next at once (not after the polling interval).
   */
  private async serve<T extends object>(
    boss: PgBoss,
    queue: string,
    handle: (job: PgBoss.JobWithMetadata<T>) => Promise<void>,
    takers = 1,
  ): Promise<void> {
    const options = { includeMetadata: true as const, pollingIntervalSeconds: 0.5 };
    const ids: string[] = [];
    for (let k = 0; k < takers; k++) {
      ids.push(
        await boss.work<T>(queue, options, async ([job]) => {
          // Written before the work starts: if this process dies holding it, another hands it back.
          this.held.set(job.id, queue);
          await this.beat().catch((error) => this.log(error, "worker heartbeat"));
          try {
            await handle(job);
          } finally {
            this.held.delete(job.id);
            this.wake(queue);
          }
        }),
      );
    }
    this.takers.set(queue, ids);
  }

  /** This process looks for jobs of `queue` at once (after sending one, or finishing one). */
  private wake(queue: string): void {
    for (const id of this.takers.get(queue) ?? []) this.boss?.notifyWorker(id);
  }

  /** Stops taking jobs (those in hand go back to the queue), removes the heartbeat and ends the threads. */
  async stop(): Promise<void> {
    if (this.stopped) return;
    this.stopped = true;
    if (this.heartbeat) clearInterval(this.heartbeat);
    // Jobs in hand are failed as tries, and so retried by the other workers at once.
    await this.boss?.stop({ graceful: false, close: false, wait: true, timeout: 5000 });
    await this.beating.catch(() => {});
    await forgetWorker(this.db, this.id).catch((error) => this.log(error, "worker heartbeat"));
    await Promise.all([this.chunkPool?.destroy(), this.fitPool?.destroy()]);
  }

  private beat(): Promise<void> {
    this.beating = this.beating
      .catch(() => {})
      .then(() =>
        beat(
          this.db,
          { id: this.id, host: this.host, pid: process.pid, startedAt: this.startedAt },
          [...this.held].map(([id, queue]) => ({ queue, id })),
        ),
      );
    return this.beating;
  }

  /**
   * Removes the heartbeats of workers that stopped (older than
   * `WORKER_ALIVE_SECONDS`: killed, or cut off from the database) and
   * hands back to the queue, as failed tries, the jobs they held and any
   * other job no live worker holds (queue.ts `orphanedJobs`: a worker that
   * died between taking a job and listing it), so that they are retried
   * now rather than after their lease. A worker that was only cut off and
   * comes back beats again; a job it then finishes as well adds nothing
   * twice (parts are stored once).
   */
  private async handBackJobsOfStoppedWorkers(): Promise<void> {
    const boss = this.boss;
    if (!boss || this.stopped || this.handingBack) return;
    this.handingBack = true;
    try {
      await this.handBack(boss);
    } finally {
      this.handingBack = false;
    }
  }

  private async handBack(boss: PgBoss): Promise<void> {
    const lost: { queue: string; id: string; who: string }[] = [];
    for (const stopped of await reapStoppedWorkers(this.db)) {
      const who = `worker ${stopped.id} on ${stopped.host} (process ${stopped.pid})`;
      console.warn(`[covarion] ${who} stopped beating.`);
      for (const job of stopped.jobs) lost.push({ ...job, who });
    }
    for (const job of await orphanedJobs(this.db))
      if (!lost.some((l) => l.id === job.id))
        lost.push({ ...job, who: "a worker that stopped before it listed it" });
    for (const job of lost) {
      // A job finished or handed back in the meantime is left as it is.
      const failure = { message: `${WORKER_STOPPED}: ${job.who}` };
      // pg-boss 10 answers how many jobs it failed, though its types say nothing.
      const { affected } = (await boss.fail(job.queue, job.id, failure)) as unknown as {
        affected: number;
      };
      if (affected === 0) continue;
      this.wake(job.queue);
      console.warn(
        `[covarion] ${job.queue} job ${job.id}, held by ${job.who}, goes back to the queue.`,
      );
    }
  }

  /**
   * A job of any of the fit queues failed its last try — its handler threw,
   * or its worker stopped or held it past its lease each time — and the
   * queue sent its data here (the four queues' dead letter): a fit still
   * queued or running then fails, with the reason, instead of waiting for a
   * part that will not come.
   */
  private async lastTryFailed(job: PgBoss.JobWithMetadata<FitJobData>): Promise<void> {
    const { fitId } = job.data;
    const status = await fitStatus(this.db, fitId);
    if (status !== "queued" && status !== "running") return;
    const failure = lastTryFailure(job.output, job.retryLimit + 1);
    this.log(
      new Error(failure.message),
      `fit ${fitId}: a job's last try failed (${JSON.stringify(job.data)})`,
    );
    await this.fail(fitId, failure.code, failure.fitMessage);
  }

  private emit(event: FitEvent): void {
    this.events.publish(event);
  }

  private async fail(fitId: string, code: string, message: string): Promise<void> {
    const failed = await this.store.markFailed(fitId, code, message, new Date());
    await this.store.clearRegionRows(fitId);
    await forgetSetups(this.db, fitId);
    if (failed)
      this.emit({
        type: "status",
        fitId,
        status: "failed",
        progress: { fraction: failed.progress, secondsLeft: null },
        error: { code, message },
      });
  }

  /** The model and data of a fit, or a reason it has none (the fit is then failed). */
  private async inputsOf(
    fitId: string,
    row: NonNullable<Awaited<ReturnType<typeof fitRow>>>,
  ): Promise<{ spec: ModelSpec; data: FitData } | null> {
    try {
      const spec = specOfRecipe(row.recipe);
      const data = await this.data.get(inputsOfFit({ ...row, recipe: row.recipe }));
      return { spec, data };
    } catch (error) {
      if (error instanceof IntakeError) {
        await this.fail(fitId, error.problems[0]?.code ?? "invalid_data", error.message);
        return null;
      }
      this.log(error, `fit ${fitId}: building its data`);
      await this.fail(fitId, "data_unavailable", "The fit's data versions could not be read.");
      return null;
    }
  }

  /** `fit` job: start the fit, then split it into chunk jobs or compute it whole. */
  private async planFit(job: PgBoss.JobWithMetadata<FitJobData>): Promise<void> {
    const { fitId } = job.data;
    const row = await fitRow(this.db, fitId);
    // A retried plan (the first planner died) finds the fit running and plans it again: chunks are stored once.
    if (!row || !(row.status === "queued" || (row.status === "running" && job.retryCount > 0)))
      return;
    const inputs = await this.inputsOf(fitId, row);
    if (!inputs) return;
    const startedAt = new Date();
    if (row.status === "queued") {
      if (!(await this.store.markRunning(fitId, startedAt))) return;
      this.emit({
        type: "status",
        fitId,
        status: "running",
        progress: { fraction: 0, secondsLeft: null },
        error: null,
      });
    }
    let plan: FitChunks | null;
    try {
      plan = fitChunks(inputs.spec, inputs.data);
    } catch (error) {
      if (error instanceof StatsError) return await this.fail(fitId, error.code, error.message);
      throw error;
    }
    if (!plan) {
      await this.computeFit(fitId, inputs, null, row.startedAt ?? startedAt);
      return;
    }
    this.plans.set(fitId, Promise.resolve(plan));
    await recordPlan(this.db, fitId, partCount(plan), startedAt);
    const boss = this.boss as PgBoss;
    const sendChunks = async (from: number, to: number) => {
      await boss.insert(
        Array.from({ length: to - from }, (_, k) => ({
          name: CHUNK_QUEUE,
          data: { fitId, chunk: from + k } satisfies ChunkJobData,
        })),
      );
      this.wake(CHUNK_QUEUE);
    };
    if (plan.kind === "permutation") {
      // The regions before the test need only the data: other workers start on them while the
      // split test and the setups are stored.
      await this.sendRowsParts(fitId, plan);
      await storeChunk(this.db, fitId, splitMark(plan), this.id);
      // Each region chunk's setup is stored before its chunks are sent, so that no other worker
      // plans the fit again, and its chunks are sent at once: at biobank size a setup is tens of
      // megabytes, and the first chunks need not wait for the others' storing.
      for (let r = 0; r < plan.regionChunks.length; r++) {
        const setup = regionChunkSetup(plan, r);
        await storeSetups(this.db, fitId, [setup]);
        this.keepSetup(fitId, setup);
        await sendChunks(setup.chunkFrom, setup.chunkTo);
      }
    } else await sendChunks(0, plan.chunks);
  }

  /** Sends the jobs of a split permutation test's parts of its regions before the test. */
  private async sendRowsParts(fitId: string, plan: FitChunks): Promise<void> {
    const parts = rowsParts(plan);
    if (parts.length === 0) return;
    await (this.boss as PgBoss).insert(
      parts.map((part) => ({ name: ROWS_QUEUE, data: { fitId, ...part } satisfies RowsJobData })),
    );
    this.wake(ROWS_QUEUE);
  }

  /**
   * `fit-rows` job: a part of a split permutation test's regions before the
   * test (their rows and results, fit-chunks.ts `rowsParts`), computed on
   * the fit thread while chunk threads compute chunks, stored once with
   * its mark, counted as a part. A fit no longer running (cancelled) drops it.
   */
  private async computeRows(job: PgBoss.JobWithMetadata<RowsJobData>): Promise<void> {
    const { fitId, chunk, from, to } = job.data;
    const row = await fitRow(this.db, fitId);
    if (row?.status !== "running") return await this.dropped(fitId);
    const plan = await planOf(this.db, fitId);
    if (!plan) throw new Error(`fit ${fitId} has no plan`);
    if (await hasChunk(this.db, fitId, chunk)) {
      const stored = await storedChunks(this.db, fitId);
      return await this.reportChunks(fitId, stored.length, plan.chunks);
    }
    const inputs = await this.inputsOf(fitId, row);
    if (!inputs) return;
    const part = { chunk, from, to };
    const stored = await this.computeFit(fitId, inputs, null, new Date(), "only", part);
    if (!stored?.regionsBeforeTest) return;
    if ((await fitStatus(this.db, fitId)) !== "running") return await this.dropped(fitId);
    const mark = rowsMark(part, stored.regionsBeforeTest);
    const done = await storeChunk(this.db, fitId, mark, this.id);
    await this.reportChunks(fitId, done, plan.chunks);
  }

  /** A job found its fit no longer running: a cancelled or failed fit keeps no region rows and no setups. */
  private async dropped(fitId: string): Promise<void> {
    const status = await fitStatus(this.db, fitId);
    if (status === "cancelled" || status === "failed") {
      await this.store.clearRegionRows(fitId);
      await forgetSetups(this.db, fitId);
    }
  }

  /**
   * The stored setup serving chunk `chunk` of a fit, read once per region
   * chunk in this process; null when the fit has none stored (not a
   * permutation test, or planned before setups were stored).
   */
  private async setupFor(fitId: string, chunk: number): Promise<RegionChunkSetup | null> {
    const kept = () =>
      [...this.setups.entries()].find(
        ([key, s]) => key.startsWith(`${fitId}:`) && chunk >= s.chunkFrom && chunk < s.chunkTo,
      )?.[1];
    // One read of a fit's setups at a time here: the other chunk in hand may be reading the same one.
    let pending = this.reading.get(fitId);
    while (!kept() && pending) {
      await pending.catch(() => {});
      pending = this.reading.get(fitId);
    }
    const found = kept();
    if (found) return found;
    const reading = setupOf(this.db, fitId, chunk);
    this.reading.set(fitId, reading);
    try {
      const read = await reading;
      if (read) this.keepSetup(fitId, read);
      return read;
    } finally {
      if (this.reading.get(fitId) === reading) this.reading.delete(fitId);
    }
  }

  /** Keeps a setup of a fit for later chunks (the last eight). */
  private keepSetup(fitId: string, setup: RegionChunkSetup): void {
    const key = `${fitId}:${setup.regionChunk}`;
    this.setups.delete(key);
    this.setups.set(key, setup);
    while (this.setups.size > 8) this.setups.delete(this.setups.keys().next().value as string);
  }

  /** The chunk grid of a running fit (built once per fit in this process). */
  private planFor(fitId: string): Promise<FitChunks> {
    let plan = this.plans.get(fitId);
    if (!plan) {
      plan = (async () => {
        const row = await fitRow(this.db, fitId);
        if (!row) throw new Error(`fit ${fitId} is gone`);
        const spec = specOfRecipe(row.recipe);
        const data = await this.data.get(inputsOfFit(row));
        const built = fitChunks(spec, data);
        if (!built) throw new Error(`fit ${fitId} is not split into chunks`);
        return built;
      })();
      this.plans.set(fitId, plan);
      plan.catch(() => this.plans.delete(fitId));
      // Keep the grids of the last few fits only.
      while (this.plans.size > 2) this.plans.delete(this.plans.keys().next().value as string);
    }
    return plan;
  }

  /** Runs `task` while reading the fit's status every second; `stop` is called once it is no longer running. */
  private async watching<T>(fitId: string, stop: () => void, task: () => Promise<T>): Promise<T> {
    let reading = false;
    const timer = setInterval(() => {
      if (reading) return;
      reading = true;
      fitStatus(this.db, fitId)
        .then((status) => {
          if (status !== "running") stop();
        })
        .catch((error) => this.log(error, `fit ${fitId}: status`))
        .finally(() => {
          reading = false;
        });
    }, WATCH_MS);
    try {
      return await task();
    } finally {
      clearInterval(timer);
    }
  }

  /** `fit-chunk` job: compute the chunk unless stored; store it once; send the merge after the last. */
  private async computeChunk(job: PgBoss.JobWithMetadata<ChunkJobData>): Promise<void> {
    const { fitId, chunk } = job.data;
    // Cancelled or finished: dropped.
    if ((await fitStatus(this.db, fitId)) !== "running") return await this.dropped(fitId);
    if (!(await hasChunk(this.db, fitId, chunk))) {
      let result: ChunkResult;
      const control = new Int32Array(new SharedArrayBuffer(8));
      try {
        // A permutation test's chunk from its region chunk's stored setup; any other from the plan built here.
        const setup = await this.setupFor(fitId, chunk);
        const plan = setup ? null : await this.planFor(fitId);
        const buffer = control.buffer as SharedArrayBuffer;
        // No requests to serve here: chunks at normal priority.
        const task = {
          ...(setup
            ? { type: "permutation" as const, task: setupChunkTask(setup, chunk, buffer) }
            : chunkTaskOf(plan as FitChunks, chunk, buffer)),
          fullPriority: true,
        };
        const outcome = await this.watching(
          fitId,
          () => Atomics.store(control, 0, 1),
          () => (this.chunkPool as Piscina).run(task) as Promise<ChunkTaskOutcome<ChunkResult>>,
        );
        // The fit stopped running: the chunk is dropped.
        if (Atomics.load(control, 0) === 1) return await this.dropped(fitId);
        if (!outcome.ok) {
          if (outcome.code === "cancelled") return; // the fit stopped running: the chunk is dropped
          // A statistical precondition fails the same way on every try: the fit fails now.
          return await this.fail(fitId, outcome.code, outcome.message);
        }
        result = outcome.value;
        const row =
          plan === null && result.kind === "permutation"
            ? encodeSetupChunk(setup as RegionChunkSetup, chunk, result.counts)
            : encodeChunk(plan as FitChunks, chunk, result);
        const done = await storeChunk(this.db, fitId, row, this.id);
        // The number of parts as the planner recorded it (a worker with a setup has no plan here).
        const parts = plan ? partCount(plan) : (await planOf(this.db, fitId))?.chunks;
        if (parts === undefined) throw new Error(`fit ${fitId} has no plan`);
        await this.reportChunks(fitId, done, parts);
      } catch (error) {
        if (Atomics.load(control, 0) === 1) return; // the fit stopped running: the chunk is dropped
        if (job.retryCount >= job.retryLimit) {
          this.log(error, `fit ${fitId}: chunk ${chunk}, last try`);
          if (error instanceof StatsError) await this.fail(fitId, error.code, error.message);
          else await this.fail(fitId, "internal_error", INTERNAL_FAILURE);
        }
        throw error;
      }
    } else {
      const plan = await planOf(this.db, fitId);
      const stored = await storedChunks(this.db, fitId);
      if (plan) await this.reportChunks(fitId, stored.length, plan.chunks);
    }
  }

  private async reportChunks(fitId: string, done: number, total: number): Promise<void> {
    const row = await fitRow(this.db, fitId);
    if (row?.status !== "running") return;
    const fraction = done / total;
    const elapsed = row.startedAt ? Date.now() - row.startedAt.getTime() : 0;
    const secondsLeft = secondsLeftOf(fraction, elapsed);
    await this.store.writeProgress(fitId, fraction, secondsLeft);
    this.emit({
      type: "progress",
      fitId,
      status: "running",
      progress: { fraction, secondsLeft },
      error: null,
    });
    if (done >= total) {
      await (this.boss as PgBoss).send(MERGE_QUEUE, { fitId });
      this.wake(MERGE_QUEUE);
    }
  }

  /** `fit-merge` job: merge a fit's chunks and store its result, once. */
  private async merge(fitId: string): Promise<void> {
    await withMergeLock(this.db, fitId, async () => {
      const row = await fitRow(this.db, fitId);
      const plan = await planOf(this.db, fitId);
      if (row && row.status !== "running") await this.dropped(fitId);
      if (!row || row.status !== "running" || !plan || plan.mergedAt) return;
      const stored = await storedChunks(this.db, fitId);
      if (stored.length < plan.chunks) return;
      const kind = chunkKind(specOfRecipe(row.recipe));
      if (!kind) throw new Error(`fit ${fitId} is not split into chunks`);
      const merged = mergedOfStored(kind, stored);
      const task = mergeTask(merged);
      if (task) {
        // The split test and the regions before it were stored as parts: a chunk thread adds the counts.
        await this.finishMerge(fitId, task, merged, row.startedAt ?? new Date());
        await markMerged(this.db, fitId, new Date());
        await forgetSetups(this.db, fitId);
        return;
      }
      const inputs = await this.inputsOf(fitId, row);
      if (!inputs) return;
      // A permutation test's region rows were stored with its parts: the merge stores the summary only.
      const rows = stored.some((r) => r.block < 0) ? "skip" : "all";
      await this.computeFit(fitId, inputs, merged, row.startedAt ?? new Date(), rows);
      await markMerged(this.db, fitId, new Date());
      await forgetSetups(this.db, fitId);
    });
  }

  /** Runs a merge task on the chunk thread and stores the fit's result. */
  private async finishMerge(
    fitId: string,
    task: ChunkTask,
    merged: MergedChunks,
    startedAt: Date,
  ): Promise<void> {
    const outcome = (await (this.chunkPool as Piscina).run(
      { ...task, fullPriority: true },
      { transferList: transferablesOf(merged) },
    )) as ChunkTaskOutcome<FitSummary>;
    if (!outcome.ok) return await this.fail(fitId, outcome.code, outcome.message);
    await this.storeResult(fitId, outcome.value, startedAt);
  }

  /**
   * Marks the fit done with its result (its region rows stored); when it
   * was no longer running, removes its rows if it was cancelled or failed —
   * a fit another computation finished keeps them.
   */
  private async storeResult(fitId: string, summary: unknown, startedAt: Date): Promise<boolean> {
    const done = await this.store.markDone(fitId, summary, new Date(), startedAt, () => false);
    if (!done) {
      await this.dropped(fitId);
      return false;
    }
    this.emit({
      type: "status",
      fitId,
      status: "done",
      progress: { fraction: 1, secondsLeft: 0 },
      error: null,
    });
    return true;
  }

  /**
   * Runs the fit in the fit thread (with `merged` chunks in place of the
   * permutation test or the curve's null draws when given) and stores its region rows and result
   * through the fit store, as the embedded path does.
   */
  private async computeFit(
    fitId: string,
    inputs: { spec: ModelSpec; data: FitData },
    merged: MergedChunks | null,
    startedAt: Date,
    rows: "all" | "only" | "skip" = "all",
    part?: RowsPart,
  ): Promise<{ regionsBeforeTest?: RegionResult[] } | null> {
    // Rows are never removed here but only when the fit is cancelled or fails: rows left by an
    // earlier try, or stored by a second computation of the same part (a worker cut off from the
    // database whose job was handed on, and which then finished it too), are the same rows, and
    // removing them could take rows from a fit the other computation has finished.
    const channel = new MessageChannel();
    let storing: Promise<void> = Promise.resolve();
    let lastProgress = 0;
    let regionsDone: () => void = () => {};
    const allRegions = new Promise<void>((resolve) => {
      regionsDone = resolve;
    });
    channel.port1.on("message", (message: FitTaskMessage) => {
      if (message.type === "region") {
        // Read back at once: the message's bytes are let go, the texts wait for their turn.
        const texts = regionRowsOf(message);
        storing = storing.then(() => this.store.storeRegionRowOnce(fitId, texts));
      } else if (message.type === "regions-done") regionsDone();
      else if (message.type === "progress" && !merged && rows === "all") {
        // A fit computed whole reports the thread's progress, at most every half second.
        const now = Date.now();
        if (now - lastProgress < 500) return;
        lastProgress = now;
        const fraction = Math.min(1, Math.max(0, message.fraction));
        const secondsLeft = secondsLeftOf(fraction, now - startedAt.getTime());
        storing = storing.then(() => this.store.writeProgress(fitId, fraction, secondsLeft));
        this.emit({
          type: "progress",
          fitId,
          status: "running",
          progress: { fraction, secondsLeft },
          error: null,
        });
      }
    });
    const task: FitTask = {
      ...inputs,
      port: channel.port2,
      rows,
      fullPriority: true,
      ...(merged ? { merged } : {}),
      ...(part ? { regionRange: [part.from, part.to] as [number, number] } : {}),
    };
    const controller = new AbortController();
    let outcome: FitTaskOutcome;
    try {
      outcome = await this.watching(
        fitId,
        () => controller.abort(new Error("cancelled")),
        () =>
          (this.fitPool as Piscina).run(task, {
            transferList: [channel.port2, ...(merged ? transferablesOf(merged) : [])],
            signal: controller.signal,
          }) as Promise<FitTaskOutcome>,
      );
      // The thread's last message says every region was sent; then the rows are stored.
      if (outcome.ok) await allRegions;
      await storing;
    } catch (error) {
      channel.port1.close();
      await storing.catch(() => {});
      if (controller.signal.aborted) {
        // No longer running: cancelled (rows removed), or finished by another computation (kept).
        await this.dropped(fitId);
        return null;
      }
      throw error;
    }
    channel.port1.close();
    if (!outcome.ok) {
      await this.fail(fitId, outcome.code, outcome.message);
      return null;
    }
    if (rows === "only") return { regionsBeforeTest: outcome.regionsBeforeTest };
    return (await this.storeResult(fitId, outcome.summary, startedAt)) ? {} : null;
  }
}
