/**
 * Exports of a fit:
 *
 * GET /api/fits/:fitId/regions.csv  → the region table as CSV (attachment); 409 until the fit is done
 * GET /api/fits/:fitId/recipe.json  → the recipe as stored (attachment; fixed when the fit is created, so
 *                                     available at once); 403 for callers without `fits.participants.read`
 *                                     (it names set-aside participants and id mappings)
 * GET /api/fits/:fitId/methods      → { text, references: [{ key, citation }], cautions }; 409 until the fit is done
 * GET /api/fits/:fitId/regions.md   → the region table for a manuscript as Markdown (attachment)
 * GET /api/fits/:fitId/regions.tex  → the same as LaTeX with booktabs rules (attachment)
 * GET /api/fits/:fitId/regions.docx → the same as a Word document (attachment; the same bytes on every download)
 * GET /api/fits/:fitId/sentences    → [{ region, text, runs }]: a results sentence per region
 *                                     (contract/views/manuscript.ts); the four answer 409 until the fit is done.
 *                                     The tables' notes list set-aside ids only to callers with
 *                                     `fits.participants.read`; otherwise only their number.
 *
 * The tables and sentences are written on the figures' worker thread
 * (manuscript-tables.ts) and kept. All carry `fits.export`. Routes under /fits/:fitId find the fit's study
 * before checking rights, so a fit of another study answers 404.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, participantsVisible, type StudyOf } from "../auth/permissions";
import { forbidden } from "../http/errors";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import { exportFileName, methodsOf, recipeJson, regionsCsv } from "../services/fit-exports";
import { findFit, studyOfFit } from "../services/fits";
import {
  type ManuscriptOptions,
  manuscriptTexts,
  regionsDocx,
} from "../services/manuscript-tables";
import type { Fit } from "../../db/schema";
import type { RouteDeps } from "./deps";

const fitStudy: StudyOf = { resolve: studyOfFit, notFound: "Fit not found." };
const read = { params: z.strictObject({ fitId: idSchema }), query: noQuery };

/** The manuscript tables' forms: file name, content type, builder. */
const tableForms = {
  "regions.md": {
    type: "text/markdown; charset=utf-8",
    build: async (fit: Fit, o: ManuscriptOptions) => (await manuscriptTexts(fit, o)).markdown,
  },
  "regions.tex": {
    type: "application/x-tex; charset=utf-8",
    build: async (fit: Fit, o: ManuscriptOptions) => (await manuscriptTexts(fit, o)).latex,
  },
  "regions.docx": {
    type: "application/vnd.openxmlformats-officedocument.wordprocessingml.document",
    build: async (fit: Fit, o: ManuscriptOptions) => Buffer.from(await regionsDocx(fit, o)),
  },
} as const;

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
      const { study } = authorizedStudy(res);
      if (!participantsVisible(res)) {
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

  for (const [name, form] of Object.entries(tableForms) as [
    keyof typeof tableForms,
    (typeof tableForms)[keyof typeof tableForms],
  ][]) {
    router.get(
      `/fits/:fitId/${name}`,
      authorize("fits.export", { studyOf: fitStudy }),
      validate(read),
      async (_req, res) => {
        const fit = await findFit(
          deps.db,
          authorizedStudy(res).study.id,
          parsed(res, read).params.fitId,
        );
        const body = await form.build(fit, { participantsVisible: participantsVisible(res) });
        res.set({
          "Content-Type": form.type,
          "Content-Disposition": `attachment; filename="${exportFileName(fit, name)}"`,
        });
        res.send(body);
      },
    );
  }

  router.get(
    "/fits/:fitId/sentences",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(read),
    async (_req, res) => {
      const fit = await findFit(
        deps.db,
        authorizedStudy(res).study.id,
        parsed(res, read).params.fitId,
      );
      const texts = await manuscriptTexts(fit, { participantsVisible: participantsVisible(res) });
      res.json(texts.sentences);
    },
  );

  return router;
}
