/**
 * Data-table columns for the Data screen, kept free of React Native so they
 * can be tested on their own: rows of a file (a preview's first rows or a
 * stored version's rows) with the id column pinned first and a window of the
 * other columns, and the roster's columns (id pinned, status, how it was
 * matched, both ids, sessions, then the participant sheet's columns).
 */
import type { ColumnDef } from "@tanstack/react-table";
import type { RosterReport, RosterRow } from "../../hooks/use-roster";
import { statusLabel, viaLabel } from "./dataset-format";

/** One row of a file: its spreadsheet row number and its cells in the file's column order. */
export interface CellRow {
  row: number;
  cells: readonly (string | number | null)[];
}

/** A width (px) that fits a header of this many characters, between 96 and 220. */
export function widthForHeader(name: string): number {
  return Math.max(96, Math.min(220, Math.round(7.5 * name.length + 44)));
}

export interface FileColumn {
  name: string;
  /** Right-aligned numbers with the numeric filter. */
  numeric: boolean;
}

/**
 * Columns for rows of a file: the id column (pinned), the spreadsheet row
 * number, then the other columns from `start` (inclusive) to `end`
 * (exclusive), counted among the columns other than the id. Throws a
 * RangeError when `idIndex` is not a column.
 */
export function fileRowColumns(
  columns: readonly FileColumn[],
  idIndex: number,
  start: number,
  end: number,
): ColumnDef<CellRow, unknown>[] {
  if (!(Number.isInteger(idIndex) && idIndex >= 0 && idIndex < columns.length)) {
    throw new RangeError(
      `fileRowColumns: the id column index ${idIndex} is not among ${columns.length} columns`,
    );
  }
  const others = columns.map((c, j) => ({ ...c, j })).filter((c) => c.j !== idIndex);
  const id = columns[idIndex];
  return [
    {
      id: `col-${idIndex}`,
      header: id.name,
      accessorFn: (r: CellRow) => r.cells[idIndex],
      meta: { width: Math.max(128, widthForHeader(id.name)) },
    },
    {
      id: "spreadsheet-row",
      header: "row",
      accessorFn: (r: CellRow) => r.row,
      meta: { numeric: true, decimals: 0, width: 72, label: "spreadsheet row" },
    },
    ...others.slice(start, end).map((c) => ({
      id: `col-${c.j}`,
      header: c.name,
      accessorFn: (r: CellRow) => r.cells[c.j],
      meta: {
        numeric: c.numeric,
        width: widthForHeader(c.name),
        ...(c.numeric ? { digits: 6 } : {}),
      },
    })),
  ];
}

/**
 * Columns of the roster table: participant (pinned), status, matched by,
 * both ids, sessions (left out when the brain table has none), then the
 * sheet's columns.
 */
export function rosterColumns(
  sheetColumns: RosterReport["columns"],
  options: { sessions: boolean } = { sessions: true },
): ColumnDef<RosterRow, unknown>[] {
  const sessions: ColumnDef<RosterRow, unknown>[] = options.sessions
    ? [
        {
          id: "sessions",
          header: "sessions",
          accessorFn: (r: RosterRow) => (r.sessions.length > 0 ? r.sessions.join(", ") : null),
          meta: { width: 104 },
        },
      ]
    : [];
  return [
    { id: "participant", header: "participant", accessorFn: (r: RosterRow) => r.participant },
    {
      id: "status",
      header: "status",
      accessorFn: (r: RosterRow) => statusLabel[r.status],
      meta: { width: 156 },
    },
    {
      id: "via",
      header: "matched by",
      accessorFn: (r: RosterRow) => viaLabel(r.via) || null,
      meta: { width: 168 },
    },
    {
      id: "brainId",
      header: "brain-table id",
      accessorFn: (r: RosterRow) => r.brainId,
      meta: { width: 128 },
    },
    {
      id: "sheetId",
      header: "sheet id",
      accessorFn: (r: RosterRow) => r.sheetId,
      meta: { width: 112 },
    },
    ...sessions,
    ...sheetColumns.map((c, k) => ({
      id: `sheet-${k}`,
      header: c.name,
      accessorFn: (r: RosterRow) => r.values[c.name] ?? null,
      meta: {
        numeric: c.type === "number",
        width: widthForHeader(c.name),
        ...(c.type === "number" ? { digits: 6 } : {}),
      },
    })),
  ];
}
