/**
 * A fit's lineage: what it left out and why, which earlier fit it re-runs
 * and what changed since, and whether the study has moved on since it ran.
 *
 * - `setAsides`: each set-aside of the fit's recipe with who set it aside
 *   and when, from the study's set_asides rows active when the fit was
 *   created (created at or before it, not restored by then; same
 *   participant and region).
 * - `refitOf`: set when a fit is created (`refitTarget`): the latest done
 *   fit of the same model, else its latest fit that was not cancelled.
 *   `changes` compares the two recipes (services/fit-changes.ts).
 * - `stale`: the fit's inputs against what a new fit of its model would
 *   use now — the study's current dataset versions, confirmed id mappings,
 *   model fields and active set-asides as a new fit would apply them.
 *   A new fit applies only set-asides naming a participant and region of
 *   its data; without building the data, this module takes the active
 *   set-asides less those that were active when the fit was made but not
 *   applied by it (with the same data they still would not be).
 *
 * What never changes once a fit exists (its recipe, dataset versions,
 * refit target, and the N of a done fit) is read once per fit and kept
 * per database; what the study changes (current versions, mappings,
 * set-asides, models) is read in one go, kept until the next write
 * (db/read-cache.ts). Cost per fit after that: O(size of its lists).
 */
import { and, desc, eq, inArray, ne, sql } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { cachedRead } from "../../db/read-cache";
import { datasetVersions, fits, models, setAsides, users } from "../../db/schema";
import { type ModelSpec, modelSpecSchema } from "../../contract/spec";
import {
  type InputFacts,
  type SetAsideEntry,
  type VersionRef,
  refitChanges,
  staleReasons,
} from "./fit-changes";
import { specOfRecipe } from "../../contract/recipe";
import type { FitLineage, FitSetAsideView } from "../../contract/views/fits";
import { confirmedMappings } from "./fit-inputs";

/** What never changes once the fit exists. */
interface FitFacts {
  id: string;
  modelId: string;
  createdAt: Date;
  refitOf: string | null;
  inputs: InputFacts;
}

interface PerDatabase {
  facts: Map<string, FitFacts>;
  n: Map<string, { min: number; max: number } | null>;
  changes: Map<string, string[]>;
}

/** Fits whose facts are kept per database before the maps start again. */
const KEEP_MAX = 20_000;
const kept = new WeakMap<object, PerDatabase>();

function keptFor(db: Queryable): PerDatabase {
  let entry = kept.get(db);
  if (!entry) {
    entry = { facts: new Map(), n: new Map(), changes: new Map() };
    kept.set(db, entry);
  }
  if (entry.facts.size > KEEP_MAX || entry.changes.size > KEEP_MAX || entry.n.size > KEEP_MAX) {
    entry.facts.clear();
    entry.n.clear();
    entry.changes.clear();
  }
  return entry;
}

/** A model's fields without the set-aside list (compared apart). */
function modelFields(spec: ModelSpec): Omit<ModelSpec, "setAside"> {
  const { setAside: _, ...rest } = spec;
  return rest;
}

/** The facts of these fits (read once, then kept). */
async function factsOf(db: Queryable, ids: readonly string[]): Promise<Map<string, FitFacts>> {
  const store = keptFor(db).facts;
  const missing = [...new Set(ids)].filter((id) => !store.has(id));
  if (missing.length > 0) {
    const rows = await db
      .select({
        id: fits.id,
        modelId: fits.modelId,
        createdAt: fits.createdAt,
        refitOf: fits.refitOf,
        recipe: fits.recipe,
        brainVersionId: fits.brainVersionId,
        sheetVersionId: fits.sheetVersionId,
      })
      .from(fits)
      .where(inArray(fits.id, missing));
    const versionIds = [
      ...new Set(
        rows.flatMap((r) => [r.brainVersionId, ...(r.sheetVersionId ? [r.sheetVersionId] : [])]),
      ),
    ];
    const versions =
      versionIds.length > 0
        ? await db
            .select({
              id: datasetVersions.id,
              version: datasetVersions.version,
              fileName: datasetVersions.fileName,
            })
            .from(datasetVersions)
            .where(inArray(datasetVersions.id, versionIds))
        : [];
    const byId = new Map(versions.map((v) => [v.id, v]));
    const ref = (id: string): VersionRef => byId.get(id) ?? { id, version: 0, fileName: "" };
    for (const r of rows) {
      const recipe = r.recipe as Record<string, unknown>;
      let spec: ModelSpec | null = null;
      try {
        spec = specOfRecipe(recipe);
      } catch {
        spec = null;
      }
      const mappings = (
        (recipe.mappings as { brainId: string; sheetId: string }[] | undefined) ?? []
      ).map((m) => ({ brainId: m.brainId, sheetId: m.sheetId }));
      store.set(r.id, {
        id: r.id,
        modelId: r.modelId,
        createdAt: r.createdAt,
        refitOf: r.refitOf,
        inputs: {
          brain: ref(r.brainVersionId),
          sheet: r.sheetVersionId ? ref(r.sheetVersionId) : null,
          mappings,
          setAside: spec?.setAside ?? [],
          model: spec ? modelFields(spec) : null,
        },
      });
    }
  }
  const out = new Map<string, FitFacts>();
  for (const id of ids) {
    const f = store.get(id);
    if (f) out.set(id, f);
  }
  return out;
}

/** The smallest and largest region N of these done fits (read once, then kept: a done fit's result never changes). */
async function nRanges(
  db: Queryable,
  doneIds: readonly string[],
): Promise<Map<string, { min: number; max: number } | null>> {
  const store = keptFor(db).n;
  const missing = [...new Set(doneIds)].filter((id) => !store.has(id));
  if (missing.length > 0) {
    const rows = await db
      .select({
        id: fits.id,
        // A prediction fit has no region rows: its N is the result's own `n`.
        min: sql<
          number | null
        >`coalesce((select min((r->>'n')::int) from jsonb_array_elements(${fits.result}->'regions') r), (${fits.result}->>'n')::int)`,
        max: sql<
          number | null
        >`coalesce((select max((r->>'n')::int) from jsonb_array_elements(${fits.result}->'regions') r), (${fits.result}->>'n')::int)`,
      })
      .from(fits)
      .where(and(inArray(fits.id, missing), eq(fits.status, "done")));
    for (const r of rows)
      store.set(
        r.id,
        r.min === null || r.max === null ? null : { min: Number(r.min), max: Number(r.max) },
      );
  }
  return new Map(doneIds.map((id) => [id, store.get(id) ?? null]));
}

/** One set-aside record of the study, with who made it. */
interface SetAsideRecord {
  participant: string;
  region: string | null;
  reason: string;
  createdBy: string;
  creatorName: string | null;
  createdAt: Date;
  restoredAt: Date | null;
}

/** What the study has now (kept until the next write). */
interface StudyNow {
  brain: VersionRef | null;
  sheet: VersionRef | null;
  mappings: { brainId: string; sheetId: string }[];
  setAsides: SetAsideRecord[];
  models: Map<string, Omit<ModelSpec, "setAside"> | null>;
}

function studyNow(db: Queryable, studyId: string): Promise<StudyNow> {
  return cachedRead(db, `fit lineage study ${studyId}`, async () => {
    const versions = await db
      .selectDistinctOn([datasetVersions.kind], {
        id: datasetVersions.id,
        kind: datasetVersions.kind,
        version: datasetVersions.version,
        fileName: datasetVersions.fileName,
      })
      .from(datasetVersions)
      .where(and(eq(datasetVersions.studyId, studyId), eq(datasetVersions.complete, true)))
      .orderBy(datasetVersions.kind, desc(datasetVersions.version));
    const ref = (kind: string): VersionRef | null => {
      const v = versions.find((x) => x.kind === kind);
      return v ? { id: v.id, version: v.version, fileName: v.fileName } : null;
    };
    const mappings = await confirmedMappings(db, studyId);
    const records = await db
      .select({
        participant: setAsides.participantId,
        region: setAsides.region,
        reason: setAsides.reason,
        createdBy: setAsides.createdBy,
        creatorName: sql<
          string | null
        >`(select u.name from ${users} u where u.id = ${setAsides.createdBy})`,
        createdAt: setAsides.createdAt,
        restoredAt: setAsides.restoredAt,
      })
      .from(setAsides)
      .where(eq(setAsides.studyId, studyId))
      .orderBy(desc(setAsides.createdAt), desc(setAsides.id));
    const modelRows = await db
      .select({ id: models.id, spec: models.spec, deletedAt: models.deletedAt })
      .from(models)
      .where(eq(models.studyId, studyId));
    const modelMap = new Map<string, Omit<ModelSpec, "setAside"> | null>();
    for (const m of modelRows) {
      const parsed = modelSpecSchema.safeParse(m.spec);
      modelMap.set(m.id, m.deletedAt === null && parsed.success ? modelFields(parsed.data) : null);
    }
    return {
      brain: ref("brain"),
      sheet: ref("participants"),
      mappings,
      setAsides: records,
      models: modelMap,
    };
  });
}

const sameRegion = (record: SetAsideRecord, entry: { region?: string }) =>
  record.region === (entry.region ?? null);

/** Whether a set-aside record was active at `at`. */
const activeAt = (record: SetAsideRecord, at: Date) =>
  record.createdAt.getTime() <= at.getTime() &&
  (record.restoredAt === null || record.restoredAt.getTime() > at.getTime());

/**
 * The set-aside list a new fit of the model would apply now, as seen from
 * `fit` (see the module note), in the recipe's order (participant, then
 * region, every-region first).
 */
function wouldApply(fit: FitFacts, now: StudyNow): SetAsideEntry[] {
  const applied = new Set(
    fit.inputs.setAside.map((s) => `${s.participant}\u0000${s.region ?? ""}`),
  );
  const entries = now.setAsides
    .filter((r) => r.restoredAt === null)
    .filter(
      (r) =>
        !(activeAt(r, fit.createdAt) && !applied.has(`${r.participant}\u0000${r.region ?? ""}`)),
    )
    .map(
      (r): SetAsideEntry =>
        r.region === null
          ? { participant: r.participant, reason: r.reason }
          : { participant: r.participant, region: r.region, reason: r.reason },
    );
  entries.sort(
    (a, b) =>
      (a.participant < b.participant ? -1 : a.participant > b.participant ? 1 : 0) ||
      (a.region === undefined
        ? -1
        : b.region === undefined
          ? 1
          : a.region < b.region
            ? -1
            : a.region > b.region
              ? 1
              : 0),
  );
  return entries;
}

/**
 * The lineage of these fits of the study (see FitLineage), keyed by fit id.
 * `fitsOfStudy` need only carry id and status.
 */
export async function lineageOf(
  db: Queryable,
  studyId: string,
  fitsOfStudy: readonly { id: string; status: string }[],
  options: { participantsVisible: boolean },
): Promise<Map<string, FitLineage>> {
  const out = new Map<string, FitLineage>();
  if (fitsOfStudy.length === 0) return out;
  const facts = await factsOf(
    db,
    fitsOfStudy.map((f) => f.id),
  );
  const earlierIds = [...facts.values()].flatMap((f) => (f.refitOf ? [f.refitOf] : []));
  const earlier = await factsOf(db, earlierIds);
  const ns = await nRanges(
    db,
    fitsOfStudy.filter((f) => f.status === "done").map((f) => f.id),
  );
  const now = await studyNow(db, studyId);
  const changeStore = keptFor(db).changes;
  for (const f of fitsOfStudy) {
    const fact = facts.get(f.id);
    if (!fact) continue;
    const before = fact.refitOf ? earlier.get(fact.refitOf) : undefined;
    const changeKey = `${f.id} ${options.participantsVisible}`;
    let changes = changeStore.get(changeKey);
    if (!changes) {
      changes = before ? refitChanges(before.inputs, fact.inputs, options) : [];
      changeStore.set(changeKey, changes);
    }
    const current: InputFacts = {
      brain: now.brain ?? fact.inputs.brain,
      sheet: now.brain ? now.sheet : fact.inputs.sheet,
      mappings: now.mappings,
      setAside: wouldApply(fact, now),
      model: now.models.get(fact.modelId) ?? null,
    };
    const reasons = staleReasons(fact.inputs, current, options);
    out.set(f.id, {
      n: ns.get(f.id) ?? null,
      setAsideCount: fact.inputs.setAside.length,
      refitOf: fact.refitOf,
      refitOfCreatedAt: before ? before.createdAt.toISOString() : null,
      changes: [...changes],
      stale: reasons.length > 0,
      staleReasons: reasons,
    });
  }
  return out;
}

/**
 * Each set-aside the fit applied, with who set it aside and when (the
 * study's record of it active when the fit was created). Participant ids
 * are left out when not visible. Empty for an unknown fit.
 */
export async function fitSetAsides(
  db: Queryable,
  studyId: string,
  fitId: string,
  options: { participantsVisible: boolean },
): Promise<FitSetAsideView[]> {
  const fact = (await factsOf(db, [fitId])).get(fitId);
  if (!fact) return [];
  const now = await studyNow(db, studyId);
  return fact.inputs.setAside.map((s) => {
    // Records are newest first: the latest record active when the fit was made.
    const record = now.setAsides.find(
      (r) => r.participant === s.participant && sameRegion(r, s) && activeAt(r, fact.createdAt),
    );
    return {
      participant: options.participantsVisible ? s.participant : null,
      region: s.region ?? null,
      scope: s.region === undefined ? "all regions" : "one region",
      reason: s.reason,
      createdBy: record ? { id: record.createdBy, name: record.creatorName } : null,
      createdAt: record ? record.createdAt.toISOString() : null,
    };
  });
}

/**
 * The fit a new fit of `modelId` re-runs: the model's latest done fit in
 * the study, else its latest fit that was not cancelled, else null.
 */
export async function refitTarget(
  db: Queryable,
  studyId: string,
  modelId: string,
): Promise<string | null> {
  const [row] = await db
    .select({ id: fits.id })
    .from(fits)
    .where(and(eq(fits.studyId, studyId), eq(fits.modelId, modelId), ne(fits.status, "cancelled")))
    .orderBy(desc(sql`${fits.status} = 'done'`), desc(fits.createdAt), desc(fits.id))
    .limit(1);
  return row?.id ?? null;
}
