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
 * A job a worker does not finish within its lease (`leaseSeconds`: the
 * worker was killed, or lost the database) is failed by the queue's
 * maintenance and retried, up to `retries` times.
 */
import PgBoss from "pg-boss";
import { type Database, driverOf } from "../../db/client";

export const FIT_QUEUE = "fit";
export const CHUNK_QUEUE = "fit-chunk";
export const MERGE_QUEUE = "fit-merge";
export const ROWS_QUEUE = "fit-rows";

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
  /** Seconds a worker may hold a job before the queue retries it (default 600). */
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
    db: { executeSql: (text, values) => pool.query(text, values) },
    supervise: options.supervise,
    schedule: false,
    maintenanceIntervalSeconds: options.maintenanceSeconds ?? 30,
  });
  boss.on("error", (error) => console.error("[covarion] job queue:", error));
  await boss.start();
  const queue = {
    retryLimit: options.retries ?? 3,
    retryDelay: 1,
    expireInSeconds: options.leaseSeconds ?? 600,
  };
  for (const name of [FIT_QUEUE, CHUNK_QUEUE, ROWS_QUEUE, MERGE_QUEUE]) {
    if (!(await boss.getQueue(name))) {
      try {
        await boss.createQueue(name, { name, ...queue });
      } catch (error) {
        // Another process created it at the same moment.
        if (!(await boss.getQueue(name))) throw error;
      }
    } else if (options.supervise) await boss.updateQueue(name, { name, ...queue });
  }
  return boss;
}
