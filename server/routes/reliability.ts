/**
 * Reliability of a study's measures.
 *
 * GET /api/studies/:studyId/trait-reliabilities
 *       → [{ column, reliability, source, updatedBy, updatedAt }] (members)
 * PUT /api/studies/:studyId/trait-reliabilities
 *       [{ column, reliability (0 < r ≤ 1), source }] → the new list (Owner, Analyst; audited);
 *       409 without a participant sheet, 422 for a column that is not a numeric trait of it
 * GET /api/studies/:studyId/reliability
 *       → per region of the current brain table the six Shrout & Fleiss ICC forms with
 *         95% intervals and the session count (members); 409 without sessions
 */
import { Router } from "express";
import { authorize, authorizedStudy } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { noQuery, parsed, validate } from "../http/validate";
import {
  currentBrainReliability,
  listTraitReliabilities,
  replaceTraitReliabilities,
} from "../services/reliability";
import { traitReliabilityList } from "../../contract/views/reliability";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const read = { params: studyParams, query: noQuery };
const write = { params: studyParams, query: noQuery, body: traitReliabilityList };

export function reliabilityRoutes(deps: RouteDeps): Router {
  const router = Router();

  router.get(
    "/studies/:studyId/trait-reliabilities",
    authorize("data.read"),
    validate(read),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      res.json(await listTraitReliabilities(deps.db, study.id));
    },
  );

  // Stating a trait's reliability is part of the participant sheet's settings: the roles that manage data.
  router.put(
    "/studies/:studyId/trait-reliabilities",
    authorize("data.upload"),
    validate(write),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      res.json(
        await replaceTraitReliabilities(
          deps.db,
          signedInUser(res),
          study.id,
          parsed(res, write).body,
          deps.clock(),
        ),
      );
    },
  );

  router.get(
    "/studies/:studyId/reliability",
    authorize("data.read"),
    validate(read),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      res.json(await currentBrainReliability(deps.db, study.id));
    },
  );

  return router;
}
