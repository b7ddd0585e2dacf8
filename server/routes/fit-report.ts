/**
 * A finished fit's report bundle (services/fit-report.ts):
 *
 * GET /api/fits/:fitId/report.zip     → the bundle as a ZIP attachment, streamed; 409 until the fit is done
 * GET /api/fits/:fitId/report.sha256  → { sha256, bytes } of the bundle this caller downloads; 409 until done
 *
 * Both carry `fits.export` (every member). A caller without participant
 * rows (`fits.participants.read`: a Viewer of a restricted study) gets the
 * bundle without recipe.json and without participant ids in
 * set-asides.csv, and that bundle's hash. Routes under /fits/:fitId find
 * the fit's study before checking rights, so a fit of another study
 * answers 404.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, participantsVisible, type StudyOf } from "../auth/permissions";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import type { FitJobs } from "../jobs/fit-jobs";
import { exportFileName } from "../services/fit-exports";
import { buildReport, reportSha256, writeReport } from "../services/fit-report";
import { findFit, studyOfFit } from "../services/fits";
import type { RouteDeps } from "./deps";

const fitStudy: StudyOf = { resolve: studyOfFit, notFound: "Fit not found." };
const read = { params: z.strictObject({ fitId: idSchema }), query: noQuery };

export function fitReportRoutes(deps: RouteDeps, jobs: FitJobs): Router {
  const router = Router();

  const report = async (res: Parameters<typeof authorizedStudy>[0]) => {
    const fit = await findFit(
      deps.db,
      authorizedStudy(res).study.id,
      parsed(res, read).params.fitId,
    );
    const options = { participantsVisible: participantsVisible(res) };
    return { fit, options, built: await buildReport(deps.db, jobs, fit, options) };
  };

  router.get(
    "/fits/:fitId/report.zip",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(read),
    async (_req, res) => {
      const { fit, built } = await report(res);
      res.set({
        "Content-Type": "application/zip",
        "Content-Disposition": `attachment; filename="${exportFileName(fit, "report.zip")}"`,
      });
      try {
        await writeReport(built, async (chunk) => {
          if (!res.write(chunk) && !res.destroyed)
            await new Promise<void>((resolve) => {
              res.once("drain", resolve);
              res.once("close", resolve);
            });
          if (res.destroyed) throw new Error("the client went away");
        });
        res.end();
      } catch (error) {
        // Headers and part of the archive are out: end the connection so the download shows as broken.
        if (!res.headersSent) throw error;
        if (!res.destroyed) res.destroy(error as Error);
      }
    },
  );

  router.get(
    "/fits/:fitId/report.sha256",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(read),
    async (_req, res) => {
      const { options, built } = await report(res);
      res.json(await reportSha256(built, options));
    },
  );

  return router;
}
