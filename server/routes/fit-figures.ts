/**
 * A finished fit's figures (server/services/fit-figures.ts):
 *
 * GET /api/fits/:fitId/figures              → FigureSummary[] (contract/views/figures.ts)
 * GET /api/fits/:fitId/figures/:name.svg    → SVG, text as outlines; ?width=89|183 (mm, default 89)
 * GET /api/fits/:fitId/figures/:name.png    → PNG at 300 dpi; ?width=89|183 (mm, default 89):
 *                                             1051 or 2161 px wide, pHYs chunk set; 422
 *                                             `figure_too_large` past 12,000 px tall
 * GET /api/fits/:fitId/figures/:name.txt    → the figure's caption, plain text
 *
 * Names: `forest`, `variance-shares` (weighted fits), `<region>-scatter` or
 * `<region>-strip`, `<region>-influence`, `<region>-null`. All carry `fits.export`; 409 until the fit is done; 404 for a
 * name that is not one of the fit's figures; 400 naming `query.width` for another
 * width; 403 for a figure with one mark per participant when the caller may not
 * read participant-level rows (a restricted study's Viewer, as on the screen).
 * A fit of another study answers 404.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, participantsVisible, type StudyOf } from "../auth/permissions";
import { HttpError } from "../http/errors";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import { figureCaption, figurePng, figureSvg, listFigures } from "../services/fit-figures";
import { findFit, studyOfFit } from "../services/fits";
import type { FigureWidth } from "../../contract/views/figures";
import type { RouteDeps } from "./deps";

const fitStudy: StudyOf = { resolve: studyOfFit, notFound: "Fit not found." };
const list = { params: z.strictObject({ fitId: idSchema }), query: noQuery };
const one = {
  params: z.strictObject({
    fitId: idSchema,
    file: z.string().regex(/^.+\.(svg|png|txt)$/, {
      error: "must be a figure name ending in .svg, .png or .txt",
    }),
  }),
  query: z.strictObject({
    width: z.enum(["89", "183"], { error: "must be 89 or 183 (millimetres)" }).optional(),
  }),
};

function access(res: Parameters<typeof authorizedStudy>[0]) {
  return { participantsVisible: participantsVisible(res) };
}

/** A download name for a figure: "fit-1a2b3c4d-L_dlpfc-scatter-89mm.png" (unsafe characters become "_"). */
function fileName(fitId: string, name: string, suffix: string): string {
  return `fit-${fitId.slice(0, 8)}-${name.replace(/[^A-Za-z0-9._-]/g, "_")}${suffix}`;
}

export function fitFigureRoutes(deps: RouteDeps): Router {
  const router = Router();

  router.get(
    "/fits/:fitId/figures",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(list),
    async (_req, res) => {
      const fit = await findFit(
        deps.db,
        authorizedStudy(res).study.id,
        parsed(res, list).params.fitId,
      );
      res.json(await listFigures(deps.db, fit, access(res)));
    },
  );

  router.get(
    "/fits/:fitId/figures/:file",
    authorize("fits.export", { studyOf: fitStudy }),
    validate(one),
    async (_req, res) => {
      const { params, query } = parsed(res, one);
      const dot = params.file.lastIndexOf(".");
      const name = params.file.slice(0, dot);
      const ext = params.file.slice(dot + 1);
      if (ext === "txt" && query.width !== undefined) {
        throw new HttpError(400, "validation_failed", "query.width: a caption has no width", [
          { field: "query.width", message: "a caption has no width; leave it out" },
        ]);
      }
      const widthMm = Number(query.width ?? "89") as FigureWidth;
      const fit = await findFit(deps.db, authorizedStudy(res).study.id, params.fitId);
      const who = access(res);
      if (ext === "svg") {
        const svg = await figureSvg(deps.db, fit, name, who, widthMm);
        res.set({
          "Content-Type": "image/svg+xml; charset=utf-8",
          // an SVG opened on its own is a document: it may run nothing and load nothing
          "Content-Security-Policy": "default-src 'none'",
          "Content-Disposition": `attachment; filename="${fileName(fit.id, name, `-${widthMm}mm.svg`)}"`,
        });
        res.send(svg);
      } else if (ext === "png") {
        const png = await figurePng(deps.db, fit, name, who, widthMm);
        res.set({
          "Content-Type": "image/png",
          "Content-Disposition": `attachment; filename="${fileName(fit.id, name, `-${widthMm}mm.png`)}"`,
        });
        res.send(png);
      } else {
        const caption = await figureCaption(deps.db, fit, name, who);
        res.set({
          "Content-Type": "text/plain; charset=utf-8",
          "Content-Disposition": `attachment; filename="${fileName(fit.id, name, ".txt")}"`,
        });
        res.send(caption);
      }
    },
  );

  return router;
}
