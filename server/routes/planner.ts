/**
 * Sample-size planner (no study data needed).
 *
 * POST /api/planner  → { n, nPerGroup?, observableEffect, curve: [{ n, power }], method, simulation? }
 * POST /api/planner/figure.svg  → the power curve as SVG, text as outlines; ?width=89|183 (mm, default 89)
 * POST /api/planner/figure.png  → the power curve as PNG at 300 dpi; ?width=89|183 (mm, default 89)
 * POST /api/planner/figure.txt  → the power curve's caption, plain text
 *
 * Every one takes the same question body. The answer is computed in the
 * planner's worker thread (server/jobs/planner-jobs.ts); a simulation over
 * the cost cap answers 422 `planner_too_costly`. The figures are drawn in
 * the figures' worker thread (server/services/planner-figures.ts). Another
 * file name answers 400 naming `params.file`, a width on a caption 400
 * naming `query.width`. When the client disconnects before the answer, its
 * question is stopped.
 */
import { type Response, Router } from "express";
import { z } from "zod";
import { authorize } from "../auth/permissions";
import { HttpError } from "../http/errors";
import { noQuery, parsed, validate } from "../http/validate";
import { type PlannerJobs, sharedPlannerJobs } from "../jobs/planner-jobs";
import {
  plannerFigureCaption,
  plannerFigurePng,
  plannerFigureSvg,
} from "../services/planner-figures";
import { plannerQuestionSchema } from "../../contract/planner";
import type { FigureWidth } from "../../contract/views/figures";
import type { RouteDeps } from "./deps";

const ask = { query: noQuery, body: plannerQuestionSchema };
const figure = {
  params: z.strictObject({
    file: z.enum(["figure.svg", "figure.png", "figure.txt"], {
      error: "must be figure.svg, figure.png or figure.txt",
    }),
  }),
  query: z.strictObject({
    width: z.enum(["89", "183"], { error: "must be 89 or 183 (millimetres)" }).optional(),
  }),
  body: plannerQuestionSchema,
};

/** A signal that aborts when the client disconnects before the answer is sent. */
function askerSignal(res: Response): AbortController {
  const asker = new AbortController();
  res.on("close", () => {
    if (!res.writableFinished) asker.abort(new Error("the client disconnected"));
  });
  return asker;
}

export function plannerRoutes(_deps: RouteDeps, jobs: PlannerJobs = sharedPlannerJobs()): Router {
  const router = Router();
  router.post("/planner", authorize("planner.use"), validate(ask), async (_req, res) => {
    const asker = askerSignal(res);
    try {
      res.json(await jobs.plan(parsed(res, ask).body, asker.signal));
    } catch (error) {
      if (asker.signal.aborted) return; // nobody is listening for the answer
      throw error;
    }
  });

  router.post("/planner/:file", authorize("planner.use"), validate(figure), async (_req, res) => {
    const { params, query, body } = parsed(res, figure);
    const ext = params.file.slice("figure.".length);
    if (ext === "txt" && query.width !== undefined) {
      throw new HttpError(400, "validation_failed", "query.width: a caption has no width", [
        { field: "query.width", message: "a caption has no width; leave it out" },
      ]);
    }
    const widthMm = Number(query.width ?? "89") as FigureWidth;
    const asker = askerSignal(res);
    const deps = { planner: jobs };
    try {
      if (ext === "svg") {
        const svg = await plannerFigureSvg(body, widthMm, asker.signal, deps);
        res.set({
          "Content-Type": "image/svg+xml; charset=utf-8",
          // an SVG opened on its own is a document: it may run nothing and load nothing
          "Content-Security-Policy": "default-src 'none'",
          "Content-Disposition": `attachment; filename="planner-power-curve-${widthMm}mm.svg"`,
        });
        res.send(svg);
      } else if (ext === "png") {
        const png = await plannerFigurePng(body, widthMm, asker.signal, deps);
        res.set({
          "Content-Type": "image/png",
          "Content-Disposition": `attachment; filename="planner-power-curve-${widthMm}mm.png"`,
        });
        res.send(png);
      } else {
        const caption = await plannerFigureCaption(body, asker.signal, deps);
        res.set({
          "Content-Type": "text/plain; charset=utf-8",
          "Content-Disposition": 'attachment; filename="planner-power-curve.txt"',
        });
        res.send(caption);
      }
    } catch (error) {
      if (asker.signal.aborted) return;
      throw error;
    }
  });
  return router;
}
