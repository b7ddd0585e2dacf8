/**
 * Approval and sealing of a fit:
 *
 * POST /api/fits/:fitId/approve → FitView with `approval`; 409 unless done, or when already approved (Owner, Reviewer);
 *                                 409 second_person_required when the caller started the fit and the study's
 *                                 "A second person signs off" is on
 * POST /api/fits/:fitId/seal    → FitView with `seal` { by, at, sha256, intact, singlePersonSignOff }; 409 unless done
 *                                 and approved, or when already sealed (Owner); 409 second_person_required when the
 *                                 caller started and approved it and the setting is on
 *
 * The rule is contract/sign-off.ts; services/sealing.ts applies it. After a
 * seal commits, the whole team gets an e-mail notice (services/notices.ts).
 *
 * Routes under /fits/:fitId find the fit's study before checking rights.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, participantsVisible, type StudyOf } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import type { FitJobs } from "../jobs/fit-jobs";
import { findFit, fitView, studyOfFit } from "../services/fits";
import type { FitNotices } from "../services/notices";
import { approveFit, sealFit } from "../services/sealing";
import type { RouteDeps } from "./deps";

const fitStudy: StudyOf = { resolve: studyOfFit, notFound: "Fit not found." };
const action = {
  params: z.strictObject({ fitId: idSchema }),
  query: noQuery,
  body: z.union([z.strictObject({}), z.undefined()]),
};

export function fitSealingRoutes(deps: RouteDeps, jobs: FitJobs, notices: FitNotices): Router {
  const router = Router();

  router.post(
    "/fits/:fitId/approve",
    authorize("fits.approve", { studyOf: fitStudy }),
    validate(action),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      const fit = await findFit(deps.db, study.id, parsed(res, action).params.fitId);
      const now = deps.clock();
      await approveFit(deps.db, signedInUser(res), fit, now);
      res.json(
        await fitView(
          deps.db,
          jobs,
          await findFit(deps.db, study.id, fit.id),
          participantsVisible(res),
        ),
      );
    },
  );

  router.post(
    "/fits/:fitId/seal",
    authorize("fits.seal", { studyOf: fitStudy }),
    validate(action),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      const fit = await findFit(deps.db, study.id, parsed(res, action).params.fitId);
      await sealFit(deps.db, signedInUser(res), fit, deps.clock());
      // The seal has committed: the team's e-mails go out in the background and cannot undo it.
      notices.fitSealed(fit.id);
      res.json(
        await fitView(
          deps.db,
          jobs,
          await findFit(deps.db, study.id, fit.id),
          participantsVisible(res),
        ),
      );
    },
  );

  return router;
}
