/**
 * GET /api/system/workers → { workers: LiveWorker[] }: the live worker
 * processes of the job queue (PostgreSQL server), their host names and
 * chunks stored in the last minute. For a person who is Owner of a study
 * or a server admin (the ADMIN_EMAILS setting); anyone else signed in gets
 * 403.
 */
import { Router } from "express";
import type { LiveWorker } from "../../contract/views/system";
import { authorize } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { forbidden } from "../http/errors";
import { noQuery, validate } from "../http/validate";
import { liveWorkers, ownsAStudy } from "../services/workers";
import type { RouteDeps } from "./deps";

export function workerRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get(
    "/system/workers",
    authorize("workers.read"),
    validate({ query: noQuery }),
    async (_req, res) => {
      const user = signedInUser(res);
      const admin = deps.config.adminEmails.includes(user.email.toLowerCase());
      if (!admin && !(await ownsAStudy(deps.db, user.id)))
        throw forbidden(
          "Only an Owner of a study or a server admin (ADMIN_EMAILS) may see the worker processes.",
        );
      const workers: LiveWorker[] = await liveWorkers(deps.db);
      res.json({ workers });
    },
  );
  return router;
}
