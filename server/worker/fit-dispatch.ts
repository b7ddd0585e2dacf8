/**
 * The web server's side of the job queue: a queued fit is sent to the
 * `fit` queue (server/worker/queue.ts) and worker processes compute it; the
 * web server only enqueues and reports (fit rows, fit events). Cancelling
 * needs nothing here: the fit's row says cancelled, and workers stop
 * handing out and computing its chunks when they see it.
 */
import type PgBoss from "pg-boss";
import type { Database } from "../../db/client";
import type { FitDispatch } from "../jobs/fit-jobs";
import { FIT_QUEUE, type FitJobData, startQueue } from "./queue";

/** Sends queued fits to the job queue on `db` (a PostgreSQL server); the queue starts with the first fit. */
export function queueDispatch(db: Database): FitDispatch {
  let boss: Promise<PgBoss> | null = null;
  const started = () => {
    boss ??= startQueue(db, { supervise: false });
    boss.catch(() => {
      boss = null;
    });
    return boss;
  };
  return {
    async enqueue(fitId: string): Promise<void> {
      const data: FitJobData = { fitId };
      await (await started()).send(FIT_QUEUE, data);
    },
    async close(): Promise<void> {
      const running = boss;
      boss = null;
      if (running) await (await running).stop({ graceful: false, close: false });
    },
  };
}
