/**
 * Sample-size planner (no study data needed).
 *
 * POST /api/planner  → { n, nPerGroup?, observableEffect, curve: [{ n, power }], method, simulation? }
 */
import { Router } from "express";
import { authorize } from "../auth/permissions";
import { noQuery, parsed, validate } from "../http/validate";
import { plannerQuestionSchema } from "../model/planner";
import { planStudy } from "../services/planner";
import type { RouteDeps } from "./deps";

const ask = { query: noQuery, body: plannerQuestionSchema };

export function plannerRoutes(_deps: RouteDeps): Router {
  const router = Router();
  router.post("/planner", authorize("planner.use"), validate(ask), (_req, res) => {
    res.json(planStudy(parsed(res, ask).body));
  });
  return router;
}
