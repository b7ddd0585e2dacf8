/**
 * Set-asides: participants excluded from every region or one region, with a reason.
 *
 * GET    /api/studies/:studyId/set-asides?active=true   → SetAsideView[] newest first (restored ones too unless active=true)
 *                                                          (participant-level: not for Viewers of a restricted study)
 * POST   /api/studies/:studyId/set-asides               { participant, region?, reason } → 201 SetAsideView (Owner, Analyst)
 * DELETE /api/studies/:studyId/set-asides/:setAsideId   restore; optional reason in the body { reason } or the query ?reason=
 *                                                          → 200 SetAsideView (marked restored; nothing is deleted) (Owner, Analyst)
 *
 * SetAsideView: { id, participant, region (null = every region), reason,
 * active, createdBy, createdAt, restoredBy, restoredAt, restoreReason }.
 * Both changes are recorded in the activity trail (participant.set_aside,
 * participant.restored).
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, parsed, validate } from "../http/validate";
import { createSetAside, listSetAsides, restoreSetAside } from "../services/set-asides";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const text = (max: number) => z.string().trim().min(1, { error: "must not be empty" }).max(max, { error: `must be at most ${max} characters` });
const reason = text(2000);
const list = {
  params: studyParams,
  query: z.strictObject({ active: z.enum(["true", "false"], { error: 'must be "true" or "false"' }).optional() }),
};
const create = {
  params: studyParams,
  query: z.strictObject({}),
  body: z.strictObject({
    participant: text(500),
    region: text(500).optional(),
    reason: z.string({ error: "give the reason for setting this participant aside" }).trim().min(1, { error: "give the reason for setting this participant aside" }).max(2000),
  }),
};
const restore = {
  params: z.strictObject({ studyId: idSchema, setAsideId: idSchema }),
  query: z.strictObject({ reason: reason.optional() }),
  body: z.union([z.strictObject({ reason: reason.optional() }), z.undefined()]),
};

export function setAsideRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get("/studies/:studyId/set-asides", authorize("participants.read"), validate(list), async (_req, res) => {
    const { query } = parsed(res, list);
    res.json(await listSetAsides(deps.db, authorizedStudy(res).study.id, { activeOnly: query.active === "true" }));
  });
  router.post("/studies/:studyId/set-asides", authorize("participants.set-aside"), validate(create), async (_req, res) => {
    const view = await createSetAside(deps.db, signedInUser(res), authorizedStudy(res).study.id, parsed(res, create).body, deps.clock());
    res.status(201).json(view);
  });
  router.delete("/studies/:studyId/set-asides/:setAsideId", authorize("participants.set-aside"), validate(restore), async (_req, res) => {
    const { params, query, body } = parsed(res, restore);
    const why = body?.reason ?? query.reason;
    res.json(await restoreSetAside(deps.db, signedInUser(res), authorizedStudy(res).study.id, params.setAsideId, why, deps.clock()));
  });
  return router;
}
