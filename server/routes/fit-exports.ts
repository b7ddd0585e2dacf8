/**
 * Exports of a fit:
 *
 * GET /api/fits/:fitId/regions.csv  → the region table as CSV (attachment); 409 until the fit is done
 * GET /api/fits/:fitId/recipe.json  → the recipe as stored (attachment; fixed when the fit is created, so
 *                                     available at once); 403 for callers without `fits.participants.read`
 *                                     (it names set-aside participants and id mappings)
 * GET /api/fits/:fitId/methods      → { text, references: [{ key, citation }], cautions }; 409 until the fit is done
 *
 * All carry `fits.export`. Routes under /fits/:fitId find the fit's study
 * before checking rights, so a fit of another study answers 404.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, roleMay, type StudyOf } from "../auth/permissions";
import { forbidden } from "../http/errors";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import { exportFileName, methodsOf, recipeJson, regionsCsv } from "../services/fit-exports";
import { findFit, studyOfFit } from "../services/fits";
import type { RouteDeps } from "./deps";

const fitStudy: StudyOf = { resolve: studyOfFit, notFound: "Fit not found." };
const read = { params: z.strictObject({ fitId: idSchema }), query: noQuery };

export function fitExportRoutes(deps: RouteDeps): Router {
  const router = Router();

  router.get(
    "/fits/:fitId/regions.csv",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(read),
    async (_req, res) => {
      const fit = await findFit(
        deps.db,
        authorizedStudy(res).study.id,
        parsed(res, read).params.fitId,
      );
      const csv = regionsCsv(fit);
      res.set({
        "Content-Type": "text/csv; charset=utf-8",
        "Content-Disposition": `attachment; filename="${exportFileName(fit, "regions.csv")}"`,
      });
      res.send(csv);
    },
  );

  router.get(
    "/fits/:fitId/recipe.json",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(read),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      if (!roleMay("fits.participants.read", role, { restricted: study.restricted })) {
        throw forbidden(
          "This study restricts participant-level rows, and the recipe names participants (set-asides and id mappings).",
        );
      }
      const fit = await findFit(deps.db, study.id, parsed(res, read).params.fitId);
      const text = recipeJson(fit);
      res.set({
        "Content-Type": "application/json; charset=utf-8",
        "Content-Disposition": `attachment; filename="${exportFileName(fit, "recipe.json")}"`,
      });
      res.send(text);
    },
  );

  router.get(
    "/fits/:fitId/methods",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(read),
    async (_req, res) => {
      const fit = await findFit(
        deps.db,
        authorizedStudy(res).study.id,
        parsed(res, read).params.fitId,
      );
      res.json(await methodsOf(deps.db, fit));
    },
  );

  return router;
}
