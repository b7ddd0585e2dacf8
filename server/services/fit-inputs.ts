/**
 * The numbers a fit runs on (`FitData`), built from exactly the dataset
 * versions and confirmed id mappings a fit's recipe names — never from
 * whatever is current — so a re-run of a fit gives the same numbers.
 *
 * `FitDataCache` keeps the few most recently built inputs in memory (one
 * server process owns the database, so the cache is the whole truth for
 * immutable versions): the fit job, the region preview and the region
 * detail of the same data share one build. Cost of a build: reading the
 * versions' rows, O(rows × columns); a cached read is O(1).
 */
import { asc, eq, inArray } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { datasetVersions, rosterMappings, type DatasetVersion } from "../../db/schema";
import { type BuiltFitData, type IdMapping, buildFitData } from "../intake";
import type { Recipe } from "../../contract/recipe";
import type { FitDataSource, FitInputs } from "../jobs/fit-jobs";
import type { FitData } from "../../contract/spec";
import { loadBrainTable, loadParticipantSheet } from "./datasets";

/** The study's confirmed id mappings, in brain-id order. */
export async function confirmedMappings(db: Queryable, studyId: string): Promise<IdMapping[]> {
  const rows = await db
    .select({ brainId: rosterMappings.brainId, sheetId: rosterMappings.sheetId })
    .from(rosterMappings)
    .where(eq(rosterMappings.studyId, studyId))
    .orderBy(asc(rosterMappings.brainId));
  return rows;
}

/** Reads the versions and joins them. Throws when a version is missing; IntakeError when the join finds nobody. */
export async function buildFitInputs(db: Queryable, inputs: FitInputs): Promise<BuiltFitData> {
  const ids = [inputs.brainVersionId, ...(inputs.sheetVersionId ? [inputs.sheetVersionId] : [])];
  const versions = await db.select().from(datasetVersions).where(inArray(datasetVersions.id, ids));
  const brain = versions.find((v) => v.id === inputs.brainVersionId && v.kind === "brain");
  const sheet: DatasetVersion | null = inputs.sheetVersionId
    ? (versions.find((v) => v.id === inputs.sheetVersionId && v.kind === "participants") ?? null)
    : null;
  if (!brain)
    throw new Error(`buildFitInputs: brain table version ${inputs.brainVersionId} not found`);
  if (inputs.sheetVersionId && !sheet)
    throw new Error(`buildFitInputs: participant sheet version ${inputs.sheetVersionId} not found`);
  const [table, participants] = await Promise.all([
    loadBrainTable(db, brain),
    sheet ? loadParticipantSheet(db, sheet) : Promise.resolve(null),
  ]);
  return buildFitData(table, participants, {
    mappings: inputs.mappings,
    session: inputs.session ?? undefined,
  });
}

function keyOf(inputs: FitInputs): string {
  const mappings = [...inputs.mappings].sort((a, b) =>
    a.brainId < b.brainId ? -1 : a.brainId > b.brainId ? 1 : 0,
  );
  return JSON.stringify([
    inputs.brainVersionId,
    inputs.sheetVersionId,
    inputs.session,
    mappings.map((m) => [m.brainId, m.sheetId]),
  ]);
}

export interface CachedFitData {
  data: FitData;
  session: string | null;
}

/** A small least-recently-used cache of built fit inputs. */
export class FitDataCache implements FitDataSource {
  private readonly entries = new Map<string, Promise<CachedFitData>>();

  constructor(
    private readonly db: Queryable,
    private readonly capacity = 4,
  ) {}

  /** The fit data of `inputs` (built once, then shared). A failed build is not kept. */
  async get(inputs: FitInputs): Promise<FitData> {
    return (await this.built(inputs)).data;
  }

  /** The fit data of `inputs` and the session it holds (null: the brain table has none). */
  built(inputs: FitInputs): Promise<CachedFitData> {
    const key = keyOf(inputs);
    const hit = this.entries.get(key);
    if (hit) {
      this.entries.delete(key);
      this.entries.set(key, hit);
      return hit;
    }
    const built = buildFitInputs(this.db, inputs).then((b) => ({
      data: b.data,
      session: b.session,
    }));
    this.entries.set(key, built);
    built.catch(() => {
      if (this.entries.get(key) === built) this.entries.delete(key);
    });
    while (this.entries.size > this.capacity) {
      const oldest = this.entries.keys().next().value as string;
      this.entries.delete(oldest);
    }
    return built;
  }
}

/** The data a stored fit names: its dataset versions and the recipe's id mappings. */
export function inputsOfFit(fit: {
  brainVersionId: string;
  sheetVersionId: string | null;
  recipe: Pick<Recipe, "mappings" | "session">;
}): FitInputs {
  return {
    brainVersionId: fit.brainVersionId,
    sheetVersionId: fit.sheetVersionId,
    mappings: fit.recipe.mappings ?? [],
    session: fit.recipe.session ?? null,
  };
}
