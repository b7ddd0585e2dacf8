/**
 * Worker-thread task of the planner: answers one planner question
 * (server/stats/planner.ts) off the request thread. Computes only.
 * A refusal (the cost cap, a statistical precondition) comes back as
 * `{ ok: false, status, code, message, details }`, since error classes do
 * not survive the thread boundary; anything else is thrown (the main thread
 * logs it). Runs at the fit threads' lower priority, so requests come first.
 */
import type { PlannerAnswer, PlannerQuestion } from "../../contract/planner";
import { planStudy } from "../stats/planner";
import { StatsError } from "../stats/errors";
import { lowerWorkerThreadPriority } from "./thread-priority";

lowerWorkerThreadPriority();

export type PlannerTaskOutcome =
  | { ok: true; answer: PlannerAnswer }
  | { ok: false; status: number; code: string; message: string; details?: unknown };

export default function runPlannerTask(question: PlannerQuestion): PlannerTaskOutcome {
  try {
    return { ok: true, answer: planStudy(question) };
  } catch (error) {
    if (error instanceof StatsError)
      return {
        ok: false,
        status: 422,
        code: error.code,
        message: error.message,
        details: error.details,
      };
    throw error;
  }
}
