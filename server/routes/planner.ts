/**
 * Sample-size planner (no study data needed).
 *
 * POST /api/planner  → { n, nPerGroup?, observableEffect, curve: [{ n, power }], method, simulation? }
 *
 * Answered in the planner's worker thread (server/jobs/planner-jobs.ts);
 * a simulation over the cost cap answers 422 `planner_too_costly`. When the
 * client disconnects before the answer, its question is stopped.
 */
import { Router } from "express";
import { authorize } from "../auth/permissions";
import { noQuery, parsed, validate } from "../http/validate";
import { type PlannerJobs, sharedPlannerJobs } from "../jobs/planner-jobs";
import { plannerQuestionSchema } from "../../contract/planner";
import type { RouteDeps } from "./deps";

const ask = { query: noQuery, body: plannerQuestionSchema };

export function plannerRoutes(_deps: RouteDeps, jobs: PlannerJobs = sharedPlannerJobs()): Router {
  const router = Router();
  router.post("/planner", authorize("planner.use"), validate(ask), async (_req, res) => {
    const asker = new AbortController();
    res.on("close", () => {
      if (!res.writableFinished) asker.abort(new Error("the client disconnected"));
    });
    try {
      res.json(await jobs.plan(parsed(res, ask).body, asker.signal));
    } catch (error) {
      if (asker.signal.aborted) return; // nobody is listening for the answer
      throw error;
    }
  });
  return router;
}
