/**
 * The API's views of a study's roster: the join report of its current brain
 * table and participant sheet, and its rows, as the server sends them
 * (server/jobs/intake-roster.ts builds them in the intake worker) and the
 * web app reads them. No imports, so the web app can use it.
 */

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

/** The stored version a roster was joined from. */
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

/** Ids of one file that the join rule makes the same. */
export interface RosterDuplicate {
  source: "brainTable" | "participantSheet";
  file: string;
  /** The normalised id the listed ids share. */
  key: string;
  ids: string[];
}

/** Two unmatched ids that look like the same participant. */
export interface NearMiss {
  brainId: string;
  sheetId: string;
  reason: string;
}

/** A mapping a person confirmed, as the report lists it. */
export interface MappingView {
  brainId: string;
  sheetId: string;
  createdAt: string;
  /** Whether both ids are in the current tables, so the mapping joins them now. */
  applied: boolean;
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
  mappings: MappingView[] | null;
  /** Participant-sheet columns shown in the rows. */
  columns: { name: string; type: "number" | "category" }[];
}

/** One page of roster rows. */
export interface RosterPage {
  total: number;
  offset: number;
  limit: number;
  items: RosterRow[];
}
