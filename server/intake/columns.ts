/**
 * Column type inference and column lookup.
 *
 * Each column of a raw table is profiled once: missing cells, cells that
 * are numbers, and the rest. A column is detected as `number` when at least
 * 80% of its non-missing cells are numbers (the rest are then reported as
 * problems: most likely typos such as "O.42"), otherwise as `category`
 * (a column with no values at all is a `category`). The participant id
 * column is typed `id`. The 80% share is common practice, no source: it
 * tells a numeric column with a few typos from a text column.
 *
 * Cost: O(rows) per column.
 */
import { IntakeError, problem } from "./errors";
import { parseNumberCell } from "./cells";
import type { RawTable } from "./read-table";

export type ColumnType = "number" | "category" | "id";

/** Share of numeric cells (of the non-missing ones) above which a column is numeric. */
export const NUMBER_SHARE = 0.8;

export interface ColumnProfile {
  name: string;
  index: number;
  /** Detected type: "number" or "category" (the id column is typed by the caller). */
  type: "number" | "category";
  missing: number;
  numbers: number;
  /** Non-missing cells that are not numbers. */
  text: number;
  /** Distinct non-missing values. */
  distinct: number;
}

/** Profiles column `index` of `table`. */
export function profileColumn(table: RawTable, index: number): ColumnProfile {
  let missing = 0;
  let numbers = 0;
  let text = 0;
  const seen = new Set<string>();
  for (const row of table.rows) {
    const cell = row[index];
    const x = parseNumberCell(cell);
    if (x === null) {
      missing += 1;
      continue;
    }
    if (x === undefined) text += 1;
    else numbers += 1;
    if (seen.size < 100_000) seen.add(cell.trim());
  }
  const present = numbers + text;
  const type = present > 0 && numbers >= NUMBER_SHARE * present ? "number" : "category";
  return { name: table.header[index], index, type, missing, numbers, text, distinct: seen.size };
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
    problem(table.file, "unknown_column", `no column named "${name}" (${what}); the header has: ${names}`, {
      row: 1,
    }),
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
