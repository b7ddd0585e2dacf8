/**
 * The audit trail of a study.
 *
 * GET /api/studies/:studyId/activity?person=<userId>&kind=<kind or prefix>&before=<seq>&limit=<1..500>
 *   → events newest first: { id, seq, kind, at, actor, targetType, targetId, before, after }
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy } from "../auth/permissions";
import { idSchema, parsed, validate } from "../http/validate";
import { listEvents } from "../services/audit";
import { studyParams } from "./studies";
import type { RouteDeps } from "./deps";

const query = z.strictObject({
  person: idSchema.optional(),
  kind: z
    .string()
    .regex(/^[a-z][a-z_-]*(\.[a-z][a-z_-]*)*$/, {
      error: "must be an event kind such as invitation.sent or a prefix such as invitation",
    })
    .optional(),
  before: z.coerce.number().int().min(1).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});
const schemas = { params: studyParams, query };

export function activityRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get(
    "/studies/:studyId/activity",
    authorize("activity.list"),
    validate(schemas),
    async (_req, res) => {
      const q = parsed(res, schemas).query;
      res.json(
        await listEvents(deps.db, authorizedStudy(res).study.id, {
          person: q.person,
          kind: q.kind,
          beforeSeq: q.before,
          limit: q.limit,
        }),
      );
    },
  );
  return router;
}
