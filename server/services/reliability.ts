/**
 * Reliability of a study's measures.
 *
 * - Trait reliabilities: the reliability a study states for a
 *   participant-sheet trait, with its source ("test–retest r = .82, manual
 *   of the scale"). A PUT replaces the whole list, in one transaction with
 *   its audit event (`trait_reliabilities.updated`, before and after).
 * - Brain reliability: per region, the intraclass correlations of a brain
 *   table's sessions, computed by the engine's `runFit` with kind
 *   "reliability" (Shrout & Fleiss 1979). Every participant of the brain
 *   table with a value in every session counts; set-asides are not applied
 *   (the reliability describes the measure, not one model's participants).
 *   Brain-table versions are immutable, so results are kept per version in
 *   a small in-memory cache.
 *
 * Route handler → this service → `runFit` (server/stats/run-fit.ts) →
 * `intraclassCorrelations` (server/stats/icc.ts).
 */
import { asc, eq } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { traitReliabilities, users, type DatasetVersion } from "../../db/schema";
import { HttpError, conflict } from "../http/errors";
import { brainSessions, buildFitData } from "../intake";
import { modelSpecSchema } from "../../contract/spec";
import { StatsError } from "../stats/errors";
import { runFit } from "../stats/run-fit";
import { recordEvent } from "./audit";
import type {
  BrainReliabilityView,
  IccInterval,
  RegionReliability,
  TraitReliabilityInput,
  TraitReliabilityView,
} from "../../contract/views/reliability";
import { currentVersions, loadBrainTable } from "./datasets";

interface Actor {
  id: string;
}

// ─── Trait reliabilities ───

/** The study's stated trait reliabilities, by column name. */
export async function listTraitReliabilities(
  db: Queryable,
  studyId: string,
): Promise<TraitReliabilityView[]> {
  const rows = await db
    .select({ row: traitReliabilities, name: users.name, email: users.email })
    .from(traitReliabilities)
    .innerJoin(users, eq(users.id, traitReliabilities.updatedBy))
    .where(eq(traitReliabilities.studyId, studyId))
    .orderBy(asc(traitReliabilities.column));
  return rows.map(({ row, name, email }) => ({
    column: row.column,
    reliability: row.reliability,
    source: row.source,
    updatedBy: { id: row.updatedBy, name, email },
    updatedAt: row.updatedAt.toISOString(),
  }));
}

/** Stated reliability, source and time of statement per column (for attenuation). */
export async function traitReliabilityMap(
  db: Queryable,
  studyId: string,
): Promise<Map<string, { reliability: number; source: string; statedAt: string }>> {
  const rows = await db
    .select()
    .from(traitReliabilities)
    .where(eq(traitReliabilities.studyId, studyId));
  return new Map(
    rows.map((r) => [
      r.column,
      { reliability: r.reliability, source: r.source, statedAt: r.updatedAt.toISOString() },
    ]),
  );
}

/**
 * Replaces the study's list. Each column must be a numeric column of the
 * current participant sheet: 409 when there is no sheet, 422 naming the
 * entry otherwise. Records `trait_reliabilities.updated` with the lists
 * before and after, in the same transaction.
 */
export async function replaceTraitReliabilities(
  db: Database,
  actor: Actor,
  studyId: string,
  entries: readonly TraitReliabilityInput[],
  now: Date,
): Promise<TraitReliabilityView[]> {
  const { participants } = await currentVersions(db, studyId);
  if (entries.length > 0) {
    if (!participants)
      throw conflict(
        "This study has no participant sheet yet: upload and confirm one before stating trait reliabilities.",
      );
    const numeric = new Set(
      participants.columns
        .filter((c) => c.role === "variable" && c.type === "number")
        .map((c) => c.name),
    );
    const all = new Set(
      participants.columns.filter((c) => c.role === "variable").map((c) => c.name),
    );
    const details = entries.flatMap((e, i) =>
      numeric.has(e.column)
        ? []
        : [
            {
              field: `body.${i}.column`,
              message: all.has(e.column)
                ? `column "${e.column}" of ${participants.fileName} is not numeric; a reliability belongs to a numeric trait`
                : `${participants.fileName} has no column "${e.column}"`,
            },
          ],
    );
    if (details.length > 0) {
      throw new HttpError(
        422,
        "unknown_column",
        details.map((d) => `${d.field}: ${d.message}`).join("; "),
        details,
      );
    }
  }
  const plain = (list: readonly { column: string; reliability: number; source: string }[]) =>
    list.map((e) => ({ column: e.column, reliability: e.reliability, source: e.source }));
  await db.transaction(async (tx) => {
    const before = await tx
      .select()
      .from(traitReliabilities)
      .where(eq(traitReliabilities.studyId, studyId))
      .orderBy(asc(traitReliabilities.column));
    await tx.delete(traitReliabilities).where(eq(traitReliabilities.studyId, studyId));
    if (entries.length > 0) {
      await tx.insert(traitReliabilities).values(
        entries.map((e) => ({
          studyId,
          column: e.column,
          reliability: e.reliability,
          source: e.source,
          updatedBy: actor.id,
          updatedAt: now,
        })),
      );
    }
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "trait_reliabilities.updated",
      targetType: "participant_sheet",
      targetId: participants?.id ?? null,
      before: plain(before),
      after: plain(
        [...entries].sort((a, b) => (a.column < b.column ? -1 : a.column > b.column ? 1 : 0)),
      ),
      at: now,
    });
  });
  return listTraitReliabilities(db, studyId);
}

// ─── Brain reliability ───

/** The method line shown under the reliability table. */
export const BRAIN_RELIABILITY_METHOD =
  "Shrout & Fleiss (1979) intraclass correlations across sessions. ICC(3,1): consistency of sessions — how well one session ranks participants as the others do; the reliability that bounds a correlation. ICC(2,1): absolute agreement — also counts shifts between sessions. 95% confidence intervals (F distribution).";

const FORMS = ["icc11", "icc21", "icc31", "icc1k", "icc2k", "icc3k"] as const;

function pickForms(
  r: Record<string, unknown>,
): Omit<RegionReliability, "region" | "n" | "sessions" | "p"> {
  const out = {} as Record<(typeof FORMS)[number], IccInterval>;
  for (const key of FORMS) {
    const form = r[key] as { value: number; ciLow: number | null; ciHigh: number | null };
    out[key] = { value: form.value, ciLow: form.ciLow, ciHigh: form.ciHigh };
  }
  return out;
}

const cache = new Map<string, Promise<BrainReliabilityView>>();
const CACHE_SIZE = 8;

/**
 * The brain reliability of one (immutable) brain-table version. Throws 409
 * when the table has no session column, fewer than two sessions, or fewer
 * than two participants with a value in every session.
 */
export function brainReliabilityOfVersion(
  db: Queryable,
  version: DatasetVersion,
): Promise<BrainReliabilityView> {
  const hit = cache.get(version.id);
  if (hit) {
    cache.delete(version.id);
    cache.set(version.id, hit);
    return hit;
  }
  const pending = computeBrainReliability(db, version);
  cache.set(version.id, pending);
  pending.catch(() => cache.delete(version.id));
  while (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value as string);
  return pending;
}

async function computeBrainReliability(
  db: Queryable,
  version: DatasetVersion,
): Promise<BrainReliabilityView> {
  const name = version.fileName;
  if (!version.sessionColumn) {
    throw conflict(
      `The brain table ${name} has no session column, so the reliability of its regions cannot be estimated: upload a table with a session column and at least two sessions per participant.`,
    );
  }
  const brain = await loadBrainTable(db, version);
  const labels = brainSessions(brain);
  if (labels.length < 2) {
    throw conflict(
      `The brain table ${name} has one session (${labels.join(", ") || "none"}); reliability needs at least two sessions per participant.`,
    );
  }
  const built = buildFitData(brain, null);
  const data = built.data;
  const sessions = data.sessions as NonNullable<typeof data.sessions>;
  // Participants with values in every session, in at least one region; and with values in two or more sessions.
  let complete = 0;
  let retested = 0;
  for (let i = 0; i < data.participants.length; i++) {
    let best = 0;
    for (let r = 0; r < data.regions.length; r++) {
      let count = 0;
      for (const s of sessions.values[r]) if (Number.isFinite(s[i])) count++;
      best = Math.max(best, count);
    }
    if (best === labels.length) complete++;
    if (best >= 2) retested++;
  }
  if (complete < 2) {
    throw conflict(
      `The brain table ${name} has ${complete} participant${complete === 1 ? "" : "s"} with a value in every session (${labels.join(", ")}); reliability needs at least two.`,
    );
  }
  const spec = modelSpecSchema.parse({ kind: "reliability" });
  const regionResults: BrainReliabilityView["regions"] = [];
  const describe = (r: Record<string, unknown>): RegionReliability => ({
    region: r.region as string,
    n: r.n as number,
    sessions: r.sessions as number,
    ...pickForms(r),
    p: r.p as number,
  });
  try {
    for (const r of runFit(spec, data).regions) regionResults.push(describe(r));
  } catch (e) {
    if (!(e instanceof StatsError)) throw e;
    // Some region failed: fit region by region, so the others still answer.
    for (const region of data.regions) {
      try {
        regionResults.push(describe(runFit({ ...spec, regions: [region] }, data).regions[0]));
      } catch (inner) {
        if (!(inner instanceof StatsError)) throw inner;
        regionResults.push({ region, error: inner.message.replace(/^region '[^']*': /, "") });
      }
    }
  }
  return {
    brainTable: { id: version.id, version: version.version, fileName: version.fileName },
    sessions: labels,
    participantsRetested: retested,
    regions: regionResults,
    method: BRAIN_RELIABILITY_METHOD,
    notes: [
      `Participants: every participant of ${name} with a value in every session (${labels.join(", ")}) counts, per region; set-asides are not applied.`,
      "A k-session lower bound that is unbounded below is shown as empty.",
    ],
  };
}

/** The brain reliability of the study's current brain table; 409 when there is none or it has no usable sessions. */
export async function currentBrainReliability(
  db: Queryable,
  studyId: string,
): Promise<BrainReliabilityView> {
  const { brain } = await currentVersions(db, studyId);
  if (!brain)
    throw conflict(
      "This study has no confirmed brain table yet: upload one with a session column to see the reliability of its regions.",
    );
  return brainReliabilityOfVersion(db, brain);
}
