/**
 * Building the numbers a fit runs on (`FitData`) from a brain table, an
 * optional participant sheet and the roster join.
 *
 * Participants are the brain-table participants matched in the sheet (all
 * brain-table participants when there is no sheet), in brain-table order,
 * labelled by their brain-table id — so a recipe's set-aside list means the
 * same participants with or without a sheet. When the brain table has
 * sessions, `values` holds one session (the one asked for, by default the
 * first label in natural order) and `sessions` holds them all, for
 * reliability. Sheet columns (all but the id) are aligned to the
 * participants. Cost: O(participants × (regions × sessions + sheet columns)).
 */
import type { FitData } from "../../contract/spec";
import { IntakeError, problem } from "./errors";
import { quoteCell } from "./cells";
import { type BrainTable, brainParticipantIds, brainSessions } from "./brain-table";
import type { ParticipantSheet } from "./participant-sheet";
import { type IdMapping, type Roster, joinRoster } from "./roster";

export interface FitDataOptions {
  /** Session whose values go into `values`; default the first label in natural order. */
  session?: string;
  /** Confirmed id mappings (brain id → sheet id). */
  mappings?: readonly IdMapping[];
}

export interface BuiltFitData {
  data: FitData;
  /** The join report, or null without a sheet. */
  roster: Roster | null;
  /** The session in `data.values`, or null when the table has none. */
  session: string | null;
  /** For each participant, the sheet id it was matched to (same as the brain id without a sheet). */
  sheetIds: readonly string[];
}

/**
 * Joins and aligns. Throws IntakeError (422) when no participant matches,
 * when the session asked for does not exist, or when a mapping is invalid.
 */
export function buildFitData(
  brain: BrainTable,
  sheet: ParticipantSheet | null,
  options: FitDataOptions = {},
): BuiltFitData {
  const brainIds = brainParticipantIds(brain);
  let roster: Roster | null = null;
  let participants: string[];
  let sheetIds: string[];
  if (sheet === null) {
    participants = brainIds;
    sheetIds = brainIds;
  } else {
    roster = joinRoster(brainIds, sheet.ids, {
      mappings: options.mappings,
      brainFile: brain.file,
      sheetFile: sheet.file,
    });
    if (roster.matched.length === 0) {
      throw new IntakeError(422, [
        problem(
          brain.file,
          "no_match",
          `no participant of the brain table matches a participant of ${sheet.file} (column ${brain.idColumn} against column ${sheet.idColumn})`,
        ),
      ]);
    }
    participants = roster.matched.map((m) => m.brainId);
    sheetIds = roster.matched.map((m) => m.sheetId);
  }

  const labels = brainSessions(brain);
  let session: string | null = null;
  if (labels.length > 0) {
    session = options.session ?? labels[0];
    if (!labels.includes(session)) {
      throw new IntakeError(422, [
        problem(
          brain.file,
          "unknown_session",
          `no session ${quoteCell(session)} in column ${brain.sessionColumn}; the sessions are ${labels.join(", ")}`,
        ),
      ]);
    }
  } else if (options.session !== undefined) {
    throw new IntakeError(422, [
      problem(
        brain.file,
        "unknown_session",
        `session ${quoteCell(options.session)} asked for, but the brain table has no session column`,
      ),
    ]);
  }

  const position = new Map(participants.map((id, i) => [id, i]));
  const n = participants.length;
  const sessionIndex = new Map(labels.map((s, k) => [s, k]));
  // For each entry of the brain table: its participant's position (−1 if not joined) and session number.
  const entryParticipant = new Int32Array(brain.entries.length);
  const entrySession = new Int32Array(brain.entries.length);
  brain.entries.forEach((e, k) => {
    entryParticipant[k] = position.get(e.id) ?? -1;
    entrySession[k] = e.session === null ? 0 : (sessionIndex.get(e.session) ?? -1);
  });
  const chosen = session === null ? 0 : (sessionIndex.get(session) as number);
  // Each region's values in memory the threads share: a fit, its plan or a part of its regions
  // posted to a thread then shares them instead of copying them (64 MB at 20,000 × 400).
  const pick = (series: Float64Array, s: number): Float64Array => {
    const out = new Float64Array(new SharedArrayBuffer(8 * n)).fill(Number.NaN);
    for (let k = 0; k < series.length; k++) {
      const i = entryParticipant[k];
      if (i >= 0 && entrySession[k] === s) out[i] = series[k];
    }
    return out;
  };
  const values = brain.values.map((v) => pick(v, chosen));
  const hasSe = brain.standardErrors.some((s) => s !== null);
  const data: FitData = {
    participants,
    regions: brain.regions,
    values,
    numericColumns: {},
    categoricalColumns: {},
  };
  if (hasSe)
    data.standardErrors = brain.standardErrors.map((s) => (s === null ? null : pick(s, chosen)));
  if (labels.length > 0) {
    data.sessions = { labels, values: brain.values.map((v) => labels.map((_, s) => pick(v, s))) };
  }
  if (sheet !== null) {
    const sheetRow = new Map(sheet.ids.map((id, r) => [id, r]));
    const rowsOf = sheetIds.map((id) => sheetRow.get(id)!);
    const numeric: Record<string, (number | null)[]> = {};
    const categorical: Record<string, (string | null)[]> = {};
    for (const c of sheet.columns) {
      if (c.type === "number") numeric[c.name] = rowsOf.map((r) => c.values[r]);
      else categorical[c.name] = rowsOf.map((r) => c.values[r]);
    }
    data.numericColumns = numeric;
    data.categoricalColumns = categorical;
  }
  return { data, roster, session, sheetIds };
}
