/**
 * Set-asides: participants excluded from every region or one region, with a reason.
 *
 * GET    /api/studies/:studyId/set-asides?active=true   → SetAsideView[] newest first (restored ones too unless active=true);
 *                                                          every member; participant ids null for those who may not read
 *                                                          participant-level rows (Viewers of a restricted study)
 * POST   /api/studies/:studyId/set-asides               { participant, region?, reason } → 201 SetAsideView (Owner, Analyst)
 * DELETE /api/studies/:studyId/set-asides/:setAsideId   restore; the reason is required, in the body { reason } (or
 *                                                          { restoreReason }) or the query ?reason=; without one 400 naming
 *                                                          body.reason → 200 SetAsideView (marked restored; nothing is
 *                                                          deleted) (Owner, Analyst)
 *
 * SetAsideView: { id, participant (null when withheld), region (null =
 * every region), reason, active, createdBy, createdAt, restoredBy,
 * restoredAt, restoreReason }.
 * Both changes are recorded in the activity trail (participant.set_aside,
 * participant.restored).
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, roleMay } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { describeDetails, HttpError } from "../http/errors";
import { idSchema, parsed, validate } from "../http/validate";
import { createSetAside, listSetAsides, restoreSetAside } from "../services/set-asides";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const text = (max: number) =>
  z
    .string()
    .trim()
    .min(1, { error: "must not be empty" })
    .max(max, { error: `must be at most ${max} characters` });
const restoreReasonMissing = "give the reason for restoring this participant";
const restoreReason = z
  .string({ error: restoreReasonMissing })
  .trim()
  .min(1, { error: restoreReasonMissing })
  .max(2000, { error: "must be at most 2000 characters" });
const list = {
  params: studyParams,
  query: z.strictObject({
    active: z.enum(["true", "false"], { error: 'must be "true" or "false"' }).optional(),
  }),
};
const create = {
  params: studyParams,
  query: z.strictObject({}),
  body: z.strictObject({
    participant: text(500),
    region: text(500).optional(),
    reason: z
      .string({ error: "give the reason for setting this participant aside" })
      .trim()
      .min(1, { error: "give the reason for setting this participant aside" })
      .max(2000),
  }),
};
const restore = {
  params: z.strictObject({ studyId: idSchema, setAsideId: idSchema }),
  query: z.strictObject({ reason: restoreReason.optional() }),
  body: z.union([
    z.strictObject({ reason: restoreReason.optional(), restoreReason: restoreReason.optional() }),
    z.undefined(),
  ]),
};

/** The restore's reason from the body ({ reason } or { restoreReason }) or the query; 400 naming body.reason when none or two different ones. */
function restoreReasonOf(
  body: { reason?: string; restoreReason?: string } | undefined,
  query: { reason?: string },
): string {
  const given = [
    ...new Set(
      [body?.reason, body?.restoreReason, query.reason].filter((r): r is string => r !== undefined),
    ),
  ];
  if (given.length === 1) return given[0];
  const message =
    given.length === 0
      ? restoreReasonMissing
      : "give one reason for restoring this participant (the request carries different ones)";
  const details = [{ field: "body.reason", message }];
  throw new HttpError(400, "validation_failed", describeDetails(details), details);
}

export function setAsideRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get(
    "/studies/:studyId/set-asides",
    authorize("data.read"),
    validate(list),
    async (_req, res) => {
      const { query } = parsed(res, list);
      const { study, role } = authorizedStudy(res);
      const participantsVisible = roleMay("participants.read", role, {
        restricted: study.restricted,
      });
      res.json(
        await listSetAsides(deps.db, study.id, {
          activeOnly: query.active === "true",
          participantsVisible,
        }),
      );
    },
  );
  router.post(
    "/studies/:studyId/set-asides",
    authorize("participants.set-aside"),
    validate(create),
    async (_req, res) => {
      const view = await createSetAside(
        deps.db,
        signedInUser(res),
        authorizedStudy(res).study.id,
        parsed(res, create).body,
        deps.clock(),
      );
      res.status(201).json(view);
    },
  );
  router.delete(
    "/studies/:studyId/set-asides/:setAsideId",
    authorize("participants.set-aside"),
    validate(restore),
    async (_req, res) => {
      const { params, query, body } = parsed(res, restore);
      const why = restoreReasonOf(body, query);
      res.json(
        await restoreSetAside(
          deps.db,
          signedInUser(res),
          authorizedStudy(res).study.id,
          params.setAsideId,
          why,
          deps.clock(),
        ),
      );
    },
  );
  return router;
}
