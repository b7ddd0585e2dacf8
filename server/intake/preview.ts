/**
 * Preview before storing, and confirmation.
 *
 * `previewTable` reads a raw table as a brain table or a participant sheet
 * and returns what the uploader must see before anything is stored: the
 * first rows, each column's detected type and role, the problems found
 * (each naming file, row and column) and the columns that look like direct
 * identifiers. `confirmTable` applies the uploader's decisions — type
 * changes, dropped columns, the reason for keeping each flagged identifier
 * column — and returns the typed table, or throws IntakeError (422) when a
 * problem remains or an identifier column is neither dropped nor explained.
 * Cost: O(rows × columns).
 */
import type {
  ColumnPreview,
  DatasetKind,
  IdentifierKind,
  TablePreview,
} from "../../contract/views/datasets";
import { IntakeError, ProblemList, problem } from "./errors";
import {
  type BrainLayout,
  type BrainTable,
  analyseBrainTable,
  brainParticipantIds,
  brainSessions,
} from "./brain-table";
import type { ColumnProfile } from "./columns";
import { findColumn, unknownColumnError } from "./columns";
import { findIdentifierColumns } from "./identifiers";
import { type ParticipantSheet, analyseParticipantSheet } from "./participant-sheet";
import { type RawTable, type ReadOptions, delimiterName, readTable } from "./read-table";

/** The kind of table a preview reads (contract/views/datasets.ts). */
export type TableKind = DatasetKind;
// The preview's shape is an API view; the intake's users reach it here.
export type { TablePreview };

/** Rows shown in a preview. */
export const PREVIEW_ROWS = 20;

export interface PreviewOptions {
  idColumn?: string;
  /** Brain tables: standard-error suffix (default `_se`). */
  seSuffix?: string;
  /** Brain tables: force a layout. */
  layout?: BrainLayout;
  /** Brain tables: session column, or null for none. */
  sessionColumn?: string | null;
}

export interface Confirmation extends PreviewOptions {
  /** Type changes: a participant-sheet column's type; a wide brain column: number = region, category = not a region. */
  types?: Record<string, "number" | "category">;
  dropColumns?: string[];
  /** For each flagged identifier column that is kept: why. */
  identifierReasons?: Record<string, string>;
}

export interface IdentifierDecision {
  column: string;
  kind: IdentifierKind;
  decision: "dropped" | "kept";
  reason?: string;
}

export type ConfirmedTable =
  | { kind: "brain"; brain: BrainTable; identifierDecisions: IdentifierDecision[] }
  | { kind: "participants"; sheet: ParticipantSheet; identifierDecisions: IdentifierDecision[] };

function summary(p: ColumnProfile): Pick<ColumnPreview, "missing" | "distinct" | "min" | "max"> {
  const out: Pick<ColumnPreview, "missing" | "distinct" | "min" | "max"> = { missing: p.missing };
  if (p.distinct !== undefined) out.distinct = p.distinct;
  if (p.numbers > 0) {
    let min = Number.POSITIVE_INFINITY;
    let max = Number.NEGATIVE_INFINITY;
    for (const x of p.values) {
      if (x < min) min = x;
      if (x > max) max = x;
    }
    out.min = min;
    out.max = max;
  }
  return out;
}

function countDistinctIds(raw: RawTable, idColumn: string): number {
  const j = findColumn(raw, idColumn);
  const ids = new Set<string>();
  for (let i = 0; i < raw.rowCount; i++) ids.add(raw.cell(i, j).trim());
  return ids.size;
}

/** The preview of `raw` read as `kind`. Throws IntakeError (422) only for a named column that does not exist. */
export function previewTable(
  raw: RawTable,
  kind: TableKind,
  options: PreviewOptions = {},
): TablePreview {
  const identifiers = findIdentifierColumns(raw);
  const flagOf = new Map(identifiers.map((f) => [f.column, f]));
  const common = {
    file: raw.file,
    kind,
    delimiter: raw.delimiter,
    delimiterName: delimiterName(raw.delimiter),
    rowCount: raw.rowCount,
    columnCount: raw.header.length,
    rows: Array.from({ length: Math.min(PREVIEW_ROWS, raw.rowCount) }, (_, i) => ({
      row: raw.rowNumbers[i],
      cells: raw.row(i),
    })),
    identifierColumns: identifiers,
  };
  const withFlag = (c: ColumnPreview): ColumnPreview => {
    const f = flagOf.get(c.name);
    return f ? { ...c, identifier: { kind: f.kind, reason: f.reason } } : c;
  };
  if (kind === "brain") {
    const a = analyseBrainTable(raw, options);
    const columns = a.plan.columns.map((c) =>
      withFlag({
        name: c.name,
        type:
          c.role === "id"
            ? "id"
            : c.role === "region" || c.role === "se" || c.role === "value"
              ? "number"
              : c.role === "session" || c.role === "region-name"
                ? "category"
                : c.profile.type,
        role: c.role,
        ...summary(c.profile),
        ...(c.reason ? { note: c.reason } : {}),
      }),
    );
    return {
      ...common,
      idColumn: a.plan.idColumn,
      idColumnGuessed: a.plan.idColumnGuessed,
      layout: a.plan.layout,
      regions: [...a.plan.regions],
      sessions: a.draft ? brainSessions(a.draft) : [],
      participants: a.draft
        ? brainParticipantIds(a.draft).length
        : countDistinctIds(raw, a.plan.idColumn),
      columns,
      problems: [...a.problems],
      problemCount: a.problemCount,
    };
  }
  const a = analyseParticipantSheet(raw, { idColumn: options.idColumn });
  return {
    ...common,
    idColumn: a.idColumn,
    idColumnGuessed: a.idColumnGuessed,
    participants: countDistinctIds(raw, a.idColumn),
    columns: a.columns.map((c) =>
      withFlag({ name: c.name, type: c.type, role: c.role, ...summary(c.profile) }),
    ),
    problems: [...a.problems],
    problemCount: a.problemCount,
  };
}

/**
 * Problems an upload's preview may carry, by kind: each is resolved by a
 * decision at confirmation (a brain-table column that would be left out is
 * dropped or marked not used; a participant-sheet column with text cells is
 * typed as a category or dropped). Any other problem refuses the upload.
 */
const PREVIEWABLE: Record<TableKind, ReadonlySet<string>> = {
  brain: new Set(["column_left_out"]),
  participants: new Set(["not_a_number"]),
};

/**
 * Reads an uploaded file and previews it as `kind`, or throws IntakeError
 * (400 unreadable, 413 too large, 422 a problem no decision at
 * confirmation can resolve, every such problem listed).
 */
export function previewUpload(
  bytes: Uint8Array | string,
  file: string,
  kind: TableKind,
  options: PreviewOptions = {},
  read: ReadOptions = {},
): TablePreview {
  return checkPreviewable(previewTable(readTable(bytes, file, read), kind, options));
}

/** The preview when an upload may be previewed; else throws IntakeError (422) with every problem no decision can resolve. */
export function checkPreviewable(preview: TablePreview): TablePreview {
  const previewable = PREVIEWABLE[preview.kind];
  const blocking = preview.problems.filter((p) => !previewable.has(p.code));
  if (blocking.length > 0) {
    const total =
      blocking.length === preview.problems.length ? preview.problemCount : blocking.length;
    throw new IntakeError(422, blocking, total);
  }
  return preview;
}

/**
 * Applies the uploader's decisions and returns the typed table. Throws
 * IntakeError (422) naming each identifier column left undecided, each
 * named column that does not exist, and every remaining cell problem.
 */
export function confirmTable(
  raw: RawTable,
  kind: TableKind,
  confirmation: Confirmation = {},
): ConfirmedTable {
  const drop = confirmation.dropColumns ?? [];
  for (const name of [...drop, ...Object.keys(confirmation.identifierReasons ?? {})]) {
    if (findColumn(raw, name) < 0) throw unknownColumnError(raw, name, "named at confirmation");
  }
  const dropped = new Set(drop.map((name) => raw.header[findColumn(raw, name)]));
  const reasons = new Map<string, string>();
  for (const [name, reason] of Object.entries(confirmation.identifierReasons ?? {})) {
    reasons.set(raw.header[findColumn(raw, name)], reason.trim());
  }
  const undecided = new ProblemList();
  const decisions: IdentifierDecision[] = [];
  for (const flag of findIdentifierColumns(raw)) {
    if (dropped.has(flag.column)) {
      decisions.push({ column: flag.column, kind: flag.kind, decision: "dropped" });
    } else if ((reasons.get(flag.column) ?? "") !== "") {
      decisions.push({
        column: flag.column,
        kind: flag.kind,
        decision: "kept",
        reason: reasons.get(flag.column),
      });
    } else {
      undecided.add(
        problem(
          raw.file,
          "identifier_undecided",
          `may hold direct identifiers (${flag.reason}); drop the column or give a reason to keep it`,
          { column: flag.column },
        ),
      );
    }
  }
  undecided.throwIfAny(422);

  if (kind === "brain") {
    const a = analyseBrainTable(raw, {
      idColumn: confirmation.idColumn,
      seSuffix: confirmation.seSuffix,
      layout: confirmation.layout,
      sessionColumn: confirmation.sessionColumn,
      dropColumns: drop,
      types: confirmation.types,
    });
    if (a.table === null) throw new IntakeError(422, a.problems, a.problemCount);
    return { kind, brain: a.table, identifierDecisions: decisions };
  }
  const a = analyseParticipantSheet(raw, {
    idColumn: confirmation.idColumn,
    dropColumns: drop,
    types: confirmation.types,
  });
  if (a.sheet === null) throw new IntakeError(422, a.problems, a.problemCount);
  return { kind, sheet: a.sheet, identifierDecisions: decisions };
}
