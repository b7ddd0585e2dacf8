/**
 * The signed-in person's e-mail notices of one study (contract/notices.ts):
 *
 * GET /api/studies/:studyId/notices  → { enabled } (members; on when never set)
 * PUT /api/studies/:studyId/notices  { enabled } → { enabled } (members; only the caller's own setting)
 *
 * Kept in `user_preferences` under `notices:<studyId>`. It changes nothing
 * of the study, so an archived study accepts it too.
 */
import { Router } from "express";
import { noticeSettingSchema } from "../../contract/notices";
import { authorize, authorizedStudy } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { noQuery, parsed, validate } from "../http/validate";
import { readNoticeSetting, writeNoticeSetting } from "../services/notices";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const read = { params: studyParams, query: noQuery };
const write = { params: studyParams, query: noQuery, body: noticeSettingSchema };

export function noticeRoutes(deps: RouteDeps): Router {
  const router = Router();

  router.get(
    "/studies/:studyId/notices",
    authorize("notices.manage"),
    validate(read),
    async (_req, res) => {
      res.json(
        await readNoticeSetting(deps.db, signedInUser(res).id, authorizedStudy(res).study.id),
      );
    },
  );

  router.put(
    "/studies/:studyId/notices",
    authorize("notices.manage"),
    validate(write),
    async (_req, res) => {
      res.json(
        await writeNoticeSetting(
          deps.db,
          signedInUser(res).id,
          authorizedStudy(res).study.id,
          parsed(res, write).body,
          deps.clock(),
        ),
      );
    },
  );

  return router;
}
