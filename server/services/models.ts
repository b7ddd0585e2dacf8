/**
 * Models: a study's saved questions. Create, list, read, change (name,
 * model fields, how the regions were chosen) and soft delete; every change
 * is recorded in the audit trail in the same transaction.
 *
 * The model fields are checked with the shared form schema at the edge;
 * here they are also checked against the study's current data when it
 * exists, with the fit's own rules (`problemsWithData`), answering 400 with
 * a detail per field. Names are unique among a study's models that are not
 * deleted (409).
 */
import { and, asc, count, eq, inArray, isNull } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { fits, models, users, type Model } from "../../db/schema";
import { HttpError, conflict, notFound } from "../http/errors";
import {
  type ModelCreate,
  type ModelPatch,
  type ModelView,
  type RegionSelection,
  circularityCaution,
  isCircular,
} from "../../contract/model-form";
import { type FitData, type ModelSpec, modelSpecSchema } from "../../contract/spec";
import { IntakeError } from "../intake/errors";
import { fitPreconditionProblems } from "../stats/run-fit";
import { recordEvent } from "./audit";
import { currentVersions } from "./datasets";
import type { FitDataSource } from "../jobs/fit-jobs";
import { buildFitInputs, confirmedMappings } from "./fit-inputs";
import { activeSetAsideList } from "./set-asides";

interface Actor {
  id: string;
}

function view(m: Model, names: Map<string, string | null>, fitCount: number): ModelView {
  const selection = m.regionSelection as RegionSelection;
  return {
    id: m.id,
    studyId: m.studyId,
    name: m.name,
    spec: modelSpecSchema.parse(m.spec),
    regionSelection: selection,
    circular: m.circular,
    caution: m.circular ? circularityCaution : null,
    createdBy: { id: m.createdBy, name: names.get(m.createdBy) ?? null },
    createdAt: m.createdAt.toISOString(),
    updatedBy: { id: m.updatedBy, name: names.get(m.updatedBy) ?? null },
    updatedAt: m.updatedAt.toISOString(),
    fitCount,
  };
}

async function views(db: Queryable, rows: readonly Model[]): Promise<ModelView[]> {
  if (rows.length === 0) return [];
  const people = [...new Set(rows.flatMap((m) => [m.createdBy, m.updatedBy]))];
  const ids = rows.map((m) => m.id);
  const [who, counts] = await Promise.all([
    db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, people)),
    db
      .select({ modelId: fits.modelId, n: count() })
      .from(fits)
      .where(inArray(fits.modelId, ids))
      .groupBy(fits.modelId),
  ]);
  const names = new Map(who.map((u) => [u.id, u.name]));
  const fitCounts = new Map(counts.map((c) => [c.modelId, Number(c.n)]));
  return rows.map((m) => view(m, names, fitCounts.get(m.id) ?? 0));
}

/** The study's models (not deleted), oldest first. */
export async function listModels(db: Queryable, studyId: string): Promise<ModelView[]> {
  const rows = await db
    .select()
    .from(models)
    .where(and(eq(models.studyId, studyId), isNull(models.deletedAt)))
    .orderBy(asc(models.createdAt), asc(models.name));
  return views(db, rows);
}

/** A model of the study (deleted ones only with `includeDeleted`). Throws 404. */
export async function findModel(
  db: Queryable,
  studyId: string,
  modelId: string,
  options: { includeDeleted?: boolean } = {},
): Promise<Model> {
  const [row] = await db
    .select()
    .from(models)
    .where(
      and(
        eq(models.id, modelId),
        eq(models.studyId, studyId),
        options.includeDeleted ? undefined : isNull(models.deletedAt),
      ),
    );
  if (!row) throw notFound("Model not found.");
  return row;
}

export async function getModel(
  db: Queryable,
  studyId: string,
  modelId: string,
): Promise<ModelView> {
  const [v] = await views(db, [await findModel(db, studyId, modelId)]);
  return v;
}

/**
 * Judges model fields against the study's current data with the fit's own
 * rules (fit-rules.ts, through the engine's `fitPreconditionProblems`), on
 * the data a fit started now would run on: the current brain table and
 * participant sheet joined with the confirmed id mappings, the study's
 * active set-asides applied. So a model that is sure to fail when run is
 * not saved: unknown regions or columns, a column of the wrong type, no
 * sessions or standard errors where needed, a group without the two levels
 * to compare, a region with too few participants (or a group with too few
 * in a region). Without a brain table nothing is judged; without a
 * participant sheet nothing that needs its columns; when the two tables
 * cannot be joined the model is not judged (running a fit reports that).
 * Returns problems with fields under `body.spec`. Cost: building the data
 * (reading both versions' rows; kept in `cache` when given, which the fit
 * started next reuses) and O(regions × participants) for the checks.
 */
export async function problemsWithData(
  db: Queryable,
  studyId: string,
  spec: ModelSpec,
  cache?: FitDataSource,
): Promise<{ field: string; message: string }[]> {
  const { brain, participants } = await currentVersions(db, studyId);
  if (!brain) return [];
  const inputs = {
    brainVersionId: brain.id,
    sheetVersionId: participants?.id ?? null,
    mappings: await confirmedMappings(db, studyId),
    session: null,
  };
  let data: FitData;
  try {
    data = cache ? await cache.get(inputs) : (await buildFitInputs(db, inputs)).data;
  } catch (e) {
    if (e instanceof IntakeError) return [];
    throw e;
  }
  const known = new Set(data.participants);
  const regions = new Set(data.regions);
  const setAside = (await activeSetAsideList(db, studyId)).filter(
    (a) => known.has(a.participant) && (a.region === undefined || regions.has(a.region)),
  );
  const problems = fitPreconditionProblems({ ...spec, setAside }, data, {
    columns: participants !== null,
    naming: {
      brainTable: `the brain table ${brain.fileName} (version ${brain.version})`,
      ...(participants
        ? {
            participantSheet: `the participant sheet ${participants.fileName} (version ${participants.version})`,
          }
        : {}),
    },
  });
  return problems.map((p) => ({ field: `body.spec.${p.field}`, message: p.message }));
}

async function checkAgainstData(
  db: Queryable,
  studyId: string,
  spec: ModelSpec,
  cache?: FitDataSource,
): Promise<void> {
  const problems = await problemsWithData(db, studyId, spec, cache);
  if (problems.length > 0) {
    throw new HttpError(
      400,
      "validation_failed",
      problems.map((p) => `${p.field}: ${p.message}`).join("; "),
      problems,
    );
  }
}

async function checkName(
  db: Queryable,
  studyId: string,
  name: string,
  exceptId?: string,
): Promise<void> {
  const rows = await db
    .select({ id: models.id })
    .from(models)
    .where(and(eq(models.studyId, studyId), eq(models.name, name), isNull(models.deletedAt)));
  if (rows.some((r) => r.id !== exceptId))
    throw conflict(`A model named "${name}" already exists in this study.`, [
      { field: "body.name", message: "is already used by another model" },
    ]);
}

function auditView(m: { name: string; spec: unknown; regionSelection: string; circular: boolean }) {
  return { name: m.name, spec: m.spec, regionSelection: m.regionSelection, circular: m.circular };
}

export async function createModel(
  db: Database,
  actor: Actor,
  studyId: string,
  input: ModelCreate,
  now: Date,
  cache?: FitDataSource,
): Promise<ModelView> {
  await checkAgainstData(db, studyId, input.spec, cache);
  const row = await db.transaction(async (tx) => {
    await checkName(tx, studyId, input.name);
    const [created] = await tx
      .insert(models)
      .values({
        studyId,
        name: input.name,
        spec: input.spec,
        regionSelection: input.regionSelection,
        circular: isCircular(input.regionSelection),
        createdBy: actor.id,
        createdAt: now,
        updatedBy: actor.id,
        updatedAt: now,
      })
      .returning();
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "model.created",
      targetType: "model",
      targetId: created.id,
      after: auditView(created),
      at: now,
    });
    return created;
  });
  const [v] = await views(db, [row]);
  return v;
}

/** Changes a model; `spec` replaces the model fields as a whole. Records only what changed. */
export async function updateModel(
  db: Database,
  actor: Actor,
  studyId: string,
  modelId: string,
  patch: ModelPatch,
  now: Date,
  cache?: FitDataSource,
): Promise<ModelView> {
  if (patch.spec) await checkAgainstData(db, studyId, patch.spec, cache);
  const row = await db.transaction(async (tx) => {
    const before = await findModel(tx, studyId, modelId);
    if (patch.name !== undefined) await checkName(tx, studyId, patch.name, modelId);
    const selection = patch.regionSelection ?? (before.regionSelection as RegionSelection);
    const [after] = await tx
      .update(models)
      .set({
        ...(patch.name !== undefined ? { name: patch.name } : {}),
        ...(patch.spec !== undefined ? { spec: patch.spec } : {}),
        regionSelection: selection,
        circular: isCircular(selection),
        updatedBy: actor.id,
        updatedAt: now,
      })
      .where(eq(models.id, modelId))
      .returning();
    const was = auditView(before);
    const is = auditView(after);
    const b: Record<string, unknown> = {};
    const a: Record<string, unknown> = {};
    for (const key of Object.keys(was) as (keyof typeof was)[]) {
      if (JSON.stringify(was[key]) !== JSON.stringify(is[key])) {
        b[key] = was[key];
        a[key] = is[key];
      }
    }
    if (Object.keys(a).length > 0) {
      await recordEvent(tx, {
        studyId,
        actorId: actor.id,
        kind: "model.updated",
        targetType: "model",
        targetId: modelId,
        before: b,
        after: a,
        at: now,
      });
    }
    return after;
  });
  const [v] = await views(db, [row]);
  return v;
}

/** Soft-deletes a model; its fits stay readable. */
export async function deleteModel(
  db: Database,
  actor: Actor,
  studyId: string,
  modelId: string,
  now: Date,
): Promise<void> {
  await db.transaction(async (tx) => {
    const before = await findModel(tx, studyId, modelId);
    await tx
      .update(models)
      .set({ deletedAt: now, deletedBy: actor.id })
      .where(eq(models.id, modelId));
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "model.deleted",
      targetType: "model",
      targetId: modelId,
      before: auditView(before),
      after: { deletedAt: now.toISOString() },
      at: now,
    });
  });
}
