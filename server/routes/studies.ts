/**
 * Studies.
 *
 * GET    /api/studies                    → studies you belong to, with your role and counts
 * GET    /api/studies?deleted=true       → deleted studies you own that can still be restored, with the date until which they can
 * POST   /api/studies                    → { name, description?, restricted? }; you become Owner (201)
 * GET    /api/studies/:studyId           → one study with your role, counts and capabilities
 * PATCH  /api/studies/:studyId           → { name?, description?, restricted?, secondPersonSignOff? } (Owner); the study's
 *                                          view carries `secondPersonSignOff` ("A second person signs off", contract/sign-off.ts)
 * DELETE /api/studies/:studyId           → { confirm: "<study name>" } soft delete (Owner, 204); 409 study_has_sealed_fits
 * POST   /api/studies/:studyId/restore   → undo a delete within 30 days (Owner); 410 restore_expired after
 * POST   /api/studies/:studyId/archive   → read-only for every role, still readable (Owner)
 * POST   /api/studies/:studyId/unarchive → writable again (Owner)
 *
 * While a study is archived, every change of it answers 409 study_archived
 * (decided once, in server/auth/permissions.ts).
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import {
  archiveStudy,
  createStudy,
  deleteStudy,
  listDeletedStudies,
  listStudies,
  restoreStudy,
  studyDetail,
  unarchiveStudy,
  updateStudy,
} from "../services/studies";
import type { RouteDeps } from "./deps";

const name = z
  .string()
  .trim()
  .min(1, { error: "must not be empty" })
  .max(200, { error: "must be at most 200 characters" });
const description = z.string().trim().max(5000, { error: "must be at most 5000 characters" });
export const studyParams = z.strictObject({ studyId: idSchema });

const create = {
  body: z.strictObject({
    name,
    description: description.optional(),
    restricted: z.boolean().optional(),
  }),
  query: noQuery,
};
const read = { params: studyParams, query: noQuery };
const patch = {
  params: studyParams,
  query: noQuery,
  body: z
    .strictObject({
      name: name.optional(),
      description: description.optional(),
      restricted: z.boolean().optional(),
      secondPersonSignOff: z.boolean().optional(),
    })
    .refine((b) => Object.keys(b).length > 0, {
      error: "give at least one of name, description, restricted, secondPersonSignOff",
    }),
};
const remove = {
  params: studyParams,
  query: noQuery,
  body: z.strictObject({ confirm: z.string({ error: "type the study's name to confirm" }) }),
};
const list = {
  query: z.strictObject({
    deleted: z.enum(["true", "false"], { error: "must be true or false" }).optional(),
  }),
};
const lifecycle = {
  params: studyParams,
  query: noQuery,
  body: z.union([z.strictObject({}), z.undefined()]),
};

export function studyRoutes(deps: RouteDeps): Router {
  const router = Router();
  router.get("/studies", authorize("studies.list"), validate(list), async (_req, res) => {
    const userId = signedInUser(res).id;
    res.json(
      parsed(res, list).query.deleted === "true"
        ? await listDeletedStudies(deps.db, userId, deps.clock())
        : await listStudies(deps.db, userId),
    );
  });
  router.post("/studies", authorize("studies.create"), validate(create), async (_req, res) => {
    const study = await createStudy(
      deps.db,
      signedInUser(res),
      parsed(res, create).body,
      deps.clock(),
    );
    res.status(201).json(study);
  });
  router.get("/studies/:studyId", authorize("study.read"), validate(read), async (_req, res) => {
    const { study, role } = authorizedStudy(res);
    res.json(await studyDetail(deps.db, study, role));
  });
  router.patch(
    "/studies/:studyId",
    authorize("study.update"),
    validate(patch),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      res.json(
        await updateStudy(
          deps.db,
          signedInUser(res),
          study,
          role,
          parsed(res, patch).body,
          deps.clock(),
        ),
      );
    },
  );
  router.delete(
    "/studies/:studyId",
    authorize("study.delete"),
    validate(remove),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      await deleteStudy(
        deps.db,
        signedInUser(res),
        study,
        parsed(res, remove).body.confirm,
        deps.clock(),
      );
      res.status(204).end();
    },
  );
  router.post(
    "/studies/:studyId/restore",
    authorize("study.restore"),
    validate(lifecycle),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      res.json(await restoreStudy(deps.db, signedInUser(res), study, role, deps.clock()));
    },
  );
  router.post(
    "/studies/:studyId/archive",
    authorize("study.archive"),
    validate(lifecycle),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      res.json(await archiveStudy(deps.db, signedInUser(res), study, role, deps.clock()));
    },
  );
  router.post(
    "/studies/:studyId/unarchive",
    authorize("study.unarchive"),
    validate(lifecycle),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      res.json(await unarchiveStudy(deps.db, signedInUser(res), study, role, deps.clock()));
    },
  );
  return router;
}
