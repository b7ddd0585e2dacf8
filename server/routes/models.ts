/**
 * A study's models (saved questions).
 *
 * GET    /api/studies/:studyId/models             → ModelView[] (every member)
 * POST   /api/studies/:studyId/models             { name, spec, regionSelection } → 201 ModelView (Owner, Analyst)
 * GET    /api/studies/:studyId/models/:modelId    → ModelView
 * PATCH  /api/studies/:studyId/models/:modelId    { name?, spec?, regionSelection? } → ModelView (Owner, Analyst)
 * DELETE /api/studies/:studyId/models/:modelId    → 204 soft delete; its fits stay (Owner, Analyst)
 *
 * Bodies are checked with the schemas the web form uses
 * (contract/model-form.ts), then against the study's current data with
 * the fit's own rules (a model sure to fail when run is refused, 400).
 * ModelView: { id, studyId, name, spec, regionSelection, circular,
 * caution, createdBy, createdAt, updatedBy, updatedAt, fitCount }.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import { modelCreateSchema, modelPatchSchema } from "../../contract/model-form";
import type { FitDataSource } from "../jobs/fit-jobs";
import { createModel, deleteModel, getModel, listModels, updateModel } from "../services/models";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const modelParams = z.strictObject({ studyId: idSchema, modelId: idSchema });
const list = { params: studyParams, query: noQuery };
const create = { params: studyParams, query: noQuery, body: modelCreateSchema };
const read = { params: modelParams, query: noQuery };
const patch = { params: modelParams, query: noQuery, body: modelPatchSchema };

/**
 * `fitData`: the fit jobs' cache of built fit data, so that judging a
 * model against the current data and the fit run next share one build.
 */
export function modelRoutes(deps: RouteDeps, fitData?: FitDataSource): Router {
  const router = Router();
  router.get(
    "/studies/:studyId/models",
    authorize("models.read"),
    validate(list),
    async (_req, res) => {
      res.json(await listModels(deps.db, authorizedStudy(res).study.id));
    },
  );
  router.post(
    "/studies/:studyId/models",
    authorize("models.write"),
    validate(create),
    async (_req, res) => {
      const model = await createModel(
        deps.db,
        signedInUser(res),
        authorizedStudy(res).study.id,
        parsed(res, create).body,
        deps.clock(),
        fitData,
      );
      res.status(201).json(model);
    },
  );
  router.get(
    "/studies/:studyId/models/:modelId",
    authorize("models.read"),
    validate(read),
    async (_req, res) => {
      res.json(
        await getModel(deps.db, authorizedStudy(res).study.id, parsed(res, read).params.modelId),
      );
    },
  );
  router.patch(
    "/studies/:studyId/models/:modelId",
    authorize("models.write"),
    validate(patch),
    async (_req, res) => {
      const { params, body } = parsed(res, patch);
      res.json(
        await updateModel(
          deps.db,
          signedInUser(res),
          authorizedStudy(res).study.id,
          params.modelId,
          body,
          deps.clock(),
          fitData,
        ),
      );
    },
  );
  router.delete(
    "/studies/:studyId/models/:modelId",
    authorize("models.write"),
    validate(read),
    async (_req, res) => {
      await deleteModel(
        deps.db,
        signedInUser(res),
        authorizedStudy(res).study.id,
        parsed(res, read).params.modelId,
        deps.clock(),
      );
      res.status(204).end();
    },
  );
  return router;
}
