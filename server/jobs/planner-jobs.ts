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
import { OneThread } from "./worker-pool";
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
  private readonly thread: OneThread;
  /** Questions stopped because their asker left. */
  aborted = 0;

  constructor(options: PlannerJobsOptions = {}) {
    this.thread = new OneThread("planner-task.ts", {
      maxWaiting: options.maxWaiting ?? 4,
      idleMs: options.idleMs ?? 5 * 60_000,
      busy: () =>
        new HttpError(
          429,
          "planner_busy",
          "The planner is busy with other questions; ask again in a minute.",
        ),
    });
  }

  /** Answers a planner question in the worker thread. Rejects with HttpError for a refusal, with an AbortError when `signal` aborts. */
  async plan(question: PlannerQuestion, signal: AbortSignal): Promise<PlannerAnswer> {
    try {
      const outcome = (await this.thread.run(question, signal)) as PlannerTaskOutcome;
      if (!outcome.ok)
        throw new HttpError(outcome.status, outcome.code, outcome.message, outcome.details);
      return outcome.answer;
    } catch (error) {
      if (signal.aborted) this.aborted++;
      throw error;
    }
  }

  /** Stops the worker thread (questions in flight are rejected). */
  close(): Promise<void> {
    return this.thread.close();
  }
}

let shared: PlannerJobs | null = null;

/** The process's planner thread (created on first use; idle, it does not keep the process alive). */
export function sharedPlannerJobs(): PlannerJobs {
  shared ??= new PlannerJobs();
  return shared;
}
