/**
 * Fits: runs of a model as background jobs, their progress, results and regions.
 *
 * GET  /api/studies/:studyId/fits?modelId=          → FitSummaryView[] newest first, each with stage (approved/sealed
 *                                                      shown), N, set-aside count, refitOf + changes, stale + staleReasons
 * POST /api/studies/:studyId/fits { modelId }       → 202 FitView (status "queued"); 409 without a confirmed brain table (Owner, Analyst)
 * GET  /api/fits/:fitId                             → FitView: status, progress { fraction, secondsLeft }, datasets, recipe, result when done,
 *                                                      set-asides with who and when, lineage (services/fit-lineage.ts);
 *                                                      a done fit from a kept body, gzip or plain, with a strong ETag
 *                                                      (304 to If-None-Match; services/fit-view-body.ts)
 * GET  /api/fits/:fitId/events                      → server-sent events: "status" and "progress", each
 *                                                      { id, status, progress: { fraction, secondsLeft }, error }; ends after
 *                                                      done, failed or cancelled; a comment line every 15 s keeps it open
 * POST /api/fits/:fitId/cancel                      → FitView (status "cancelled"); 409 when already finished (Owner, Analyst)
 * GET  /api/fits/:fitId/regions/:region             → RegionDetail (plot points, band, group means, null histogram, sensitivity);
 *                                                      409 until the fit is done
 * GET  /api/fits/:fitId/regions/:region/participants?offset=&limit=&sort=&direction=&search=
 *                                                   → RegionParticipantsPage: every diagnostic of each participant, a page
 *                                                      at a time (limit ≤ 1000); 403 to Viewers of a restricted study
 * POST /api/fits/:fitId/regions/:region/preview     → RegionPreview: the region recomputed at once with the current set-asides
 *
 * Routes under /fits/:fitId find the fit's study before checking rights,
 * so a fit of a study you do not belong to answers 404 like the study
 * would. Participant-level content follows `fits.participants.read`.
 */
import { Router } from "express";
import { z } from "zod";
import { type FitStatus, participantOrders } from "../../contract/views/fits";
import { authorize, authorizedStudy, participantsVisible, type StudyOf } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import type { FitEvent, FitJobs } from "../jobs/fit-jobs";
import { sendEncoded } from "../http/encoded-body";
import { fitViewBody } from "../services/fit-view-body";
import {
  cancelFit,
  createFit,
  findFit,
  listFits,
  loadFitView,
  previewRegion,
  regionDetailJson,
  studyOfFit,
} from "../services/fits";
import { PARTICIPANT_PAGE_MAX, regionParticipants } from "../services/region-participants";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const fitStudy: StudyOf = { resolve: studyOfFit, notFound: "Fit not found." };
const fitParams = z.strictObject({ fitId: idSchema });
const regionParams = z.strictObject({ fitId: idSchema, region: z.string().min(1).max(500) });
const list = { params: studyParams, query: z.strictObject({ modelId: idSchema.optional() }) };
const create = { params: studyParams, query: noQuery, body: z.strictObject({ modelId: idSchema }) };
const read = { params: fitParams, query: noQuery };
const region = { params: regionParams, query: noQuery };
const preview = {
  params: regionParams,
  query: noQuery,
  body: z.union([z.strictObject({}), z.undefined()]),
};
const participantPage = {
  params: regionParams,
  query: z.strictObject({
    offset: z.coerce.number().int().min(0).default(0),
    limit: z.coerce.number().int().min(1).max(PARTICIPANT_PAGE_MAX).default(100),
    sort: z.enum(participantOrders).default("position"),
    direction: z.enum(["asc", "desc"]).default("asc"),
    search: z.string().max(200).optional(),
  }),
};

const terminal: readonly FitStatus[] = ["done", "failed", "cancelled"];

export interface FitRouteOptions {
  /** Time between heartbeat comments on an event stream (default 15 s). */
  heartbeatMs?: number;
}

export function fitRoutes(deps: RouteDeps, jobs: FitJobs, options: FitRouteOptions = {}): Router {
  const heartbeatMs = options.heartbeatMs ?? 15_000;
  const router = Router();

  router.get(
    "/studies/:studyId/fits",
    authorize("fits.read"),
    validate(list),
    async (_req, res) => {
      res.json(
        await listFits(deps.db, jobs, authorizedStudy(res).study.id, {
          modelId: parsed(res, list).query.modelId,
          participantsVisible: participantsVisible(res),
        }),
      );
    },
  );

  router.post(
    "/studies/:studyId/fits",
    authorize("fits.run"),
    validate(create),
    async (_req, res) => {
      const fit = await createFit(
        deps.db,
        jobs,
        signedInUser(res),
        authorizedStudy(res).study,
        parsed(res, create).body.modelId,
        deps.clock(),
        deps.version,
      );
      res.status(202).json(fit);
    },
  );

  router.get(
    "/fits/:fitId",
    authorize("fits.read", { studyOf: fitStudy }),
    validate(read),
    async (req, res) => {
      const answer = await fitViewBody(
        deps.db,
        jobs,
        authorizedStudy(res).study.id,
        parsed(res, read).params.fitId,
        participantsVisible(res),
      );
      if ("encoded" in answer) sendEncoded(req, res, answer.encoded);
      else res.json(answer.view);
    },
  );

  router.get(
    "/fits/:fitId/events",
    authorize("fits.read", { studyOf: fitStudy }),
    validate(read),
    async (req, res) => {
      const fitId = parsed(res, read).params.fitId;
      const studyId = authorizedStudy(res).study.id;
      await findFit(deps.db, studyId, fitId);
      res.status(200);
      res.set({
        "Content-Type": "text/event-stream; charset=utf-8",
        "Cache-Control": "no-cache",
        "X-Accel-Buffering": "no",
      });
      res.flushHeaders();
      const flush = () => (res as unknown as { flush?: () => void }).flush?.();
      let ended = false;
      const send = (
        event: FitEvent["type"],
        data: Omit<FitEvent, "type" | "fitId"> & { id: string },
      ) => {
        if (ended) return;
        res.write(`event: ${event}\ndata: ${JSON.stringify(data)}\n\n`);
        flush();
        if (terminal.includes(data.status)) end();
      };
      const unsubscribe = jobs.subscribe(fitId, (e) =>
        send(e.type, { id: e.fitId, status: e.status, progress: e.progress, error: e.error }),
      );
      const heartbeat = setInterval(() => {
        res.write(": heartbeat\n\n");
        flush();
      }, heartbeatMs);
      function end() {
        if (ended) return;
        ended = true;
        unsubscribe();
        clearInterval(heartbeat);
        res.end();
      }
      req.on("close", end);
      // The current state, read after subscribing so no change falls between the two.
      const current = await loadFitView(deps.db, jobs, studyId, fitId, false);
      send("status", {
        id: current.id,
        status: current.status,
        progress: current.progress,
        error: current.error,
      });
    },
  );

  router.post(
    "/fits/:fitId/cancel",
    authorize("fits.run", { studyOf: fitStudy }),
    validate({ ...read, body: z.union([z.strictObject({}), z.undefined()]) }),
    async (_req, res) => {
      const fit = await findFit(
        deps.db,
        authorizedStudy(res).study.id,
        parsed(res, read).params.fitId,
      );
      res.json(await cancelFit(deps.db, jobs, signedInUser(res), fit, deps.clock()));
    },
  );

  router.get(
    "/fits/:fitId/regions/:region",
    authorize("fits.read", { studyOf: fitStudy }),
    validate(region),
    async (_req, res) => {
      const { params } = parsed(res, region);
      const fit = await findFit(deps.db, authorizedStudy(res).study.id, params.fitId);
      // The points are the region's kept JSON text; only the rest is written per request.
      res
        .type("json")
        .send(await regionDetailJson(deps.db, fit, params.region, participantsVisible(res)));
    },
  );

  router.get(
    "/fits/:fitId/regions/:region/participants",
    authorize("fits.participants.read", { studyOf: fitStudy }),
    validate(participantPage),
    async (_req, res) => {
      const { params, query } = parsed(res, participantPage);
      const fit = await findFit(deps.db, authorizedStudy(res).study.id, params.fitId);
      res.json(await regionParticipants(deps.db, fit, params.region, query));
    },
  );

  router.post(
    "/fits/:fitId/regions/:region/preview",
    authorize("fits.read", { studyOf: fitStudy }),
    validate(preview),
    async (_req, res) => {
      const { params } = parsed(res, preview);
      const fit = await findFit(deps.db, authorizedStudy(res).study.id, params.fitId);
      res.json(await previewRegion(deps.db, jobs, fit, params.region, participantsVisible(res)));
    },
  );

  return router;
}
