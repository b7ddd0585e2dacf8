/**
 * The roster of a study: its current brain table joined with its current
 * participant sheet by the intake's one join rule, with the id mappings a
 * person confirmed; the join report, the roster rows (paged, sorted,
 * filtered, searched), confirming mappings and the CSV export.
 *
 * The main thread reads what the join needs from the database (page by
 * page, a turn of the event loop between pages) and keeps it as JSON text
 * per version (versions never change); the join and everything computed
 * from it run in the intake worker thread (server/jobs/intake-roster.ts),
 * which answers with the response's text.
 *
 * A mapping can only join two ids that the rule left unmatched; it applies
 * to every later version that still holds both ids. Confirming mappings is
 * audited in the same transaction.
 */
import { and, asc, eq, gte, lt } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { datasetRows, rosterMappings, type DatasetVersion } from "../../db/schema";
import { naturalCompare } from "../intake";
import { conflict, HttpError } from "../http/errors";
import { type IntakeJobs, intakeJobs } from "../jobs/intake-jobs";
import type {
  BrainParticipants,
  MappingFacts,
  RosterInput,
  RosterQuery,
} from "../jobs/intake-roster";
import type { VersionRef } from "../../contract/views/roster";
import { recordEvent } from "./audit";
import { currentVersions, loadParticipantSheet } from "./datasets";

const ref = (v: DatasetVersion | null): VersionRef | null =>
  v === null ? null : { id: v.id, version: v.version, fileName: v.fileName, sha256: v.sha256 };

/** Rows read per query. */
const READ_PAGE = 10_000;

/** The newest few versions' roster inputs as JSON text, by version id (a version never changes). */
const brainTexts = new Map<string, string>();
const sheetTexts = new Map<string, { json: string; columns: string[] }>();
const KEPT = 4;

function keep<T>(cache: Map<string, T>, key: string, value: T): T {
  cache.set(key, value);
  while (cache.size > KEPT) cache.delete(cache.keys().next().value as string);
  return value;
}

/** The distinct participant ids of a stored brain table, in file order, each with its sessions, read page by page. */
async function brainParticipants(db: Queryable, v: DatasetVersion): Promise<string> {
  const hit = brainTexts.get(v.id);
  if (hit !== undefined) return hit;
  const ids: string[] = [];
  const sessions: string[][] = [];
  const index = new Map<string, number>();
  for (let first = 0; first < v.rowCount; first += READ_PAGE) {
    const rows = await db
      .select({ id: datasetRows.participantId, session: datasetRows.session })
      .from(datasetRows)
      .where(
        and(
          eq(datasetRows.datasetId, v.id),
          gte(datasetRows.position, first),
          lt(datasetRows.position, first + READ_PAGE),
        ),
      )
      .orderBy(asc(datasetRows.position));
    for (const r of rows) {
      let k = index.get(r.id);
      if (k === undefined) {
        k = ids.length;
        index.set(r.id, k);
        ids.push(r.id);
        sessions.push([]);
      }
      if (r.session !== null) sessions[k].push(r.session);
    }
    await new Promise<void>((resolve) => setImmediate(resolve));
  }
  for (const list of sessions) if (list.length > 1) list.sort(naturalCompare);
  const participants: BrainParticipants = { ids, sessions };
  return keep(brainTexts, v.id, JSON.stringify(participants));
}

async function sheetText(
  db: Queryable,
  v: DatasetVersion,
): Promise<{ json: string; columns: string[] }> {
  const hit = sheetTexts.get(v.id);
  if (hit !== undefined) return hit;
  const sheet = await loadParticipantSheet(db, v);
  return keep(sheetTexts, v.id, {
    json: JSON.stringify(sheet),
    columns: sheet.columns.map((c) => c.name),
  });
}

/** What the join needs, read from the database (the texts kept per version). */
async function rosterInput(
  db: Queryable,
  studyId: string,
): Promise<{
  input: RosterInput;
  sheetColumns: string[];
  brain: DatasetVersion | null;
  sheet: DatasetVersion | null;
}> {
  const { brain, participants } = await currentVersions(db, studyId);
  const mappings = await db
    .select()
    .from(rosterMappings)
    .where(eq(rosterMappings.studyId, studyId))
    .orderBy(asc(rosterMappings.createdAt));
  const brainJson = brain ? await brainParticipants(db, brain) : null;
  const sheet = participants ? await sheetText(db, participants) : null;
  const input: RosterInput = {
    key: [brain?.id ?? "-", participants?.id ?? "-", ...mappings.map((m) => m.id)].join(" "),
    brain: brain && brainJson !== null ? { ref: ref(brain) as VersionRef, json: brainJson } : null,
    sheet:
      participants && sheet ? { ref: ref(participants) as VersionRef, json: sheet.json } : null,
    mappings: mappings.map((m) => ({
      id: m.id,
      brainId: m.brainId,
      sheetId: m.sheetId,
      createdAt: m.createdAt.toISOString(),
    })),
  };
  return { input, sheetColumns: sheet?.columns ?? [], brain, sheet: participants };
}

/**
 * The join report and one page of roster rows (rows null when
 * `rowsVisible` is false), as the JSON text of the answer.
 */
export async function getRoster(
  db: Database,
  studyId: string,
  query: RosterQuery,
  rowsVisible: boolean,
  jobs: IntakeJobs = intakeJobs(),
): Promise<string> {
  const { input, sheetColumns } = await rosterInput(db, studyId);
  if (
    query.sort &&
    !["participant", "status", "sessions"].includes(query.sort) &&
    !sheetColumns.includes(query.sort)
  ) {
    throw new HttpError(400, "validation_failed", `query.sort: no roster column "${query.sort}"`, [
      { field: "query.sort", message: `no roster column "${query.sort}"` },
    ]);
  }
  return (await jobs.roster(input, { kind: "view", query, rowsVisible })) as string;
}

/** The whole roster as CSV (formula-neutralised), in roster order. */
export async function rosterCsv(
  db: Database,
  studyId: string,
  jobs: IntakeJobs = intakeJobs(),
): Promise<string> {
  const { input } = await rosterInput(db, studyId);
  return (await jobs.roster(input, { kind: "csv" })) as string;
}

/**
 * Confirms id mappings (brain id → sheet id), all or none. Each brain id
 * and sheet id must be in the current tables and left unmatched by the
 * rule; otherwise 422 (unknown id) or 409 (already matched or mapped).
 * One audit event per mapping, in the same transaction.
 */
export async function confirmMappings(
  db: Database,
  studyId: string,
  actorId: string,
  mappings: readonly { brainId: string; sheetId: string }[],
  now: Date,
  jobs: IntakeJobs = intakeJobs(),
): Promise<void> {
  await db.transaction(async (tx) => {
    const { input, brain, sheet } = await rosterInput(tx, studyId);
    if (brain === null || sheet === null) {
      throw conflict(
        "Upload and confirm both a brain table and a participant sheet before mapping ids.",
      );
    }
    const facts = (await jobs.roster(input, {
      kind: "check",
      mappings: [...mappings],
    })) as MappingFacts;
    const seenBrain = new Set<string>();
    const seenSheet = new Set<string>();
    mappings.forEach((m, k) => {
      const field = `body.mappings.${k}`;
      const b = facts.brain[m.brainId];
      const s = facts.sheet[m.sheetId];
      if (!b.present) {
        throw new HttpError(
          422,
          "unknown_participant",
          `${field}.brainId: the current brain table (${brain.fileName}) has no participant "${m.brainId}"`,
        );
      }
      if (!s.present) {
        throw new HttpError(
          422,
          "unknown_participant",
          `${field}.sheetId: the current participant sheet (${sheet.fileName}) has no participant "${m.sheetId}"`,
        );
      }
      if (!b.free)
        throw conflict(`${field}.brainId: "${m.brainId}" is already matched to "${b.matchedTo}"`);
      if (!s.free)
        throw conflict(`${field}.sheetId: "${m.sheetId}" is already matched to "${s.matchedTo}"`);
      if (seenBrain.has(m.brainId) || seenSheet.has(m.sheetId))
        throw conflict(`${field}: an id appears in two mappings of this request`);
      seenBrain.add(m.brainId);
      seenSheet.add(m.sheetId);
    });
    const taken = new Set(input.mappings.flatMap((m) => [`b:${m.brainId}`, `s:${m.sheetId}`]));
    for (const m of mappings) {
      if (taken.has(`b:${m.brainId}`) || taken.has(`s:${m.sheetId}`)) {
        throw conflict(
          `A mapping for "${m.brainId}" or "${m.sheetId}" was confirmed before (for an earlier version of the tables).`,
        );
      }
    }
    for (const m of mappings) {
      const [row] = await tx
        .insert(rosterMappings)
        .values({
          studyId,
          brainId: m.brainId,
          sheetId: m.sheetId,
          createdBy: actorId,
          createdAt: now,
        })
        .returning();
      await recordEvent(tx, {
        studyId,
        actorId,
        kind: "roster.mapping_confirmed",
        targetType: "roster_mapping",
        targetId: row.id,
        after: {
          brainId: m.brainId,
          sheetId: m.sheetId,
          nearMiss: facts.nearMiss[`${m.brainId}\u0000${m.sheetId}`] ?? null,
          brainTable: { id: brain.id, version: brain.version },
          participantSheet: { id: sheet.id, version: sheet.version },
        },
        at: now,
      });
    }
  });
}
