/**
 * Invitations by e-mail.
 *
 * GET    /api/studies/:studyId/invitations                 → pending invitations (Owner)
 * POST   /api/studies/:studyId/invitations                 → { email, role } sends the e-mail (Owner, 201)
 * DELETE /api/studies/:studyId/invitations/:invitationId   → revoke a pending invitation (Owner, 204)
 * GET    /api/invitations/:token                           → what the invitation page shows (anyone with the link)
 * POST   /api/invitations/:token/accept                    → accept, signed in with the invited address (rate-limited)
 */
import { Router } from "express";
import { z } from "zod";
import { roles } from "../../contract/permissions";
import { authorize, authorizedStudy } from "../auth/permissions";
import { currentUser, signedInUser } from "../auth/session";
import { limitByIpAndAddress } from "../http/rate-limits";
import { emailSchema, emptyBody, idSchema, noQuery, parsed, validate } from "../http/validate";
import {
  accept,
  invite,
  listPendingInvitations,
  previewInvitation,
  revoke,
} from "../services/invitations";
import { studyParams } from "./studies";
import type { RouteDeps } from "./deps";

const tokenParams = z.strictObject({
  token: z.string().regex(/^[A-Za-z0-9_-]{20,128}$/, { error: "is not an invitation token" }),
});
const list = { params: studyParams, query: noQuery };
const create = {
  params: studyParams,
  query: noQuery,
  body: z.strictObject({ email: emailSchema, role: z.enum(roles) }),
};
const revokeSchemas = {
  params: z.strictObject({ studyId: idSchema, invitationId: idSchema }),
  query: noQuery,
};
const preview = { params: tokenParams, query: noQuery };
const acceptSchemas = { params: tokenParams, query: noQuery, body: emptyBody };

export function invitationRoutes(deps: RouteDeps): Router {
  const router = Router();
  const acceptLimits = limitByIpAndAddress(
    "invitation accept",
    deps.config.rateLimit,
    (_req, res) => currentUser(res)?.email ?? null,
  );

  router.get(
    "/studies/:studyId/invitations",
    authorize("invitations.list"),
    validate(list),
    async (_req, res) => {
      res.json(await listPendingInvitations(deps.db, authorizedStudy(res).study.id, deps.clock()));
    },
  );
  router.post(
    "/studies/:studyId/invitations",
    authorize("invitations.create"),
    validate(create),
    async (_req, res) => {
      const user = signedInUser(res);
      const view = await invite(
        { db: deps.db, mailer: deps.mailer, publicUrl: deps.config.publicUrl, now: deps.clock() },
        user,
        authorizedStudy(res).study,
        parsed(res, create).body,
      );
      res.status(201).json(view);
    },
  );
  router.delete(
    "/studies/:studyId/invitations/:invitationId",
    authorize("invitations.revoke"),
    validate(revokeSchemas),
    async (_req, res) => {
      await revoke(
        deps.db,
        signedInUser(res).id,
        authorizedStudy(res).study.id,
        parsed(res, revokeSchemas).params.invitationId,
        deps.clock(),
      );
      res.status(204).end();
    },
  );
  router.get(
    "/invitations/:token",
    authorize("invitation.read"),
    validate(preview),
    async (_req, res) => {
      res.json(await previewInvitation(deps.db, parsed(res, preview).params.token, deps.clock()));
    },
  );
  router.post(
    "/invitations/:token/accept",
    authorize("invitation.accept"),
    ...acceptLimits,
    validate(acceptSchemas),
    async (_req, res) => {
      res.json(
        await accept(
          deps.db,
          signedInUser(res),
          parsed(res, acceptSchemas).params.token,
          deps.clock(),
        ),
      );
    },
  );
  return router;
}
