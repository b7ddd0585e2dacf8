/**
 * The roster: the current brain table joined with the current participant sheet.
 *
 * GET  /api/studies/:studyId/roster?offset&limit&status&search&sort&order
 *        → join report { brainTable, participantSheet, rule, counts, matched, onlyInBrainTable,
 *          onlyInParticipantSheet, duplicates, nearMisses, mappings, columns } and a page of rows;
 *          roles that may not read participant-level rows get the counts only (lists and rows null)
 * POST /api/studies/:studyId/roster/mappings   { mappings: [{ brainId, sheetId }] } → 201 the new report
 * GET  /api/studies/:studyId/roster.csv        → the roster as CSV (formula-neutralised)
 *
 * The join runs in the intake worker thread, which answers with the JSON
 * (or CSV) text sent here as it is.
 */
import { Router } from "express";
import { z } from "zod";
import { authorize, authorizedStudy, roleMay } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { noQuery, parsed, validate } from "../http/validate";
import { confirmMappings, getRoster, rosterCsv } from "../services/roster";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const id = z.string().trim().min(1, { error: "must not be empty" }).max(500);
const rosterQuery = z.strictObject({
  offset: z.coerce.number().int().min(0).default(0),
  limit: z.coerce.number().int().min(1).max(1000).default(100),
  status: z.enum(["matched", "only-in-brain-table", "only-in-participant-sheet"]).optional(),
  search: z.string().max(200).optional(),
  sort: z.string().min(1).max(500).optional(),
  order: z.enum(["asc", "desc"]).default("asc"),
});
const read = { params: studyParams, query: rosterQuery };
const map = {
  params: studyParams,
  query: noQuery,
  body: z.strictObject({
    mappings: z
      .array(z.strictObject({ brainId: id, sheetId: id }))
      .min(1, { error: "give at least one mapping" })
      .max(1000),
  }),
};
const csv = { params: studyParams, query: noQuery };

export function rosterRoutes(deps: RouteDeps): Router {
  const router = Router();

  router.get(
    "/studies/:studyId/roster",
    authorize("data.read"),
    validate(read),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      const visible = roleMay("participants.read", role, { restricted: study.restricted });
      res
        .type("application/json")
        .send(await getRoster(deps.db, study.id, parsed(res, read).query, visible));
    },
  );

  router.post(
    "/studies/:studyId/roster/mappings",
    authorize("data.upload"),
    validate(map),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      await confirmMappings(
        deps.db,
        study.id,
        signedInUser(res).id,
        parsed(res, map).body.mappings,
        deps.clock(),
      );
      res
        .status(201)
        .type("application/json")
        .send(await getRoster(deps.db, study.id, { offset: 0, limit: 100, order: "asc" }, true));
    },
  );

  router.get(
    "/studies/:studyId/roster.csv",
    authorize("participants.read"),
    validate(csv),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      const text = await rosterCsv(deps.db, study.id);
      const name = `${
        study.name
          .replace(/[^\p{L}\p{N}]+/gu, "-")
          .replace(/^-|-$/g, "")
          .toLowerCase() || "study"
      }-roster.csv`;
      res.type("text/csv; charset=utf-8").attachment(name).send(text);
    },
  );

  return router;
}
