/**
 * The API's views of a study's datasets (brain table and participant sheet
 * versions), as the server sends them and the web app reads them. The
 * column and decision shapes are also what a stored version keeps
 * (db/schema.ts types its JSON columns with them). No imports, so the web
 * app can use it.
 */

export const datasetKinds = ["brain", "participants"] as const;
export type DatasetKind = (typeof datasetKinds)[number];

/** How one stored column maps to a row's numbers or categories (see dataset_rows). */
export interface StoredColumn {
  name: string;
  type: "id" | "number" | "category";
  /** brain: id, session, region, se; sheet: id, variable */
  role: "id" | "session" | "region" | "se" | "variable";
  /** region and se columns: the region */
  region?: string;
  /** number columns: index into the row's numbers; category columns: index into its categories */
  slot?: number;
}

export interface IdentifierDecisionRecord {
  column: string;
  kind: string;
  decision: "dropped" | "kept";
  reason?: string;
}

/** What a column that looks like a direct identifier seems to hold. */
export type IdentifierKind =
  | "name"
  | "birth-date"
  | "address"
  | "phone"
  | "email"
  | "record-number";

/** A column's type as the intake detects it. */
export type ColumnType = "number" | "category" | "id";

/** One column of an upload's preview. */
export interface ColumnPreview {
  name: string;
  type: ColumnType;
  /** brain: id, session, region, se, region-name, value, ignored, dropped; sheet: id, variable, dropped */
  role: string;
  missing: number;
  /** Distinct values (category columns). */
  distinct?: number;
  /** Smallest and largest number (columns with numbers). */
  min?: number;
  max?: number;
  /** Why a brain-table column is not used. */
  note?: string;
  identifier?: { kind: IdentifierKind; reason: string };
}

export interface PersonRef {
  id: string;
  name: string | null;
  email: string | null;
}

/** One confirmed version of a brain table or participant sheet. */
export interface DatasetView {
  id: string;
  studyId: string;
  kind: DatasetKind;
  status: "confirmed";
  version: number;
  /** The newest version of its kind in the study. */
  current: boolean;
  fileName: string;
  sha256: string;
  byteSize: number;
  delimiter: string;
  layout: string | null;
  idColumn: string;
  sessionColumn: string | null;
  seSuffix: string | null;
  columns: StoredColumn[];
  droppedColumns: string[];
  identifierDecisions: IdentifierDecisionRecord[];
  rowCount: number;
  participantCount: number;
  regions: string[] | null;
  uploadedBy: PersonRef;
  uploadedAt: string;
  confirmedBy: PersonRef;
  confirmedAt: string;
}

/** One page of a version's rows. */
export interface RowsPage {
  total: number;
  offset: number;
  limit: number;
  /** Each row's spreadsheet row number and its cells, in the order of `columns`. */
  items: { row: number; cells: (string | number | null)[] }[];
}

/** One problem of an uploaded file; `message` already names the file, row and column. */
export interface IntakeProblem {
  /** The file's name as uploaded or as named in the recipe. */
  file: string;
  /** Spreadsheet row number (header = 1), when the problem sits in one row. */
  row?: number;
  /** Column name (as in the header), when the problem sits in one column. */
  column?: string;
  /** Stable machine-readable code, e.g. "not_a_number", "ragged_row". */
  code: string;
  /** The full sentence shown to people, already naming file, row and column. */
  message: string;
}

/** A column that looks like a direct identifier. */
export interface IdentifierFlag {
  column: string;
  kind: IdentifierKind;
  /** Why it was flagged, in plain words (never quoting the cells). */
  reason: string;
}

/** The field separators the intake reads. */
export type Delimiter = "," | "\t" | ";";

/** What the intake shows of an uploaded table before anything is stored. */
export interface TablePreview {
  file: string;
  kind: DatasetKind;
  delimiter: Delimiter;
  delimiterName: string;
  rowCount: number;
  columnCount: number;
  idColumn: string;
  idColumnGuessed: boolean;
  /** Brain tables only. */
  layout?: "wide" | "long";
  regions?: string[];
  sessions?: string[];
  /** Distinct participant ids (brain: across sessions). */
  participants: number;
  /** In the file's column order. */
  columns: ColumnPreview[];
  /** First rows as written, with their spreadsheet row numbers (header = row 1). */
  rows: { row: number; cells: string[] }[];
  /** Problems that must be resolved (by type change or drop) before confirming. */
  problems: IntakeProblem[];
  problemCount: number;
  identifierColumns: IdentifierFlag[];
}

/** The options an upload was read with. */
export interface UploadOptions {
  idColumn?: string;
  seSuffix?: string;
  layout?: "wide" | "long";
  /** null: the brain table has no session column. */
  sessionColumn?: string | null;
}

/** The answer to an upload: its preview, before anything is stored. */
export interface PreviewView extends TablePreview {
  id: string;
  studyId: string;
  status: "preview";
  fileName: string;
  sha256: string;
  byteSize: number;
  options: UploadOptions;
  uploadedBy: PersonRef;
  uploadedAt: string;
  expiresAt: string;
}
