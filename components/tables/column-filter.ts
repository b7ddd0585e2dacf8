/**
 * Per-column filters of the data table.
 *
 * Text columns: case-insensitive "contains".
 * Number columns accept a small comparison language:
 *   "> 0.5", ">= 0.5", "< 2", "<= 2", "= 3" or "3" (equal), "1..3" or
 *   "1 to 3" (between, inclusive), with "−" or "-" for minus; "n/a" keeps the
 *   rows where the value is missing. Missing values never pass a numeric
 *   comparison.
 */
import { MISSING } from "../charts/number-format";

export type NumericFilter =
  | { kind: "compare"; op: ">" | ">=" | "<" | "<=" | "="; value: number }
  | { kind: "between"; low: number; high: number }
  | { kind: "missing" };

const NUMBER = String.raw`[-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?`;
const COMPARE = new RegExp(String.raw`^(>=|<=|>|<|=)?\s*(${NUMBER})$`, "i");
const BETWEEN = new RegExp(String.raw`^(${NUMBER})\s*(?:\.\.|to)\s*(${NUMBER})$`, "i");

/**
 * Parses a numeric filter; null for an empty text; throws a RangeError with
 * the accepted forms when the text cannot be read (the table shows it under
 * the filter box).
 */
export function parseNumericFilter(text: string): NumericFilter | null {
  const t = text
    .trim()
    .replace(/\u2212/g, "-")
    .replace(/,/g, "");
  if (t === "") return null;
  if (t.toLowerCase() === MISSING) return { kind: "missing" };
  const between = BETWEEN.exec(t);
  if (between) {
    const a = Number(between[1]);
    const b = Number(between[2]);
    return { kind: "between", low: Math.min(a, b), high: Math.max(a, b) };
  }
  const compare = COMPARE.exec(t);
  if (compare) {
    const op = (compare[1] ?? "=") as ">" | ">=" | "<" | "<=" | "=";
    return { kind: "compare", op, value: Number(compare[2]) };
  }
  throw new RangeError(
    `"${text}" is not a number filter; write for example > 0.5, <= 2, 1..3, 4 or n/a`,
  );
}

/** Whether `value` passes `filter`. */
export function matchesNumericFilter(
  value: number | null | undefined,
  filter: NumericFilter,
): boolean {
  const missing = value === null || value === undefined || !Number.isFinite(value);
  if (filter.kind === "missing") return missing;
  if (missing) return false;
  if (filter.kind === "between") return value >= filter.low && value <= filter.high;
  switch (filter.op) {
    case ">":
      return value > filter.value;
    case ">=":
      return value >= filter.value;
    case "<":
      return value < filter.value;
    case "<=":
      return value <= filter.value;
    case "=":
      return value === filter.value;
  }
}

/** Case-insensitive "contains" for text cells; a missing cell matches only "n/a". */
export function matchesTextFilter(value: unknown, text: string): boolean {
  const needle = text.trim().toLowerCase();
  if (needle === "") return true;
  if (value === null || value === undefined || (typeof value === "number" && Number.isNaN(value)))
    return needle === MISSING;
  return String(value).toLowerCase().includes(needle);
}
