/**
 * Cell values of the data table: missing values (null, undefined, NaN) are
 * made `undefined` so the table sorts them last whatever the direction, and
 * cells print numbers right-aligned with a fixed count of significant digits
 * and "n/a" for missing.
 */
import { formatFixed, formatValue, MISSING } from "../charts/number-format";

/** null and NaN become undefined; anything else is returned unchanged. */
export function missingToUndefined<T>(value: T): T | undefined {
  if (value === null || value === undefined) return undefined;
  if (typeof value === "number" && Number.isNaN(value)) return undefined;
  return value;
}

/**
 * Ascending comparison for sorting: numbers by value, everything else as
 * text in natural order ("sub-2" before "sub-10"). Missing values are sorted
 * by the table itself.
 */
export function compareCells(a: unknown, b: unknown): number {
  if (typeof a === "number" && typeof b === "number") return a < b ? -1 : a > b ? 1 : 0;
  return naturalCollator.compare(String(a), String(b));
}

const naturalCollator = new Intl.Collator("en", { numeric: true, sensitivity: "base" });

/** Text for a cell: numbers with `digits` significant digits (or `decimals` fixed decimals), booleans as yes/no, missing as "n/a". */
export function formatCell(
  value: unknown,
  options: { digits?: number; decimals?: number } = {},
): string {
  if (value === null || value === undefined) return MISSING;
  if (typeof value === "number") {
    if (options.decimals !== undefined) return formatFixed(value, options.decimals);
    return formatValue(value, options.digits ?? 3);
  }
  if (typeof value === "boolean") return value ? "yes" : "no";
  if (value instanceof Date) return value.toISOString().slice(0, 10);
  return String(value);
}
