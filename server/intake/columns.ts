/**
 * Column type inference and column lookup.
 *
 * Each column of a raw table is profiled once: missing cells, cells that
 * are numbers, and the rest. The one rule for a column's type, used by
 * brain tables and participant sheets, by uploads and the recipe command
 * alike: a column is `number` when at least half of its non-missing cells
 * are numbers (and at least one is), and its other cells are then problems,
 * each named by row and column (most likely typos such as "O.42", whatever
 * the table's size: one typo in two rows is still a typo); otherwise it is
 * `category` (a column with no values at all is a `category`). The
 * participant id column is typed `id`. (Common practice, no source: a share
 * of one half tells a numeric column with typos from a text column without a
 * threshold that small tables cannot reach.)
 *
 * Cost: O(rows) per column.
 */
import { IntakeError, problem } from "./errors";
import { isMissing, parseNumberCell } from "./cells";
import type { RawTable } from "./read-table";

/** Whether a column with `numbers` number cells and `text` other non-missing cells is typed `number`: at least half are numbers. */
export function isNumericColumn(numbers: number, text: number): boolean {
  return numbers > 0 && numbers >= text;
}

export interface ColumnProfile {
  name: string;
  index: number;
  /** Detected type: "number" or "category" (the id column is typed by the caller). */
  type: "number" | "category";
  missing: number;
  numbers: number;
  /** Non-missing cells that are not numbers. */
  text: number;
  /** Distinct non-missing values, counted for category columns only. */
  distinct?: number;
  /** Each row's cell as a number (NaN where missing or not a number). */
  values: Float64Array;
  /** Row indices (into `rows`) of the non-missing cells that are not numbers. */
  textRows: readonly number[];
}

const profileCache = new WeakMap<RawTable, readonly ColumnProfile[]>();

/**
 * Profiles column `index` of `table`. All columns are profiled together in
 * one row-by-row pass the first time any is asked for, and the profiles are
 * reused for that table object (a raw table is never changed after reading).
 */
export function profileColumn(table: RawTable, index: number): ColumnProfile {
  return profileColumns(table)[index];
}

/** Profiles of every column of `table` (see profileColumn). */
export function profileColumns(table: RawTable): readonly ColumnProfile[] {
  const cached = profileCache.get(table);
  if (cached !== undefined) return cached;
  const n = table.rowCount;
  const m = table.header.length;
  const values = Array.from({ length: m }, () => new Float64Array(n));
  const missing = new Int32Array(m);
  const numbers = new Int32Array(m);
  const textRows: number[][] = Array.from({ length: m }, () => []);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < m; j++) {
      const x = parseNumberCell(table.cell(i, j));
      if (x === null) {
        missing[j] += 1;
        values[j][i] = Number.NaN;
      } else if (x === undefined) {
        textRows[j].push(i);
        values[j][i] = Number.NaN;
      } else {
        numbers[j] += 1;
        values[j][i] = x;
      }
    }
  }
  const profiles = table.header.map((name, j): ColumnProfile => {
    const text = textRows[j].length;
    const type = isNumericColumn(numbers[j], text) ? "number" : "category";
    const profile: ColumnProfile = {
      name,
      index: j,
      type,
      missing: missing[j],
      numbers: numbers[j],
      text,
      values: values[j],
      textRows: textRows[j],
    };
    if (type === "category") {
      const seen = new Set<string>();
      for (let i = 0; i < n; i++) {
        const t = table.cell(i, j).trim();
        if (!isMissing(t)) seen.add(t);
      }
      profile.distinct = seen.size;
    }
    return profile;
  });
  profileCache.set(table, profiles);
  return profiles;
}

/** Index of the header name `name`, or -1. Exact match first, then case-insensitive if unique. */
export function findColumn(table: RawTable, name: string): number {
  const exact = table.header.indexOf(name);
  if (exact >= 0) return exact;
  const lower = name.toLowerCase();
  const found = table.header.flatMap((h, j) => (h.toLowerCase() === lower ? [j] : []));
  return found.length === 1 ? found[0] : -1;
}

/** A 422 problem for a column the caller asked for that the header lacks. */
export function unknownColumnError(table: RawTable, name: string, what: string): IntakeError {
  const names = table.header.slice(0, 12).join(", ") + (table.header.length > 12 ? ", …" : "");
  return new IntakeError(422, [
    problem(
      table.file,
      "unknown_column",
      `no column named "${name}" (${what}); the header has: ${names}`,
      {
        row: 1,
      },
    ),
  ]);
}

/**
 * Resolves the participant id column: `requested` when given (it must
 * exist), otherwise `participant_id` when present, otherwise the first
 * column (`guessed` is then true).
 */
export function resolveIdColumn(
  table: RawTable,
  requested: string | undefined,
): { index: number; name: string; guessed: boolean } {
  if (requested !== undefined) {
    const j = findColumn(table, requested);
    if (j < 0) throw unknownColumnError(table, requested, "the participant id column");
    return { index: j, name: table.header[j], guessed: false };
  }
  const j = findColumn(table, "participant_id");
  if (j >= 0) return { index: j, name: table.header[j], guessed: false };
  return { index: 0, name: table.header[0], guessed: true };
}
