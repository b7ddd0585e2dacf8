/**
 * The roster of a study, computed in the intake worker thread: the join of
 * the current brain table's participants with the current participant
 * sheet by the intake's one rule (server/intake/roster.ts), the roster
 * rows, and what is asked of them — the join report with a page of rows
 * (filtered, searched, sorted) as JSON text, the whole roster as CSV, or
 * the facts a request to confirm mappings is checked against.
 *
 * The main thread reads the stored versions and hands them over as JSON
 * text (one string crosses the thread boundary without being taken apart);
 * what comes back is the answer's text or a few facts. A study of hundreds
 * of thousands of participants joins in about a second here, never on the
 * request thread; the joined roster is kept for the next request with the
 * same inputs (versions and mappings never change once stored).
 *
 * Pure apart from that small cache. Cost: O(participants) hashing, plus
 * O(rows · log rows) when sorted.
 */
import type {
  RosterPage,
  RosterReport,
  RosterRow,
  RosterStatus,
  VersionRef,
} from "../../contract/views/roster";
import { type ParticipantSheet, type Roster, joinRoster, naturalCompare, toCsv } from "../intake";

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

/** A brain table's participants as the roster needs them: distinct ids in file order, each with its sessions in natural order. */
export interface BrainParticipants {
  ids: string[];
  sessions: string[][];
}

export interface RecordedMapping {
  id: string;
  brainId: string;
  sheetId: string;
  createdAt: string;
}

/** The roster's inputs; `json` texts are BrainParticipants and ParticipantSheet as JSON. */
export interface RosterInput {
  /** Names the inputs (version ids and mapping ids): equal keys, equal inputs. */
  key: string;
  brain: { ref: VersionRef; json: string } | null;
  sheet: { ref: VersionRef; json: string } | null;
  mappings: RecordedMapping[];
}

export type RosterRequest =
  | { kind: "view"; query: RosterQuery; rowsVisible: boolean }
  | { kind: "csv" }
  | { kind: "check"; mappings: { brainId: string; sheetId: string }[] };

/** What a request to confirm mappings is checked against, for the ids it names. */
export interface MappingFacts {
  /** Per brain id named: in the brain table, not matched (free), and what it is matched to. */
  brain: Record<string, { present: boolean; free: boolean; matchedTo: string | null }>;
  sheet: Record<string, { present: boolean; free: boolean; matchedTo: string | null }>;
  /** Near-miss reason per "brainId\u0000sheetId" pair named, when they are one. */
  nearMiss: Record<string, string>;
}

interface Computed {
  brainRef: VersionRef | null;
  sheetRef: VersionRef | null;
  roster: Roster;
  rows: RosterRow[];
  sheet: ParticipantSheet | null;
  mappings: RecordedMapping[];
  applied: Set<string>;
}

/** Joined rosters kept for the next request (the newest few). */
const kept = new Map<string, Computed>();
const KEPT = 2;

function computed(input: RosterInput): Computed {
  const hit = kept.get(input.key);
  if (hit) return hit;
  const c = compute(input);
  kept.set(input.key, c);
  while (kept.size > KEPT) kept.delete(kept.keys().next().value as string);
  return c;
}

function compute(input: RosterInput): Computed {
  const b: BrainParticipants = input.brain
    ? (JSON.parse(input.brain.json) as BrainParticipants)
    : { ids: [], sessions: [] };
  const sheet = input.sheet ? (JSON.parse(input.sheet.json) as ParticipantSheet) : null;
  const sheetIds = sheet?.ids ?? [];
  const brainSet = new Set(b.ids);
  const sheetSet = new Set(sheetIds);
  const usable = input.mappings.filter((m) => brainSet.has(m.brainId) && sheetSet.has(m.sheetId));
  const roster = joinRoster(b.ids, sheetIds, {
    mappings: usable.map((m) => ({ brainId: m.brainId, sheetId: m.sheetId })),
    brainFile: input.brain?.ref.fileName,
    sheetFile: input.sheet?.ref.fileName,
  });
  const sessionsOf = new Map(b.ids.map((id, k) => [id, b.sessions[k]]));
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
      sessions: sessionsOf.get(m.brainId) ?? [],
      values: valuesOf(m.sheetId),
    })),
    ...roster.onlyInBrainTable.map((id) => ({
      participant: id,
      brainId: id,
      sheetId: null,
      status: "only-in-brain-table" as const,
      via: null,
      sessions: sessionsOf.get(id) ?? [],
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
    const bx =
      x.brainId === null ? Number.POSITIVE_INFINITY : (brainOrder.get(x.brainId) as number);
    const by =
      y.brainId === null ? Number.POSITIVE_INFINITY : (brainOrder.get(y.brainId) as number);
    if (bx !== by) return bx - by;
    return (sheetRow.get(x.sheetId ?? "") ?? 0) - (sheetRow.get(y.sheetId ?? "") ?? 0);
  });
  return {
    brainRef: input.brain?.ref ?? null,
    sheetRef: input.sheet?.ref ?? null,
    roster,
    rows,
    sheet,
    mappings: input.mappings,
    applied: new Set(usable.map((m) => m.id)),
  };
}

function report(c: Computed, rowsVisible: boolean): RosterReport {
  const r = c.roster;
  return {
    brainTable: c.brainRef,
    participantSheet: c.sheetRef,
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
      ? c.mappings.map((m) => ({
          brainId: m.brainId,
          sheetId: m.sheetId,
          createdAt: m.createdAt,
          applied: c.applied.has(m.id),
        }))
      : null,
    columns: (c.sheet?.columns ?? []).map((col) => ({ name: col.name, type: col.type })),
  };
}

function compareValues(a: unknown, b: unknown): number {
  if (a === null || a === undefined) return b === null || b === undefined ? 0 : 1;
  if (b === null || b === undefined) return -1;
  if (typeof a === "number" && typeof b === "number") return a - b;
  return naturalCompare(String(a), String(b));
}

function selectRows(
  rows: readonly RosterRow[],
  q: Omit<RosterQuery, "offset" | "limit">,
): RosterRow[] {
  let out = rows.filter((r) => q.status === undefined || r.status === q.status);
  if (q.search) {
    const s = q.search.trim().toLowerCase();
    out = out.filter(
      (r) =>
        (r.brainId ?? "").toLowerCase().includes(s) || (r.sheetId ?? "").toLowerCase().includes(s),
    );
  }
  if (q.sort) {
    const key = q.sort;
    const get = (r: RosterRow): unknown =>
      key === "participant"
        ? r.participant
        : key === "status"
          ? r.status
          : key === "sessions"
            ? r.sessions.length
            : r.values[key];
    const sign = q.order === "desc" ? -1 : 1;
    // Missing values stay last in both orders; ties keep the roster order.
    out = out
      .map((r, k) => ({ r, k }))
      .sort((x, y) => {
        const a = get(x.r);
        const b = get(y.r);
        const missing =
          (a === null || a === undefined ? 1 : 0) - (b === null || b === undefined ? 1 : 0);
        return missing !== 0 ? missing : sign * compareValues(a, b) || x.k - y.k;
      })
      .map((x) => x.r);
  }
  return out;
}

/** The join report and one page of rows (null when not visible), as JSON text. */
function view(c: Computed, query: RosterQuery, rowsVisible: boolean): string {
  if (!rowsVisible) return JSON.stringify({ ...report(c, false), rows: null });
  const selected = selectRows(c.rows, query);
  const page: RosterPage = {
    total: selected.length,
    offset: query.offset,
    limit: query.limit,
    items: selected.slice(query.offset, query.offset + query.limit),
  };
  return JSON.stringify({ ...report(c, true), rows: page });
}

/** The whole roster as CSV (formula-neutralised), in roster order. */
function csv(c: Computed): string {
  const columns = c.sheet?.columns ?? [];
  const header = [
    "participant",
    "brain_table_id",
    "participant_sheet_id",
    "status",
    "matched_by",
    "sessions",
    ...columns.map((col) => col.name),
  ];
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

function facts(
  c: Computed,
  mappings: readonly { brainId: string; sheetId: string }[],
): MappingFacts {
  const r = c.roster;
  const matchOf = new Map(r.matched.map((m) => [m.brainId, m.sheetId]));
  const sheetMatchOf = new Map(r.matched.map((m) => [m.sheetId, m.brainId]));
  const brainFree = new Set(r.onlyInBrainTable);
  const sheetFree = new Set(r.onlyInParticipantSheet);
  const nearMiss = new Map(r.nearMisses.map((n) => [`${n.brainId}\u0000${n.sheetId}`, n.reason]));
  const out: MappingFacts = { brain: {}, sheet: {}, nearMiss: {} };
  for (const m of mappings) {
    const brainMatch = matchOf.get(m.brainId) ?? null;
    out.brain[m.brainId] = {
      present: brainMatch !== null || brainFree.has(m.brainId),
      free: brainFree.has(m.brainId),
      matchedTo: brainMatch,
    };
    const sheetMatch = sheetMatchOf.get(m.sheetId) ?? null;
    out.sheet[m.sheetId] = {
      present: sheetMatch !== null || sheetFree.has(m.sheetId),
      free: sheetFree.has(m.sheetId),
      matchedTo: sheetMatch,
    };
    const reason = nearMiss.get(`${m.brainId}\u0000${m.sheetId}`);
    if (reason !== undefined) out.nearMiss[`${m.brainId}\u0000${m.sheetId}`] = reason;
  }
  return out;
}

/** Answers one request about the roster of `input`. */
export function answerRoster(input: RosterInput, request: RosterRequest): string | MappingFacts {
  const c = computed(input);
  if (request.kind === "view") return view(c, request.query, request.rowsVisible);
  if (request.kind === "csv") return csv(c);
  return facts(c, request.mappings);
}
