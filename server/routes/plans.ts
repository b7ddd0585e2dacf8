/**
 * Analysis plans (contract/plans.ts; services/plans.ts):
 *
 * GET    /api/studies/:studyId/plans   → PlanView[] newest first (every member)
 * POST   /api/studies/:studyId/plans   { plan, replaces?, reason? } → 201 PlanView (Owner, Analyst); a new
 *                                         version names the plan it replaces and why; the plan's exclusion rules
 *                                         are applied at once when the study holds confirmed data
 * GET    /api/plans/:planId            → PlanView (every member; a plan of a study you are not in answers 404)
 * PATCH  /api/plans/:planId            → 409 plan_registered (a registered plan never changes)
 * DELETE /api/plans/:planId            → 409 plan_registered
 * POST   /api/plans/:planId/countersign → PlanView with the countersignature (Reviewer, Owner); 409 when already
 *                                         signed, 409 second_person_required on one's own plan
 *
 * PlanView: { id, studyId, sha256, registeredAt, registeredBy, dataSeen, replaces, replaceReason,
 * countersignedBy, countersignedAt, plan }; `sha256` is the SHA-256 of the canonical JSON (RFC 8785)
 * of `plan` exactly as answered.
 */
import { Router } from "express";
import { z } from "zod";
import { planCreateSchema } from "../../contract/plans";
import { authorize, authorizedStudy, type StudyOf } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import {
  countersignPlan,
  getPlan,
  listPlans,
  planRegistered,
  registerPlan,
  studyOfPlan,
} from "../services/plans";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const planStudy: StudyOf = { resolve: studyOfPlan, notFound: "Plan not found." };
const list = { params: studyParams, query: noQuery };
const create = { params: studyParams, query: noQuery, body: planCreateSchema };
const one = {
  params: z.strictObject({ planId: idSchema }),
  query: noQuery,
  body: z.union([z.strictObject({}), z.undefined()]),
};
const anyChange = { params: z.strictObject({ planId: idSchema }), query: z.object({}) };

export function planRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get(
    "/studies/:studyId/plans",
    authorize("plans.read"),
    validate(list),
    async (_req, res) => {
      res.json(await listPlans(deps.db, authorizedStudy(res).study.id));
    },
  );
  router.post(
    "/studies/:studyId/plans",
    authorize("plans.register"),
    validate(create),
    async (_req, res) => {
      const view = await registerPlan(
        deps.db,
        signedInUser(res),
        authorizedStudy(res).study.id,
        parsed(res, create).body,
        deps.clock(),
      );
      res.status(201).json(view);
    },
  );
  router.get(
    "/plans/:planId",
    authorize("plans.read", { studyOf: planStudy }),
    validate({ params: one.params, query: noQuery }),
    async (_req, res) => {
      const { params } = parsed(res, { params: one.params, query: noQuery });
      res.json(await getPlan(deps.db, authorizedStudy(res).study.id, params.planId));
    },
  );
  for (const method of ["patch", "delete"] as const)
    router[method](
      "/plans/:planId",
      authorize("plans.register", { studyOf: planStudy }),
      validate(anyChange),
      async (_req, res) => {
        const { params } = parsed(res, anyChange);
        await getPlan(deps.db, authorizedStudy(res).study.id, params.planId);
        throw planRegistered(params.planId);
      },
    );
  router.post(
    "/plans/:planId/countersign",
    authorize("plans.countersign", { studyOf: planStudy }),
    validate(one),
    async (_req, res) => {
      const { params } = parsed(res, one);
      res.json(
        await countersignPlan(
          deps.db,
          signedInUser(res),
          authorizedStudy(res).study.id,
          params.planId,
          deps.clock(),
        ),
      );
    },
  );
  return router;
}
