/**
 * Reading single cells: missing markers and numbers.
 *
 * Missing: an empty cell, `n/a` (the BIDS participants-file convention),
 * `N/A` or `NA` (after trimming white space). Numbers: plain decimal
 * notation with an optional sign, decimal point and exponent (`-0.42`,
 * `.5`, `3e-4`); thousands separators, decimal commas, `Inf` and `NaN` are
 * not numbers. Cost: O(length of the cell).
 */

const MISSING = new Set(["", "n/a", "N/A", "NA"]);
const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const DECIMAL_COMMA = /^[+-]?\d+,\d+$/;

/** The missing markers, in words, for messages and documentation. */
export const MISSING_MARKERS_TEXT = 'empty, "n/a", "N/A" or "NA"';

/** True when the cell is one of the missing markers. */
export function isMissing(cell: string): boolean {
  return MISSING.has(cell.trim());
}

/**
 * The cell as a number: a finite number, `null` when the cell is a missing
 * marker, or `undefined` when it is neither (not a number).
 */
export function parseNumberCell(cell: string): number | null | undefined {
  const t = cell.trim();
  if (MISSING.has(t)) return null;
  if (!NUMBER.test(t)) return undefined;
  const x = Number(t);
  return Number.isFinite(x) ? x : undefined;
}

/** True when the text is a plain decimal number in the notation above. */
export function isPlainNumber(text: string): boolean {
  return NUMBER.test(text) && Number.isFinite(Number(text));
}

/** The cell as a category label: trimmed text, or `null` when missing. */
export function parseCategoryCell(cell: string): string | null {
  const t = cell.trim();
  return MISSING.has(t) ? null : t;
}

/** A cell quoted for a message, shortened when long. */
export function quoteCell(cell: string): string {
  const t = cell.length > 40 ? `${cell.slice(0, 37)}...` : cell;
  return JSON.stringify(t);
}

/** `"O.42" is not a number`, with a hint when the cell uses a decimal comma. */
export function notANumberText(cell: string): string {
  const hint = DECIMAL_COMMA.test(cell.trim()) ? " (use a point as the decimal mark)" : "";
  return `${quoteCell(cell)} is not a number${hint}; expected a number or a missing marker (${MISSING_MARKERS_TEXT})`;
}
