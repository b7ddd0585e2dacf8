/**
 * Fits: creating one (a queued job), listing, reading (status, progress,
 * recipe, result), cancelling, a region's detail for plots, and the
 * one-region preview with the current set-asides.
 *
 * A new fit is pinned at creation: the study's current brain-table and
 * participant-sheet versions, its confirmed id mappings and its active
 * set-asides (those that name a participant and region present in that
 * data; others are listed in the audit event as not applied) go into the
 * recipe, with the model fields (defaults filled in) and the software
 * version. The job builds its data from the recipe alone. A full refit is
 * simply a new fit; the old one stays.
 *
 * Participant-level content (diagnostics rows, points, participant ids in
 * results, the recipe's set-aside list and id mappings) is left out for
 * callers without `fits.participants.read` (Viewers of a restricted study).
 */
import { createHash } from "node:crypto";
import { and, desc, eq, getTableColumns, sql } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { perDatabase } from "../../db/prepared";
import { cachedRead, deepFreeze } from "../../db/read-cache";
import { sharedRegionReadJobs } from "../jobs/region-read-jobs";
import { type RegionPlotHead, RegionPoints } from "../jobs/region-points";
import { settledCache } from "./settled-cache";
import {
  datasetVersions,
  fitApprovals,
  fitRegions,
  fitSeals,
  fits,
  models,
  users,
  type Fit,
  type Study,
} from "../../db/schema";
import { conflict, notFound } from "../http/errors";
import { idSchema } from "../http/validate";
import type { FitJobs } from "../jobs/fit-jobs";
import { type RuleExclusion, modelRuleReason } from "../../contract/exclusion-rules";
import { circularityCaution } from "../../contract/model-form";
import { type Recipe, RecipeSpecError, buildRecipe, specOfRecipe } from "../../contract/recipe";
import {
  type Flag,
  type ModelSpec,
  type RegionResult,
  currentRearrangementStreams,
  modelSpecSchema,
} from "../../contract/spec";
import { FIT_LEVEL, runFit } from "../stats/run-fit";
import type {
  FitRuleExclusionView,
  DatasetRef,
  FitLineage,
  FitProgress,
  FitResultSummary,
  FitStatus,
  FitSummaryView,
  FitView,
  Publication,
  RegionDetail,
  RegionPlotPoint,
  RegionPreview,
} from "../../contract/views/fits";
import { attenuateResult, withAttenuation } from "./attenuation";
import { recordEvent } from "./audit";
import { currentVersions } from "./datasets";
import { confirmedMappings, inputsOfFit } from "./fit-inputs";
import { insertQueuedFit, markFitCancelled } from "./fit-store";
import { fitSetAsides, lineageOf, refitTarget } from "./fit-lineage";
import { findModel } from "./models";
import { fitPlan } from "./plans";
import { activeSetAsideList } from "./set-asides";
import { sealHash } from "./sealing";

interface Actor {
  id: string;
}

/**
 * The keys of a region's result that the fit view leaves to the region
 * detail (GET /api/fits/:fitId/regions/:region): the nested parts a
 * region table does not show — the permutation null histogram, the
 * with-and-without sensitivity, leave-one-out, variance inflation factors,
 * the flags' cut-offs,
 * the permutation and bootstrap accounts, projection outliers. Three of
 * them name participants (sensitivity, leave-one-out, projection
 * outliers), so the fit view's regions carry no participant id at all.
 * Left out, a 400-region view is less than half the size.
 */
export const REGION_DETAIL_KEYS: ReadonlySet<string> = new Set([
  "nullHistogram",
  "sensitivity",
  "leaveOneOut",
  "vif",
  "flagThresholds",
  "permutation",
  "bootstrap",
  "projectionOutliers",
]);

/** A region's result as the fit view shows it (without REGION_DETAIL_KEYS). */
function viewRegion(region: RegionResult): RegionResult {
  const out: Record<string, unknown> = {};
  for (const [key, value] of Object.entries(region))
    if (!REGION_DETAIL_KEYS.has(key)) out[key] = value;
  return out as RegionResult;
}

/** The study of the fit named by `params.fitId`, for `authorize` (null when there is none). */
export async function studyOfFit(
  db: Database,
  params: Record<string, string>,
): Promise<string | null> {
  const fitId = params.fitId;
  if (!idSchema.safeParse(fitId).success) return null;
  // A fit never moves to another study, so the answer can be kept (per database, bounded).
  const known = fitStudies.get(db) ?? new Map<string, string>();
  fitStudies.set(db, known);
  const cached = known.get(fitId);
  if (cached) return cached;
  const [row] = await db.select({ studyId: fits.studyId }).from(fits).where(eq(fits.id, fitId));
  if (row) {
    if (known.size >= 10_000) known.clear();
    known.set(fitId, row.studyId);
  }
  return row?.studyId ?? null;
}

const fitStudies = new WeakMap<object, Map<string, string>>();

/** A fit's columns without its result (read apart, see doneResultOf). */
const { result: _result, ...rowColumns } = getTableColumns(fits);

const fitRow = perDatabase((db) =>
  db
    .select(rowColumns)
    .from(fits)
    .where(and(eq(fits.id, sql.placeholder("fitId")), eq(fits.studyId, sql.placeholder("studyId"))))
    .prepare("fit_row"),
);

/** The fit (of an authorized study), its result (when done) read once and kept (see doneResultOf). Throws 404. */
export async function findFit(db: Queryable, studyId: string, fitId: string): Promise<Fit> {
  const [row] = await fitRow(db).execute({ fitId, studyId });
  if (!row) throw notFound("Fit not found.");
  const result =
    row.status === "done" ? (await doneResultOf(db, row.id, row.finishedAt)).result : null;
  return { ...row, result };
}

function progressOf(
  fit: Pick<Fit, "id" | "status" | "progress" | "secondsLeft">,
  jobs: FitJobs,
): FitProgress {
  if (fit.status === "running") {
    const live = jobs.live(fit.id);
    if (live) return live;
  }
  return {
    fraction: fit.status === "done" ? 1 : fit.progress,
    secondsLeft: fit.status === "running" ? fit.secondsLeft : null,
  };
}

/** A column of the outer `fits` row, named in full (drizzle writes a selected column unqualified, which inside a subquery would mean the inner table's). */
const outerFit = (column: string) => sql.raw(`"fits"."${column}"`);

/**
 * The columns of a fit's summary (not its recipe or result, which can be
 * large). Its model and creator are scalar subqueries rather than joins:
 * the embedded database plans every query afresh, and planning a join
 * costs far more than running these one-row lookups. A sealed fit's model
 * is the one its seal kept (`SealedModel`, services/sealing.ts): renaming or
 * deleting the model later does not reach a sealed fit. (Seals made before
 * the seal kept its model have none: those show the model as it is now.)
 */
const summaryColumns = {
  id: fits.id,
  studyId: fits.studyId,
  modelId: fits.modelId,
  status: fits.status,
  progress: fits.progress,
  secondsLeft: fits.secondsLeft,
  createdBy: fits.createdBy,
  createdAt: fits.createdAt,
  startedAt: fits.startedAt,
  finishedAt: fits.finishedAt,
  error: fits.error,
  errorCode: fits.errorCode,
  model: sql<{ name: string; deleted: boolean; circular: boolean } | null>`coalesce(
    (select s.model from ${fitSeals} s where s.fit_id = ${outerFit("id")}),
    (select jsonb_build_object('name', mo.name, 'deleted', mo.deleted_at is not null, 'circular', mo.circular) from ${models} mo where mo.id = ${outerFit("model_id")}))`,
  creatorName: sql<
    string | null
  >`(select u.name from ${users} u where u.id = ${outerFit("created_by")})`,
  approved: sql<boolean>`exists (select 1 from ${fitApprovals} a where a.fit_id = ${outerFit("id")})`,
  sealed: sql<boolean>`exists (select 1 from ${fitSeals} s where s.fit_id = ${outerFit("id")})`,
};

interface SummaryRow {
  id: string;
  studyId: string;
  modelId: string;
  status: FitStatus;
  progress: number;
  secondsLeft: number | null;
  createdBy: string;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
  error: string | null;
  errorCode: string | null;
  model: { name: string; deleted: boolean; circular: boolean } | null;
  creatorName: string | null;
  approved: boolean;
  sealed: boolean;
}

const noLineage: FitLineage = {
  n: null,
  setAsideCount: 0,
  refitOf: null,
  refitOfCreatedAt: null,
  changes: [],
  stale: false,
  staleReasons: [],
};

function summaryOf(
  row: SummaryRow,
  jobs: FitJobs,
  lineage: FitLineage | undefined,
): FitSummaryView {
  return {
    id: row.id,
    studyId: row.studyId,
    model: {
      id: row.modelId,
      name: row.model?.name ?? "",
      deleted: row.model?.deleted ?? false,
      circular: row.model?.circular ?? false,
    },
    status: row.status,
    stage:
      row.status === "done" && row.sealed
        ? "sealed"
        : row.status === "done" && row.approved
          ? "approved"
          : row.status,
    progress: progressOf(row, jobs),
    createdBy: { id: row.createdBy, name: row.creatorName ?? null },
    createdAt: row.createdAt.toISOString(),
    startedAt: row.startedAt?.toISOString() ?? null,
    finishedAt: row.finishedAt?.toISOString() ?? null,
    error: row.error ? { code: row.errorCode ?? "failed", message: row.error } : null,
    ...(lineage ?? noLineage),
  };
}

const fitsOfStudy = perDatabase((db) =>
  db
    .select(summaryColumns)
    .from(fits)
    .where(eq(fits.studyId, sql.placeholder("studyId")))
    .orderBy(desc(fits.createdAt), desc(fits.id))
    .prepare("fits_of_study"),
);
const fitsOfModel = perDatabase((db) =>
  db
    .select(summaryColumns)
    .from(fits)
    .where(
      and(
        eq(fits.studyId, sql.placeholder("studyId")),
        eq(fits.modelId, sql.placeholder("modelId")),
      ),
    )
    .orderBy(desc(fits.createdAt), desc(fits.id))
    .prepare("fits_of_model"),
);

/**
 * The study's fits, newest first (optionally of one model), with their
 * lineage. One query (kept until the next write, see db/read-cache.ts) and
 * the lineage's reads (services/fit-lineage.ts). Participant ids in the
 * lineage's words follow `participantsVisible`.
 */
export async function listFits(
  db: Queryable,
  jobs: FitJobs,
  studyId: string,
  options: { modelId?: string; participantsVisible: boolean },
): Promise<FitSummaryView[]> {
  const { modelId } = options;
  const rows: readonly SummaryRow[] = await cachedRead(
    db,
    `fits of ${studyId} ${modelId ?? "*"}`,
    () =>
      modelId
        ? fitsOfModel(db).execute({ studyId, modelId })
        : fitsOfStudy(db).execute({ studyId }),
  );
  const lineage = await lineageOf(db, studyId, rows, {
    participantsVisible: options.participantsVisible,
  });
  return rows.map((r) => summaryOf(r, jobs, lineage.get(r.id)));
}

const participantIdKeys = ["minWithout", "maxWithout", "rMinWithout", "rMaxWithout"] as const;

/** A region result without participant ids (projection outliers, sensitivity exclusions, leave-one-out names). */
export function withoutParticipantIds(r: RegionResult): RegionResult {
  const out: RegionResult = { ...r };
  if (Array.isArray(out.projectionOutliers))
    out.projectionOutliers = { count: out.projectionOutliers.length };
  if (out.sensitivity && typeof out.sensitivity === "object") {
    const s = { ...(out.sensitivity as Record<string, unknown>) };
    if (Array.isArray(s.excluded)) s.excluded = { count: s.excluded.length };
    out.sensitivity = s;
  }
  if (out.leaveOneOut && typeof out.leaveOneOut === "object") {
    const l = { ...(out.leaveOneOut as Record<string, unknown>) };
    for (const k of participantIdKeys) delete l[k];
    out.leaveOneOut = l;
  }
  return out;
}

/** A finished fit's result as stored, parsed once, with the hash its seal is checked against. */
interface DoneResult {
  finishedAt: number;
  /** As stored (the seal covers it). */
  result: FitResultSummary;
  /** As the fit view shows it: regions without REGION_DETAIL_KEYS. */
  shown: FitResultSummary;
  /** sealHash(recipe, result) of the values read from the database, computed when first needed. */
  hash: string | null;
}

/**
 * Finished fits' results, kept parsed (services/settled-cache.ts: a fit's
 * result is written once, in the same update that marks it done, and
 * never changes afterwards; a sealed fit's row is also guarded by a
 * trigger). Reading and parsing a result of 400 regions from the embedded
 * database costs ~20 ms of the request thread, which readers of a finished
 * fit would otherwise pay every time. `result` and `shown` are frozen:
 * callers copy before they change anything. The bound, counted in
 * characters of JSON, holds about 35 finished fits of 400 regions × 500
 * participants (the parsed objects take a few times more memory).
 */
const RESULT_CACHE_CHARS = 32 * 1024 * 1024;
const doneResults = settledCache<DoneResult>(RESULT_CACHE_CHARS);

/** The finished fit's stored result (from memory when read before). */
function doneResultOf(db: Queryable, fitId: string, finishedAt: Date | null): Promise<DoneResult> {
  const stamp = finishedAt?.getTime() ?? 0;
  return doneResults.get(db, fitId, stamp, async () => {
    const [row] = await db
      .select({ text: sql<string | null>`${fits.result}::text` })
      .from(fits)
      .where(eq(fits.id, fitId));
    const text = row?.text ?? "null";
    const result = deepFreeze(JSON.parse(text) as FitResultSummary);
    // The ids a model's rules left out go in the view's head (ruleExclusions), never in the shown result.
    const { ruleExclusions: _ids, ...rest } = result;
    const shown = deepFreeze({ ...rest, regions: result.regions.map(viewRegion) });
    return { value: { finishedAt: stamp, result, shown, hash: null }, weight: text.length };
  });
}

/** A dataset version of the fit as { id, version, fileName, sha256 } (a scalar subquery). */
const version = (column: "brain_version_id" | "sheet_version_id") =>
  sql<DatasetRef | null>`(select json_build_object('id', dv.id, 'version', dv.version, 'fileName', dv.file_name, 'sha256', dv.sha256)
    from ${datasetVersions} dv where dv.id = ${outerFit(column)})`;

/** One fit as the API shows it, without its result (see loadFitView). */
const fitViewRow = perDatabase((db) =>
  db
    .select({
      ...summaryColumns,
      recipe: fits.recipe,
      brainVersionId: fits.brainVersionId,
      sheetVersionId: fits.sheetVersionId,
      brain: version("brain_version_id"),
      sheet: version("sheet_version_id"),
      approval: sql<{
        at: string;
        id: string;
        name: string | null;
      } | null>`(select json_build_object('at', a.approved_at, 'id', u.id, 'name', u.name)
        from ${fitApprovals} a join ${users} u on u.id = a.approved_by where a.fit_id = ${outerFit("id")})`,
      seal: sql<{
        at: string;
        sha256: string;
        id: string;
        name: string | null;
        single: boolean;
      } | null>`(select json_build_object('at', s.sealed_at, 'sha256', s.sha256, 'id', u.id, 'name', u.name, 'single', s.single_person_sign_off)
        from ${fitSeals} s join ${users} u on u.id = s.sealed_by where s.fit_id = ${outerFit("id")})`,
    })
    .from(fits)
    .where(and(eq(fits.id, sql.placeholder("fitId")), eq(fits.studyId, sql.placeholder("studyId"))))
    .prepare("fit_view"),
);

/**
 * A fit's view in two parts, for answering a finished fit from a kept,
 * compressed body (services/fit-view-body.ts):
 *
 * - `head`: the view with `result: null` — everything about the fit
 *   besides its result, read in one query (the fit without its result; its
 *   model, who ran it, its dataset versions, its approval and seal as
 *   scalar subqueries). All that can change after a fit is done lives
 *   here: the model's name (until sealed), approval, seal, who ran it,
 *   and its lineage (services/fit-lineage.ts): whether it is stale and
 *   why, and the names of who set its participants aside.
 * - `result` (done fits): the stored result as the view shows it (parsed
 *   once and kept, see doneResults), with attenuation where it applies,
 *   and `resultStamp`, which changes whenever that shown result can: the
 *   stored result never changes; the attenuation beside it follows the
 *   study's stated reliabilities.
 *
 * The kept body is keyed on the head's JSON and the stamp, so anything
 * added to the view must go in the head, or change the stamp.
 * A seal is `intact` when the recipe and the result as read from the
 * database hash to the sealed SHA-256. Throws 404.
 */
export interface FitViewParts {
  head: FitView;
  result: FitResultSummary | null;
  resultStamp: string;
}

export async function fitViewParts(
  db: Queryable,
  jobs: FitJobs,
  studyId: string,
  fitId: string,
  participantsVisible: boolean,
): Promise<FitViewParts> {
  const [row] = await cachedRead(db, `fit view ${studyId} ${fitId}`, () =>
    fitViewRow(db).execute({ fitId, studyId }),
  );
  if (!row) throw notFound("Fit not found.");
  const lineage = (await lineageOf(db, studyId, [row], { participantsVisible })).get(row.id);
  const setAsides = await fitSetAsides(db, studyId, row.id, { participantsVisible });
  const summary = summaryOf(row, jobs, lineage);
  const ref = (v: DatasetRef | null, id: string): DatasetRef =>
    v?.id ? v : { id, version: 0, fileName: "", sha256: "" };
  // Only a finished fit has a result, and only a finished fit can be approved or sealed.
  const stored = row.status === "done" ? await doneResultOf(db, row.id, row.finishedAt) : null;
  // The shown regions carry no participant ids (REGION_DETAIL_KEYS), so callers without participant rows get the same result.
  const shown = stored ? await shownResult(db, row, stored) : null;
  let seal: Publication["seal"] = null;
  if (stored && row.seal) {
    stored.hash ??= sealHash(row.recipe, stored.result);
    seal = {
      by: { id: row.seal.id, name: row.seal.name },
      at: new Date(row.seal.at).toISOString(),
      sha256: row.seal.sha256,
      intact: stored.hash === row.seal.sha256,
      singlePersonSignOff: row.seal.single === true,
    };
  }
  const approval: Publication["approval"] =
    stored && row.approval
      ? {
          by: { id: row.approval.id, name: row.approval.name },
          at: new Date(row.approval.at).toISOString(),
        }
      : null;
  // Compared with the plan current when the fit was created (services/plans.ts).
  const plan = await cachedRead(db, `fit plan ${studyId} ${fitId}`, () =>
    fitPlan(db, {
      studyId,
      createdAt: new Date(summary.createdAt),
      spec: readableSpec(row.recipe),
    }),
  );
  const ruleExclusions = ruleExclusionViews(
    readableSpec(row.recipe),
    stored?.result.ruleExclusions as RuleExclusion[] | undefined,
    participantsVisible,
  );
  const head: FitView = {
    ...summary,
    model: { ...summary.model, caution: summary.model.circular ? circularityCaution : null },
    datasets: {
      brain: ref(row.brain, row.brainVersionId),
      participants: row.sheetVersionId ? ref(row.sheet, row.sheetVersionId) : null,
    },
    participantsVisible,
    recipe: participantsVisible ? (row.recipe as Record<string, unknown>) : null,
    result: null,
    setAsides,
    ruleExclusions,
    approval,
    seal,
    plan,
  };
  return { head, result: shown?.result ?? null, resultStamp: shown?.stamp ?? "" };
}

/** The model's rules with whom each left out (counts and ids once the fit is done; ids only when visible). */
function ruleExclusionViews(
  spec: ModelSpec | null,
  found: readonly RuleExclusion[] | undefined,
  participantsVisible: boolean,
): FitRuleExclusionView[] {
  return (spec?.exclusionRules ?? []).map((rule, k) => {
    const ids = found?.[k]?.participants ?? null;
    return {
      rule,
      count: ids ? ids.length : null,
      participants: ids && participantsVisible ? [...ids] : null,
    };
  });
}

/**
 * A finished fit's result as its view shows it: the kept regions without
 * REGION_DETAIL_KEYS, with attenuation added where it applies, and a stamp
 * of what was added ("" when nothing was). Kept until the next write to the
 * database (attenuation reads the study's stated trait reliabilities).
 */
function shownResult(
  db: Queryable,
  row: Pick<Fit, "id" | "studyId" | "brainVersionId" | "recipe">,
  stored: DoneResult,
): Promise<{ result: FitResultSummary; stamp: string }> {
  return cachedRead(db, `fit result shown ${row.id} ${stored.finishedAt}`, async () => {
    const result = await attenuateResult(
      db,
      { studyId: row.studyId, brainVersionId: row.brainVersionId, recipe: row.recipe },
      stored.shown,
    );
    const stamp =
      result === stored.shown
        ? ""
        : createHash("sha256").update(JSON.stringify(result)).digest("base64url");
    return { result, stamp };
  });
}

/** One fit of the study as the API answers it (see fitViewParts). Throws 404. */
export async function loadFitView(
  db: Queryable,
  jobs: FitJobs,
  studyId: string,
  fitId: string,
  participantsVisible: boolean,
): Promise<FitView> {
  const { head, result } = await fitViewParts(db, jobs, studyId, fitId, participantsVisible);
  return { ...head, result };
}

/** One fit as the API answers it (see loadFitView). */
export async function fitView(
  db: Queryable,
  jobs: FitJobs,
  fit: Pick<Fit, "id" | "studyId">,
  participantsVisible: boolean,
): Promise<FitView> {
  return loadFitView(db, jobs, fit.studyId, fit.id, participantsVisible);
}

/**
 * Creates a queued fit of a model on the study's current data and starts
 * its job. Throws 404 (model), 409 (no confirmed brain table), IntakeError
 * 422 (the data cannot be joined).
 */
export async function createFit(
  db: Database,
  jobs: FitJobs,
  actor: Actor,
  study: Study,
  modelId: string,
  now: Date,
  softwareVersion: string,
): Promise<FitView> {
  const model = await findModel(db, study.id, modelId);
  const { brain, participants } = await currentVersions(db, study.id);
  if (!brain)
    throw conflict(
      "This study has no confirmed brain table yet: upload and confirm one before running a fit.",
    );
  const mappings = await confirmedMappings(db, study.id);
  const inputs = {
    brainVersionId: brain.id,
    sheetVersionId: participants?.id ?? null,
    mappings,
    session: null,
  };
  const { data, session } = await jobs.data.built(inputs);
  const known = new Set(data.participants);
  const regions = new Set(data.regions);
  const active = await activeSetAsideList(db, study.id);
  const applied = active.filter(
    (s) => known.has(s.participant) && (s.region === undefined || regions.has(s.region)),
  );
  const notApplied = active.filter((s) => !applied.includes(s));
  const refitOf = await refitTarget(db, study.id, model.id);
  const spec: ModelSpec = modelSpecSchema.parse({
    ...(model.spec as object),
    setAside: applied,
    rearrangementStreams: currentRearrangementStreams,
  });
  const recipe: Recipe = buildRecipe({
    brainTable: { file: brain.fileName, sha256: brain.sha256 },
    participantSheet: participants
      ? { file: participants.fileName, sha256: participants.sha256 }
      : null,
    idColumn: brain.idColumn,
    seSuffix: brain.seSuffix ?? "_se",
    session,
    mappings,
    spec,
    softwareVersion,
  });
  const fit = await db.transaction(async (tx) => {
    const created = await insertQueuedFit(tx, {
      studyId: study.id,
      modelId: model.id,
      brainVersionId: brain.id,
      sheetVersionId: participants?.id ?? null,
      recipe,
      createdBy: actor.id,
      createdAt: now,
      refitOf,
    });
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "fit.run",
      targetType: "fit",
      targetId: created.id,
      after: {
        modelId: model.id,
        modelName: model.name,
        brainTable: { id: brain.id, version: brain.version },
        participantSheet: participants
          ? { id: participants.id, version: participants.version }
          : null,
        setAside: applied.length,
        refitOf,
        ...(notApplied.length > 0 ? { setAsideNotApplied: notApplied } : {}),
        seed: spec.seed,
      },
      at: now,
    });
    return created;
  });
  jobs.enqueue(fit.id);
  return fitView(db, jobs, fit, true);
}

/** The model fields of a stored recipe, or null when they cannot be read as a model. */
function readableSpec(recipe: unknown): ModelSpec | null {
  try {
    return specOfRecipe(recipe as Record<string, unknown>);
  } catch (error) {
    if (error instanceof RecipeSpecError) return null;
    throw error;
  }
}

/** Cancels a queued or running fit. Throws 409 when it has already finished. */
export async function cancelFit(
  db: Database,
  jobs: FitJobs,
  actor: Actor,
  fit: Fit,
  now: Date,
): Promise<FitView> {
  const cancelled = await jobs.cancel(fit.id, () =>
    db.transaction(async (tx) => {
      if (!(await markFitCancelled(tx, fit.id, actor.id, now))) return false;
      await recordEvent(tx, {
        studyId: fit.studyId,
        actorId: actor.id,
        kind: "fit.cancelled",
        targetType: "fit",
        targetId: fit.id,
        before: { status: fit.status },
        at: now,
      });
      return true;
    }),
  );
  const [now2] = await db.select().from(fits).where(eq(fits.id, fit.id));
  if (!cancelled) throw conflict(`This fit has already finished (${now2.status}).`);
  return fitView(db, jobs, now2, true);
}

function regionOf(fit: Fit, region: string): RegionResult {
  if (fit.status !== "done") throw conflict(`This fit is not finished (status ${fit.status}).`);
  const found = (fit.result as { regions: RegionResult[] }).regions.find(
    (r) => r.region === region,
  );
  if (!found) throw notFound(`No region '${region}' in this fit.`);
  return found;
}

/**
 * Finished regions, kept decoded (services/settled-cache.ts: a region's
 * rows are written while its fit runs, never once it is done). At 20,000
 * participants reading, decoding and joining one region cost the request
 * thread over 100 ms, paid again for every page of its participants and
 * every look at its plots. The bound, in characters of stored text, holds
 * about 13 regions of 20,000 participants or 600 of 500.
 */
const REGION_CACHE_CHARS = 64 * 1024 * 1024;
const finishedRegions = settledCache<RegionPoints>(REGION_CACHE_CHARS);

/** A finished fit's region: its result row, its participants with every diagnostic (in the fit's order), its plot data. Throws 409 (not done), 404 (no such region). */
export async function regionParticipantRows(
  db: Queryable,
  fit: Fit,
  region: string,
): Promise<{ summary: RegionResult; points: RegionPoints; plot: RegionPlotHead }> {
  const summary = regionOf(fit, region);
  const stamp = fit.finishedAt?.getTime() ?? 0;
  const points = await finishedRegions.get(db, `${fit.id}\u0000${region}`, stamp, async () => {
    const [row] = await db
      .select({ participants: fitRegions.participants, plot: fitRegions.plot })
      .from(fitRegions)
      .where(and(eq(fitRegions.fitId, fit.id), eq(fitRegions.region, region)));
    const columns = await sharedRegionReadJobs().decode(
      row?.participants ?? null,
      row?.plot ?? null,
    );
    return {
      value: new RegionPoints(columns),
      weight:
        (row?.participants.length ?? 0) +
        (row?.plot?.length ?? 0) +
        (columns.pointsText?.length ?? 0),
    };
  });
  return { summary, points, plot: points.plot };
}

/** A finished fit's region, for its plots. Throws 409 (not done), 404 (no such region). */
export async function regionDetail(
  db: Queryable,
  fit: Fit,
  region: string,
  participantsVisible: boolean,
): Promise<RegionDetail> {
  const { detail, points } = await regionDetailOf(db, fit, region, participantsVisible);
  if (participantsVisible) {
    const plotPoints: RegionPlotPoint[] = new Array(points.n);
    for (let i = 0; i < points.n; i++) plotPoints[i] = points.plotPoint(i);
    detail.points = plotPoints;
  }
  return detail;
}

/**
 * `regionDetail` as the JSON text the API sends: the points are the
 * region's kept text (`RegionPoints.plotPointsText`, written out once, off
 * the request thread for a large region) and only the rest is written per
 * request. The same JSON value as `regionDetail`, keys in the same order.
 */
export async function regionDetailJson(
  db: Queryable,
  fit: Fit,
  region: string,
  participantsVisible: boolean,
): Promise<string> {
  const { detail, points } = await regionDetailOf(db, fit, region, participantsVisible);
  if (!participantsVisible) return JSON.stringify(detail);
  const entries = Object.entries(detail);
  const at = entries.findIndex(([key]) => key === "points");
  // An object's members as JSON text without its braces ("" when it has none written).
  const members = (part: [string, unknown][]) =>
    JSON.stringify(Object.fromEntries(part)).slice(1, -1);
  const parts = [
    members(entries.slice(0, at)),
    `"points":${points.plotPointsText()}`,
    members(entries.slice(at + 1)),
  ];
  return `{${parts.filter((part) => part.length > 0).join(",")}}`;
}

/** A region's detail with its points left null, and the region's points. */
async function regionDetailOf(
  db: Queryable,
  fit: Fit,
  region: string,
  participantsVisible: boolean,
): Promise<{ detail: RegionDetail; points: RegionPoints }> {
  const { summary, points, plot } = await regionParticipantRows(db, fit, region);
  const spec = specOfRecipe(fit.recipe);
  const result = fit.result as Record<string, unknown>;
  const drawn = plot && !("error" in plot) ? plot : null;
  const notes = [
    ...(drawn?.notes ?? []),
    ...(plot && "error" in plot ? [`No plot data: ${plot.error}.`] : []),
  ];
  const flagCounts = { outlier: 0, leverage: 0, influence: 0 };
  for (let i = 0; i < points.n; i++) for (const f of points.flags(i)) flagCounts[f as Flag] += 1;
  const levels =
    drawn?.groupMeans && spec.kind === "two-group"
      ? drawn.groupMeans.map((g) => g.label)
      : spec.levels
        ? [...spec.levels]
        : null;
  // Participants the model's rules left out are listed as left out of every region, with the rule as the reason.
  const ruled = ((result.ruleExclusions as RuleExclusion[] | undefined) ?? []).flatMap((r) =>
    r.participants.map((participant) => ({
      participant,
      scope: "all regions" as const,
      reason: modelRuleReason(r.rule),
    })),
  );
  const setAside = [
    ...spec.setAside
      .filter((s) => s.region === undefined || s.region === region)
      .map((s) => ({
        participant: s.participant,
        scope: s.region === undefined ? ("all regions" as const) : ("this region" as const),
        reason: s.reason,
      })),
    ...ruled,
  ];
  const [shown] = (
    await withAttenuation(db, fit, [participantsVisible ? summary : withoutParticipantIds(summary)])
  ).regions;
  const detail: RegionDetail = {
    fitId: fit.id,
    region,
    kind: spec.kind,
    estimator: spec.estimator,
    inference: spec.inference,
    level: (result.level as number | undefined) ?? FIT_LEVEL,
    result: shown,
    n: summary.n,
    axes: {
      x: spec.kind === "association" ? (spec.predictor ?? null) : null,
      y: "contrast value",
      group: spec.group ?? null,
      levels,
    },
    flagCounts,
    participantsVisible,
    points: null,
    setAside: participantsVisible ? setAside : null,
    band: drawn?.band ?? null,
    groupMeans: drawn?.groupMeans ?? null,
    nullHistogram: summary.nullHistogram ?? null,
    sensitivity: shown.sensitivity ?? null,
    leaveOneOut: shown.leaveOneOut ?? null,
    notes,
  };
  return { detail, points };
}

/**
 * Recomputes one region of a fit at once with the study's current active
 * set-asides (same data versions and model; parametric inference; no
 * correction). Runs on the request thread: one region costs O(n·p²).
 * Throws 404 (no such region), StatsError 422 (e.g. too few participants left).
 */
export async function previewRegion(
  db: Queryable,
  jobs: FitJobs,
  fit: Fit,
  region: string,
  participantsVisible: boolean,
): Promise<RegionPreview> {
  const recipeSpec = specOfRecipe(fit.recipe);
  const chosen = recipeSpec.regions && recipeSpec.regions.length > 0 ? recipeSpec.regions : null;
  if (chosen && !chosen.includes(region)) throw notFound(`No region '${region}' in this fit.`);
  const data = await jobs.data.get(inputsOfFit(fit));
  if (!data.regions.includes(region)) throw notFound(`No region '${region}' in this fit.`);
  const known = new Set(data.participants);
  const active = (await activeSetAsideList(db, fit.studyId)).filter(
    (s) => known.has(s.participant) && (s.region === undefined || s.region === region),
  );
  const spec: ModelSpec = {
    ...recipeSpec,
    regions: [region],
    setAside: active,
    inference: "parametric",
    correction: "none",
  };
  const out = runFit(spec, data).regions[0];
  const keyOf = (s: { participant: string; region?: string }) =>
    `${s.participant}\u0000${s.region ?? ""}`;
  const before = new Set(
    recipeSpec.setAside.filter((s) => s.region === undefined || s.region === region).map(keyOf),
  );
  const now = new Set(active.map(keyOf));
  let fitNumbers: RegionPreview["fit"] = null;
  if (fit.status === "done") {
    const r = (fit.result as { regions: RegionResult[] }).regions.find((x) => x.region === region);
    if (r) {
      fitNumbers = {
        n: r.n,
        estimate: r.estimate,
        ciLow: (r.ciLowParametric as number | null | undefined) ?? r.ciLow,
        ciHigh: (r.ciHighParametric as number | null | undefined) ?? r.ciHigh,
        p: (r.pParametric as number | undefined) ?? r.p,
        ...(r.r !== undefined ? { r: r.r } : {}),
      };
    }
  }
  return {
    fitId: fit.id,
    region,
    inference: "parametric",
    fit: fitNumbers,
    preview: {
      n: out.n,
      estimate: out.estimate,
      se: out.se,
      statistic: out.statistic,
      df: out.df,
      p: out.p,
      ciLow: out.ciLow,
      ciHigh: out.ciHigh,
      ...(out.r !== undefined ? { r: out.r, rCiLow: out.rCiLow, rCiHigh: out.rCiHigh } : {}),
      method: out.method,
    },
    setAside: {
      count: active.length,
      participants: participantsVisible
        ? active.map((s) => ({
            participant: s.participant,
            scope: s.region === undefined ? ("all regions" as const) : ("this region" as const),
            reason: s.reason,
          }))
        : null,
    },
    changes: {
      added: [...now].filter((k) => !before.has(k)).length,
      restored: [...before].filter((k) => !now.has(k)).length,
    },
  };
}
