/**
 * A study's members.
 *
 * GET    /api/studies/:studyId/members           → members with roles (every member)
 * PATCH  /api/studies/:studyId/members/:userId   → { role } (Owner; the last Owner cannot be demoted: 409)
 * DELETE /api/studies/:studyId/members/:userId   → remove (Owner) or leave (yourself); the last Owner cannot leave: 409
 */
import { Router } from "express";
import { z } from "zod";
import { roles } from "../../contract/permissions";
import { authorize, authorizedStudy } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import { changeRole, listMembers, removeMember } from "../services/members";
import { studyParams } from "./studies";
import type { RouteDeps } from "./deps";

const memberParams = z.strictObject({ studyId: idSchema, userId: idSchema });
const list = { params: studyParams, query: noQuery };
const patch = {
  params: memberParams,
  query: noQuery,
  body: z.strictObject({ role: z.enum(roles) }),
};
const remove = { params: memberParams, query: noQuery };

export function memberRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get(
    "/studies/:studyId/members",
    authorize("members.list"),
    validate(list),
    async (_req, res) => {
      res.json(await listMembers(deps.db, authorizedStudy(res).study.id));
    },
  );
  router.patch(
    "/studies/:studyId/members/:userId",
    authorize("members.update"),
    validate(patch),
    async (_req, res) => {
      const { params, body } = parsed(res, patch);
      res.json(
        await changeRole(
          deps.db,
          signedInUser(res).id,
          authorizedStudy(res).study.id,
          params.userId,
          body.role,
          deps.clock(),
        ),
      );
    },
  );
  router.delete(
    "/studies/:studyId/members/:userId",
    authorize("members.remove"),
    validate(remove),
    async (_req, res) => {
      const { params } = parsed(res, remove);
      await removeMember(
        deps.db,
        signedInUser(res).id,
        authorizedStudy(res).study.id,
        params.userId,
        deps.clock(),
      );
      res.status(204).end();
    },
  );
  return router;
}
