/**
 * The roster of a study: its current brain table joined with its current
 * participant sheet by the intake's one join rule, with the id mappings a
 * person confirmed; the join report, the roster rows (paged, sorted,
 * filtered, searched), confirming mappings and the CSV export.
 *
 * A mapping can only join two ids that the rule left unmatched; it applies
 * to every later version that still holds both ids. Confirming mappings is
 * audited in the same transaction.
 */
import { asc, eq } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { datasetRows, rosterMappings, type DatasetVersion, type RosterMapping } from "../../db/schema";
import {
  type NearMiss,
  type ParticipantSheet,
  type Roster,
  type RosterDuplicate,
  joinRoster,
  naturalCompare,
  toCsv,
} from "../intake";
import { conflict, HttpError } from "../http/errors";
import { recordEvent } from "./audit";
import { currentVersions, loadParticipantSheet } from "./datasets";

export type RosterStatus = "matched" | "only-in-brain-table" | "only-in-participant-sheet";

export interface RosterRow {
  /** The brain-table id when there is one (fits name participants by it), else the sheet id. */
  participant: string;
  brainId: string | null;
  sheetId: string | null;
  status: RosterStatus;
  via: "identical" | "rule" | "mapping" | null;
  /** Brain-table sessions of this participant. */
  sessions: string[];
  /** Participant-sheet values by column. */
  values: Record<string, number | string | null>;
}

export interface VersionRef {
  id: string;
  version: number;
  fileName: string;
  sha256: string;
}

export interface RosterCounts {
  matched: number;
  onlyInBrainTable: number;
  onlyInParticipantSheet: number;
  duplicates: number;
  nearMisses: number;
  mappings: number;
}

export interface RosterReport {
  brainTable: VersionRef | null;
  participantSheet: VersionRef | null;
  rule: string;
  counts: RosterCounts;
  /** false when the caller may not see participant-level rows: the id lists and rows are null. */
  rowsVisible: boolean;
  matched: number;
  onlyInBrainTable: string[] | null;
  onlyInParticipantSheet: string[] | null;
  duplicates: RosterDuplicate[] | null;
  nearMisses: NearMiss[] | null;
  mappings: { brainId: string; sheetId: string; createdAt: string; applied: boolean }[] | null;
  /** Participant-sheet columns shown in the rows. */
  columns: { name: string; type: "number" | "category" }[];
}

interface Computed {
  brain: DatasetVersion | null;
  sheetVersion: DatasetVersion | null;
  roster: Roster;
  rows: RosterRow[];
  sheet: ParticipantSheet | null;
  mappings: RosterMapping[];
  applied: Set<string>;
}

const ref = (v: DatasetVersion | null): VersionRef | null =>
  v === null ? null : { id: v.id, version: v.version, fileName: v.fileName, sha256: v.sha256 };

async function brainIdsAndSessions(db: Queryable, v: DatasetVersion): Promise<{ ids: string[]; sessions: Map<string, string[]> }> {
  const rows = await db
    .select({ id: datasetRows.participantId, session: datasetRows.session })
    .from(datasetRows)
    .where(eq(datasetRows.datasetId, v.id))
    .orderBy(asc(datasetRows.position));
  const ids: string[] = [];
  const sessions = new Map<string, string[]>();
  for (const r of rows) {
    let list = sessions.get(r.id);
    if (!list) {
      list = [];
      sessions.set(r.id, list);
      ids.push(r.id);
    }
    if (r.session !== null) list.push(r.session);
  }
  for (const list of sessions.values()) list.sort(naturalCompare);
  return { ids, sessions };
}

async function compute(db: Queryable, studyId: string): Promise<Computed> {
  const { brain, participants } = await currentVersions(db, studyId);
  const mappings = await db.select().from(rosterMappings).where(eq(rosterMappings.studyId, studyId)).orderBy(asc(rosterMappings.createdAt));
  const b = brain ? await brainIdsAndSessions(db, brain) : { ids: [], sessions: new Map<string, string[]>() };
  const sheet = participants ? await loadParticipantSheet(db, participants) : null;
  const sheetIds = sheet?.ids ?? [];
  const brainSet = new Set(b.ids);
  const sheetSet = new Set(sheetIds);
  const usable = mappings.filter((m) => brainSet.has(m.brainId) && sheetSet.has(m.sheetId));
  const roster = joinRoster(b.ids, sheetIds, {
    mappings: usable.map((m) => ({ brainId: m.brainId, sheetId: m.sheetId })),
    brainFile: brain?.fileName,
    sheetFile: participants?.fileName,
  });
  const sheetRow = new Map(sheetIds.map((id, k) => [id, k]));
  const valuesOf = (sheetId: string | null): Record<string, number | string | null> => {
    const out: Record<string, number | string | null> = {};
    if (sheet === null || sheetId === null) return out;
    const k = sheetRow.get(sheetId) as number;
    for (const c of sheet.columns) out[c.name] = c.values[k];
    return out;
  };
  const rows: RosterRow[] = [
    ...roster.matched.map((m) => ({
      participant: m.brainId,
      brainId: m.brainId,
      sheetId: m.sheetId,
      status: "matched" as const,
      via: m.via,
      sessions: b.sessions.get(m.brainId) ?? [],
      values: valuesOf(m.sheetId),
    })),
    ...roster.onlyInBrainTable.map((id) => ({
      participant: id,
      brainId: id,
      sheetId: null,
      status: "only-in-brain-table" as const,
      via: null,
      sessions: b.sessions.get(id) ?? [],
      values: {},
    })),
    ...roster.onlyInParticipantSheet.map((id) => ({
      participant: id,
      brainId: null,
      sheetId: id,
      status: "only-in-participant-sheet" as const,
      via: null,
      sessions: [],
      values: valuesOf(id),
    })),
  ];
  const brainOrder = new Map(b.ids.map((id, k) => [id, k]));
  // Matched and brain-only rows in brain-table order, then sheet-only rows in sheet order.
  rows.sort((x, y) => {
    const bx = x.brainId === null ? Number.POSITIVE_INFINITY : (brainOrder.get(x.brainId) as number);
    const by = y.brainId === null ? Number.POSITIVE_INFINITY : (brainOrder.get(y.brainId) as number);
    if (bx !== by) return bx - by;
    return (sheetRow.get(x.sheetId ?? "") ?? 0) - (sheetRow.get(y.sheetId ?? "") ?? 0);
  });
  return {
    brain,
    sheetVersion: participants,
    roster,
    rows,
    sheet,
    mappings,
    applied: new Set(usable.map((m) => m.id)),
  };
}

function report(c: Computed, rowsVisible: boolean): RosterReport {
  const r = c.roster;
  return {
    brainTable: ref(c.brain),
    participantSheet: ref(c.sheetVersion),
    rule: r.rule,
    counts: {
      matched: r.matched.length,
      onlyInBrainTable: r.onlyInBrainTable.length,
      onlyInParticipantSheet: r.onlyInParticipantSheet.length,
      duplicates: r.duplicates.length,
      nearMisses: r.nearMisses.length,
      mappings: c.applied.size,
    },
    rowsVisible,
    matched: r.matched.length,
    onlyInBrainTable: rowsVisible ? r.onlyInBrainTable : null,
    onlyInParticipantSheet: rowsVisible ? r.onlyInParticipantSheet : null,
    duplicates: rowsVisible ? r.duplicates : null,
    nearMisses: rowsVisible ? r.nearMisses : null,
    mappings: rowsVisible
      ? c.mappings.map((m) => ({ brainId: m.brainId, sheetId: m.sheetId, createdAt: m.createdAt.toISOString(), applied: c.applied.has(m.id) }))
      : null,
    columns: (c.sheet?.columns ?? []).map((col) => ({ name: col.name, type: col.type })),
  };
}

export interface RosterQuery {
  offset: number;
  limit: number;
  status?: RosterStatus;
  /** Case-insensitive substring of the brain-table or sheet id. */
  search?: string;
  /** "participant", "status", "sessions" or a participant-sheet column. */
  sort?: string;
  order: "asc" | "desc";
}

export interface RosterPage {
  total: number;
  offset: number;
  limit: number;
  items: RosterRow[];
}

function compareValues(a: unknown, b: unknown): number {
  if (a === null || a === undefined) return b === null || b === undefined ? 0 : 1;
  if (b === null || b === undefined) return -1;
  if (typeof a === "number" && typeof b === "number") return a - b;
  return naturalCompare(String(a), String(b));
}

function selectRows(rows: readonly RosterRow[], q: Omit<RosterQuery, "offset" | "limit">): RosterRow[] {
  let out = rows.filter((r) => q.status === undefined || r.status === q.status);
  if (q.search) {
    const s = q.search.trim().toLowerCase();
    out = out.filter((r) => (r.brainId ?? "").toLowerCase().includes(s) || (r.sheetId ?? "").toLowerCase().includes(s));
  }
  if (q.sort) {
    const key = q.sort;
    const get = (r: RosterRow): unknown =>
      key === "participant" ? r.participant : key === "status" ? r.status : key === "sessions" ? r.sessions.length : r.values[key];
    const sign = q.order === "desc" ? -1 : 1;
    // Missing values stay last in both orders; ties keep the roster order.
    out = out
      .map((r, k) => ({ r, k }))
      .sort((x, y) => {
        const a = get(x.r);
        const b = get(y.r);
        const missing = (a === null || a === undefined ? 1 : 0) - (b === null || b === undefined ? 1 : 0);
        return missing !== 0 ? missing : sign * compareValues(a, b) || x.k - y.k;
      })
      .map((x) => x.r);
  }
  return out;
}

/** The join report and one page of roster rows (rows null when `rowsVisible` is false). */
export async function getRoster(
  db: Database,
  studyId: string,
  query: RosterQuery,
  rowsVisible: boolean,
): Promise<RosterReport & { rows: RosterPage | null }> {
  const c = await compute(db, studyId);
  if (query.sort && !["participant", "status", "sessions"].includes(query.sort) && !c.sheet?.columns.some((col) => col.name === query.sort)) {
    throw new HttpError(400, "validation_failed", `query.sort: no roster column "${query.sort}"`, [
      { field: "query.sort", message: `no roster column "${query.sort}"` },
    ]);
  }
  if (!rowsVisible) return { ...report(c, false), rows: null };
  const selected = selectRows(c.rows, query);
  return {
    ...report(c, true),
    rows: { total: selected.length, offset: query.offset, limit: query.limit, items: selected.slice(query.offset, query.offset + query.limit) },
  };
}

/** The whole roster as CSV (formula-neutralised), in roster order. */
export async function rosterCsv(db: Database, studyId: string): Promise<string> {
  const c = await compute(db, studyId);
  const columns = c.sheet?.columns ?? [];
  const header = ["participant", "brain_table_id", "participant_sheet_id", "status", "matched_by", "sessions", ...columns.map((col) => col.name)];
  const rows = c.rows.map((r) => [
    r.participant,
    r.brainId,
    r.sheetId,
    r.status,
    r.via,
    r.sessions.join(" "),
    ...columns.map((col) => r.values[col.name] ?? null),
  ]);
  return toCsv(header, rows);
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
): Promise<void> {
  await db.transaction(async (tx) => {
    const c = await compute(tx, studyId);
    if (c.brain === null || c.sheetVersion === null) {
      throw conflict("Upload and confirm both a brain table and a participant sheet before mapping ids.");
    }
    const brainAll = new Set([...c.roster.matched.map((m) => m.brainId), ...c.roster.onlyInBrainTable]);
    const sheetAll = new Set([...c.roster.matched.map((m) => m.sheetId), ...c.roster.onlyInParticipantSheet]);
    const brainFree = new Set(c.roster.onlyInBrainTable);
    const sheetFree = new Set(c.roster.onlyInParticipantSheet);
    const matchOf = new Map(c.roster.matched.map((m) => [m.brainId, m.sheetId]));
    const sheetMatchOf = new Map(c.roster.matched.map((m) => [m.sheetId, m.brainId]));
    const seenBrain = new Set<string>();
    const seenSheet = new Set<string>();
    const nearMiss = new Map(c.roster.nearMisses.map((n) => [`${n.brainId}\u0000${n.sheetId}`, n.reason]));
    mappings.forEach((m, k) => {
      const field = `body.mappings.${k}`;
      if (!brainAll.has(m.brainId)) {
        throw new HttpError(422, "unknown_participant", `${field}.brainId: the current brain table (${c.brain?.fileName}) has no participant "${m.brainId}"`);
      }
      if (!sheetAll.has(m.sheetId)) {
        throw new HttpError(422, "unknown_participant", `${field}.sheetId: the current participant sheet (${c.sheetVersion?.fileName}) has no participant "${m.sheetId}"`);
      }
      if (!brainFree.has(m.brainId)) throw conflict(`${field}.brainId: "${m.brainId}" is already matched to "${matchOf.get(m.brainId)}"`);
      if (!sheetFree.has(m.sheetId)) throw conflict(`${field}.sheetId: "${m.sheetId}" is already matched to "${sheetMatchOf.get(m.sheetId)}"`);
      if (seenBrain.has(m.brainId) || seenSheet.has(m.sheetId)) throw conflict(`${field}: an id appears in two mappings of this request`);
      seenBrain.add(m.brainId);
      seenSheet.add(m.sheetId);
    });
    const taken = new Set(c.mappings.flatMap((m) => [`b:${m.brainId}`, `s:${m.sheetId}`]));
    for (const m of mappings) {
      if (taken.has(`b:${m.brainId}`) || taken.has(`s:${m.sheetId}`)) {
        throw conflict(`A mapping for "${m.brainId}" or "${m.sheetId}" was confirmed before (for an earlier version of the tables).`);
      }
    }
    for (const m of mappings) {
      const [row] = await tx.insert(rosterMappings).values({ studyId, brainId: m.brainId, sheetId: m.sheetId, createdBy: actorId, createdAt: now }).returning();
      await recordEvent(tx, {
        studyId,
        actorId,
        kind: "roster.mapping_confirmed",
        targetType: "roster_mapping",
        targetId: row.id,
        after: {
          brainId: m.brainId,
          sheetId: m.sheetId,
          nearMiss: nearMiss.get(`${m.brainId}\u0000${m.sheetId}`) ?? null,
          brainTable: { id: c.brain.id, version: c.brain.version },
          participantSheet: { id: c.sheetVersion.id, version: c.sheetVersion.version },
        },
        at: now,
      });
    }
  });
}
