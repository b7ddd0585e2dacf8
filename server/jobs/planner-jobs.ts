/**
 * The planner's worker thread.
 *
 * Every planner question is answered in one worker thread (piscina,
 * server/jobs/planner-task.ts) so the request thread never computes: a
 * formula answer takes up to tens of milliseconds (the noncentral t
 * search), a simulation up to the cost cap (PLANNER_MAX_DRAWS, about 18 s).
 * One thread, since a second would take the core the request thread needs
 * on a 2-core machine; questions wait their turn, at most `maxWaiting` of
 * them (more answer 429 `planner_busy`). The thread starts with the first
 * question and ends after `idleMs` without one.
 *
 * A question whose asker has gone (the route aborts its signal when the
 * client disconnects) is dropped from the queue or, when running, stopped
 * by ending its worker thread; `aborted` counts those.
 */
import type { Piscina } from "piscina";
import { workerPool } from "./worker-pool";
import { HttpError } from "../http/errors";
import type { PlannerAnswer, PlannerQuestion } from "../../contract/planner";
import type { PlannerTaskOutcome } from "./planner-task";

export interface PlannerJobsOptions {
  /** Questions that may wait behind the running one (default 4). */
  maxWaiting?: number;
  /** The thread ends after this long without a question (default 5 minutes). */
  idleMs?: number;
}

export class PlannerJobs {
  private pool: Piscina | null = null;
  private readonly maxWaiting: number;
  private readonly idleMs: number;
  private inFlight = 0;
  private closed = false;
  /** Questions stopped because their asker left. */
  aborted = 0;

  constructor(options: PlannerJobsOptions = {}) {
    this.maxWaiting = options.maxWaiting ?? 4;
    this.idleMs = options.idleMs ?? 5 * 60_000;
  }

  /** Answers a planner question in the worker thread. Rejects with HttpError for a refusal, with an AbortError when `signal` aborts. */
  async plan(question: PlannerQuestion, signal: AbortSignal): Promise<PlannerAnswer> {
    if (this.closed) throw new Error("PlannerJobs: closed");
    if (this.inFlight > this.maxWaiting) {
      throw new HttpError(
        429,
        "planner_busy",
        "The planner is busy with other questions; ask again in a minute.",
      );
    }
    this.inFlight++;
    try {
      const outcome = (await this.getPool().run(question, { signal })) as PlannerTaskOutcome;
      if (!outcome.ok)
        throw new HttpError(outcome.status, outcome.code, outcome.message, outcome.details);
      return outcome.answer;
    } catch (error) {
      if (signal.aborted) this.aborted++;
      throw error;
    } finally {
      this.inFlight--;
    }
  }

  /** Stops the worker thread (questions in flight are rejected). */
  async close(): Promise<void> {
    this.closed = true;
    const pool = this.pool;
    this.pool = null;
    if (pool) await pool.destroy();
  }

  private getPool(): Piscina {
    if (!this.pool) {
      this.pool = workerPool("planner-task.ts", {
        minThreads: 0,
        maxThreads: 1,
        idleTimeout: this.idleMs,
      });
    }
    return this.pool;
  }
}

let shared: PlannerJobs | null = null;

/** The process's planner thread (created on first use; idle, it does not keep the process alive). */
export function sharedPlannerJobs(): PlannerJobs {
  shared ??= new PlannerJobs();
  return shared;
}
