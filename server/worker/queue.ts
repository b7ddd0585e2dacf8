/**
 * The job queue of fits on a PostgreSQL server: pg-boss 10 on Covarion's own
 * database (its tables in the `pgboss` schema), reached through the
 * database's connection pool. Four queues:
 *
 * - `fit` { fitId }: a queued fit. A worker plans it: a fit whose
 *   permutation test is split (server/jobs/fit-chunks.ts) gets one
 *   `fit-chunk` job per chunk; any other fit is computed whole there.
 * - `fit-chunk` { fitId, chunk }: one chunk; its result is written once.
 * - `fit-rows` { fitId, chunk, from, to }: a split permutation test's
 *   regions from … to − 1 before the test (rows and results), stored once
 *   as part `chunk` (server/jobs/fit-chunks.ts `rowsParts`).
 * - `fit-merge` { fitId }: all chunks are in; one party merges and stores.
 *
 * A job in the hands of a worker whose heartbeat stopped (killed, or cut
 * off from the database) is failed by another worker and retried at once
 * (server/worker/fit-worker.ts); a try that runs longer than its lease
 * (`leaseSeconds`, the longest one try may run) is failed by pg-boss and
 * retried.
 * Either way a job has `retries` retries; a job whose last try fails is
 * sent, with its data and the failure, to a fifth queue, `fit-failed`
 * (the others' dead letter), where a worker fails its fit with the reason.
 */
import { sql } from "drizzle-orm";
import PgBoss from "pg-boss";
import { claim, type Database, driverOf } from "../../db/client";
import { workers } from "../../db/schema";
import { INTERNAL_FAILURE } from "../jobs/fit-jobs";
import { aliveSince } from "../services/workers";

export const FIT_QUEUE = "fit";
export const CHUNK_QUEUE = "fit-chunk";
export const MERGE_QUEUE = "fit-merge";
export const ROWS_QUEUE = "fit-rows";
/** Where a job of the four queues above goes when its last try fails. */
export const FAILED_QUEUE = "fit-failed";

/** The queues whose jobs a worker holds while it computes (handed back when it stops). */
const WORK_QUEUES = [FIT_QUEUE, CHUNK_QUEUE, ROWS_QUEUE, MERGE_QUEUE];

/**
 * Default lease: the longest one try of a job may run (six hours) before
 * the queue retries it. A stopped worker's jobs come back long before
 * that, through the heartbeats; the lease only bounds a try that hangs.
 */
export const DEFAULT_LEASE_SECONDS = 6 * 3600;

/** The database schema of pg-boss's tables. */
const QUEUE_SCHEMA = "pgboss";

/** The start of the failure written for a job handed back because its worker stopped beating. */
export const WORKER_STOPPED = "its worker stopped";

/** Why a job's last try failed, and what its fit then says. */
export interface LastTryFailure {
  /** the fit's error code */
  code: "worker_lost" | "part_too_long" | "internal_error";
  /** the fit's error message (for people) */
  fitMessage: string;
  /** the failure as the queue stored it (for the log) */
  message: string;
}

/**
 * Why a job's last try failed, from its stored output: its worker was lost
 * (stopped beating, stopped while holding it, or the queue's maintenance
 * found the lease run out: a worker that hangs or died unseen), the try
 * ran past its lease in a live worker, or its work threw. `tries` is how
 * many tries the job had.
 */
export function lastTryFailure(output: unknown, tries: number): LastTryFailure {
  const inTries = `${tries} ${tries === 1 ? "try" : "tries"}`;
  const o = (output ?? {}) as { message?: unknown; value?: unknown };
  const inner = o.value as { message?: unknown } | string | undefined;
  const message = String(
    o.message ?? (typeof inner === "string" ? inner : inner?.message) ?? "no message",
  );
  // pg-boss 10's own words: a lease run out (maintenance), a worker stopping, a try timed out in its worker.
  if (
    message.startsWith(WORKER_STOPPED) ||
    message === "job failed by timeout in active state" ||
    message === "pg-boss shut down while active"
  )
    return {
      code: "worker_lost",
      message,
      fitMessage: `The fit stopped: one of its parts was not finished in ${inTries}, because each time the worker process computing it stopped or lost the database. It has been logged; start the fit again, and if it stops again the workers' logs say why.`,
    };
  if (message.startsWith("handler execution exceeded"))
    return {
      code: "part_too_long",
      message,
      fitMessage: `The fit stopped: one of its parts ran longer than the workers' lease (WORKER_LEASE_SECONDS) in ${tries === 1 ? "its one try" : `each of its ${tries} tries`}. It has been logged; the server's administrator can lengthen the lease.`,
    };
  return {
    code: "internal_error",
    message,
    fitMessage: INTERNAL_FAILURE,
  };
}

export interface FitJobData {
  fitId: string;
}

export interface ChunkJobData {
  fitId: string;
  chunk: number;
}

export interface RowsJobData {
  fitId: string;
  /** the part's number among the fit's stored parts */
  chunk: number;
  from: number;
  to: number;
}

export interface QueueOptions {
  /** The longest one try of a job may run, in seconds, before the queue retries it (default six hours). */
  leaseSeconds?: number;
  /** Retries of a job that failed or whose lease ran out (default 3). */
  retries?: number;
  /** Seconds between the queue's maintenance passes, which retry expired jobs (default 30). */
  maintenanceSeconds?: number;
  /** Workers supervise the queue (expire, archive); the web server only sends. */
  supervise: boolean;
}

/** Starts pg-boss on the server database `db` (creating its tables and the four queues when missing). */
export async function startQueue(db: Database, options: QueueOptions): Promise<PgBoss> {
  const driver = driverOf(db);
  if (driver.kind !== "server") throw new Error("the job queue needs a PostgreSQL server");
  const pool = driver.pool;
  const boss = new PgBoss({
    schema: QUEUE_SCHEMA,
    db: { executeSql: (text, values) => pool.query(text, values) },
    supervise: options.supervise,
    schedule: false,
    maintenanceIntervalSeconds: options.maintenanceSeconds ?? 30,
  });
  boss.on("error", (error) => console.error("[covarion] job queue:", error));
  const queue = {
    retryLimit: options.retries ?? 3,
    retryDelay: 1,
    expireInSeconds: options.leaseSeconds ?? DEFAULT_LEASE_SECONDS,
  };
  // One process at a time: pg-boss installing its tables, or two processes creating the same
  // queues at once on a new database, deadlocked one of them.
  const setup = await claim(db, "covarion job queue setup");
  try {
    await boss.start();
    // The dead letter first: the others name it.
    await ensureQueue(boss, FAILED_QUEUE, queue, options.supervise);
    for (const name of WORK_QUEUES)
      await ensureQueue(boss, name, { ...queue, deadLetter: FAILED_QUEUE }, options.supervise);
  } finally {
    await setup.release();
  }
  return boss;
}

/** Creates queue `name` when missing; a supervising process also brings its settings up to date. */
async function ensureQueue(
  boss: PgBoss,
  name: string,
  settings: Omit<PgBoss.Queue, "name">,
  supervise: boolean,
): Promise<void> {
  // Under the set-up claim (startQueue): no other process creates it meanwhile.
  if (!(await boss.getQueue(name))) await boss.createQueue(name, { name, ...settings });
  else if (supervise) await boss.updateQueue(name, { name, ...settings });
}

/**
 * The jobs in progress that no live worker holds: active in one of the
 * work queues for longer than a live worker's heartbeat may be old
 * (`WORKER_ALIVE_SECONDS`, services/workers.ts) and listed in the jobs in
 * hand of no live worker. A worker lists a job as soon as it takes it, so such a job's
 * worker stopped — or died between taking it and listing it. Reads
 * pg-boss 10's job table (its `name`, `id`, `state`, `started_on`).
 */
export async function orphanedJobs(db: Database): Promise<{ queue: string; id: string }[]> {
  const since = aliveSince();
  const result = (await db.execute(sql`
    select j.name as queue, j.id::text as id
    from ${sql.identifier(QUEUE_SCHEMA)}.job j
    where j.name in (${sql.join(
      WORK_QUEUES.map((q) => sql`${q}`),
      sql`, `,
    )})
      and j.state = 'active' and j.started_on < ${since}
      and not exists (
        select 1 from ${workers} w, jsonb_array_elements(w.jobs) held
        where w.seen_at >= ${since} and held->>'id' = j.id::text)`)) as unknown as {
    rows: { queue: string; id: string }[];
  };
  return result.rows;
}
