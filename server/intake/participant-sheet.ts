/**
 * Participant sheets: per-participant variables (age, sex, group, scores…).
 *
 * One row per participant, an id column (default `participant_id`, as the
 * BIDS participants-file convention has it; otherwise the first column), and
 * any mix of numeric and categorical columns. Missing: empty, `n/a`, `N/A`,
 * `NA`. Column types are inferred (columns.ts) and may be changed by the
 * caller: a column typed `number` must hold only numbers and missing
 * markers; any column may be typed `category`. Each participant id appears
 * once. Every violation is reported with file, row and column (422).
 *
 * Cost: O(rows × columns).
 */
import { IntakeError, ProblemList, problem, type Problem } from "./errors";
import { notANumberText, parseCategoryCell, parseNumberCell, quoteCell } from "./cells";
import {
  findColumn,
  profileColumn,
  resolveIdColumn,
  unknownColumnError,
  type ColumnProfile,
} from "./columns";
import type { RawTable } from "./read-table";
import { normaliseId, sameParticipantText } from "./roster";

export interface ParticipantSheetOptions {
  /** Participant id column; default `participant_id` if present, else the first column. */
  idColumn?: string;
  /** The caller's type for a column, replacing the detected one. */
  types?: Readonly<Record<string, "number" | "category">>;
  /** Columns left out entirely (never read). */
  dropColumns?: readonly string[];
}

export type SheetColumn =
  | { name: string; type: "number"; values: readonly (number | null)[] }
  | { name: string; type: "category"; values: readonly (string | null)[] };

export interface ParticipantSheet {
  file: string;
  idColumn: string;
  idColumnGuessed: boolean;
  /** Participant ids (trimmed), in file order. */
  ids: readonly string[];
  /** Spreadsheet row of each participant. */
  rows: readonly number[];
  /** Every kept column but the id column, in file order. */
  columns: readonly SheetColumn[];
  /** Columns left out at upload. */
  dropped: readonly string[];
}

export interface SheetColumnPlan {
  name: string;
  role: "id" | "variable" | "dropped";
  type: "id" | "number" | "category";
  profile: ColumnProfile;
}

export interface SheetAnalysis {
  sheet: ParticipantSheet | null;
  idColumn: string;
  idColumnGuessed: boolean;
  columns: readonly SheetColumnPlan[];
  problems: readonly Problem[];
  problemCount: number;
}

/** Builds a participant sheet or throws IntakeError (422) with every problem found. */
export function buildParticipantSheet(
  raw: RawTable,
  options: ParticipantSheetOptions = {},
): ParticipantSheet {
  const a = analyseParticipantSheet(raw, options);
  if (a.sheet === null) throw new IntakeError(422, a.problems, a.problemCount);
  return a.sheet;
}

/**
 * Reads a participant sheet and reports every cell-level problem instead of
 * throwing (for previews). Throws IntakeError (422) when a column the caller
 * named does not exist or the id column is dropped.
 */
export function analyseParticipantSheet(
  raw: RawTable,
  options: ParticipantSheetOptions = {},
): SheetAnalysis {
  const file = raw.file;
  const id = resolveIdColumn(raw, options.idColumn);
  const dropped = new Set<number>();
  for (const name of options.dropColumns ?? []) {
    const j = findColumn(raw, name);
    if (j < 0) throw unknownColumnError(raw, name, "asked to drop");
    if (j === id.index) {
      throw new IntakeError(422, [
        problem(file, "drop_id_column", "the participant id column cannot be dropped", {
          column: id.name,
        }),
      ]);
    }
    dropped.add(j);
  }
  const types = new Map<number, "number" | "category">();
  for (const [name, type] of Object.entries(options.types ?? {})) {
    const j = findColumn(raw, name);
    if (j < 0) throw unknownColumnError(raw, name, "given a type");
    if (type !== "number" && type !== "category") {
      throw new IntakeError(422, [
        problem(
          file,
          "bad_type",
          `unknown column type ${quoteCell(String(type))}; expected "number" or "category"`,
          { column: name },
        ),
      ]);
    }
    if (j !== id.index) types.set(j, type);
  }

  const problems = new ProblemList();
  const plans: SheetColumnPlan[] = raw.header.map((name, j) => {
    const profile = profileColumn(raw, j);
    if (j === id.index) return { name, role: "id", type: "id", profile };
    if (dropped.has(j))
      return { name, role: "dropped", type: types.get(j) ?? profile.type, profile };
    return { name, role: "variable", type: types.get(j) ?? profile.type, profile };
  });

  const ids: string[] = [];
  const rows: number[] = [];
  // By the roster's rule (normaliseId): ids that are one participant there are one participant here.
  const firstRow = new Map<string, { id: string; row: number }>();
  for (let i = 0; i < raw.rowCount; i++) {
    const rowNumber = raw.rowNumbers[i];
    const pid = parseCategoryCell(raw.cell(i, id.index));
    if (pid === null) {
      problems.add(
        problem(file, "missing_id", "the participant id is missing", {
          row: rowNumber,
          column: id.name,
        }),
      );
      continue;
    }
    const key = normaliseId(pid);
    const first = firstRow.get(key);
    if (first !== undefined) {
      problems.add(
        problem(
          file,
          "duplicate_participant",
          first.id === pid
            ? `participant ${quoteCell(pid)} appears again (first at row ${first.row}); each participant must appear once`
            : `${sameParticipantText(pid, first.id, first.row)}; each participant must appear once`,
          { row: rowNumber, column: id.name },
        ),
      );
      continue;
    }
    firstRow.set(key, { id: pid, row: rowNumber });
  }

  const columns: SheetColumn[] = [];
  for (const plan of plans) {
    if (plan.role !== "variable") continue;
    const j = plan.profile.index;
    if (plan.type === "number") {
      const values: (number | null)[] = [];
      for (let i = 0; i < raw.rowCount; i++) {
        const cell = raw.cell(i, j);
        const x = parseNumberCell(cell);
        if (x === undefined) {
          problems.add(
            problem(
              file,
              "not_a_number",
              `${notANumberText(cell)}; or type the column as a category`,
              {
                row: raw.rowNumbers[i],
                column: plan.name,
              },
            ),
          );
          values.push(null);
        } else values.push(x);
      }
      columns.push({ name: plan.name, type: "number", values });
    } else {
      columns.push({
        name: plan.name,
        type: "category",
        values: Array.from({ length: raw.rowCount }, (_, i) => parseCategoryCell(raw.cell(i, j))),
      });
    }
  }

  const common = { idColumn: id.name, idColumnGuessed: id.guessed, columns: plans };
  if (problems.count > 0)
    return { sheet: null, ...common, problems: problems.list, problemCount: problems.count };
  for (let i = 0; i < raw.rowCount; i++) {
    ids.push(raw.cell(i, id.index).trim());
    rows.push(raw.rowNumbers[i]);
  }
  return {
    sheet: {
      file,
      idColumn: id.name,
      idColumnGuessed: id.guessed,
      ids,
      rows,
      columns,
      dropped: [...dropped].map((j) => raw.header[j]),
    },
    ...common,
    problems: [],
    problemCount: 0,
  };
}

/** The column named `name` of a sheet (exact, then case-insensitive if unique), or undefined. */
export function sheetColumn(sheet: ParticipantSheet, name: string): SheetColumn | undefined {
  const exact = sheet.columns.find((c) => c.name === name);
  if (exact) return exact;
  const lower = name.toLowerCase();
  const found = sheet.columns.filter((c) => c.name.toLowerCase() === lower);
  return found.length === 1 ? found[0] : undefined;
}
