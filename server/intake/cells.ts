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
 *
 * One scan of the character codes checks the syntax and, for up to 15
 * significant digits and a decimal exponent within ±22, computes the value
 * as one exact integer times or divided by an exact power of ten — a single
 * correctly rounded operation, so the result equals `Number(cell)` (Clinger
 * 1990, "How to read floating point numbers accurately", the fast path).
 * Longer or larger numbers go through `Number`. Cost: O(length).
 */
export function parseNumberCell(cell: string): number | null | undefined {
  let t = cell;
  const n = t.length;
  if (n === 0) return null;
  if (t.charCodeAt(0) <= 32 || t.charCodeAt(n - 1) <= 32) t = t.trim();
  const x = scanNumber(t);
  if (x === NOT_A_NUMBER) return MISSING.has(t) ? null : undefined;
  return x;
}

/** True when the text is a plain decimal number in the notation above. */
export function isPlainNumber(text: string): boolean {
  return scanNumber(text) !== NOT_A_NUMBER;
}

const NOT_A_NUMBER = Symbol("not a number");
const POW10 = [
  1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17,
  1e18, 1e19, 1e20, 1e21, 1e22,
];

/**
 * Scans `t` against /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/ and returns
 * its finite value, or NOT_A_NUMBER (also for values that overflow).
 */
function scanNumber(t: string): number | typeof NOT_A_NUMBER {
  const n = t.length;
  let i = 0;
  let c = t.charCodeAt(0);
  let negative = false;
  if (c === 43 || c === 45) {
    negative = c === 45;
    c = t.charCodeAt(++i);
  }
  let digits = 0;
  let significant = 0;
  let mantissa = 0;
  let scale = 0; // decimal exponent to apply to the mantissa
  while (c >= 48 && c <= 57) {
    digits += 1;
    if (significant > 0 || c !== 48) {
      significant += 1;
      if (significant <= 15) mantissa = mantissa * 10 + (c - 48);
      else scale += 1;
    }
    c = t.charCodeAt(++i);
  }
  if (c === 46) {
    c = t.charCodeAt(++i);
    while (c >= 48 && c <= 57) {
      digits += 1;
      if (significant > 0 || c !== 48) {
        significant += 1;
        if (significant <= 15) {
          mantissa = mantissa * 10 + (c - 48);
          scale -= 1;
        }
      } else scale -= 1;
      c = t.charCodeAt(++i);
    }
  }
  if (digits === 0) return NOT_A_NUMBER;
  if (c === 101 || c === 69) {
    c = t.charCodeAt(++i);
    let expNegative = false;
    if (c === 43 || c === 45) {
      expNegative = c === 45;
      c = t.charCodeAt(++i);
    }
    let expDigits = 0;
    let exp = 0;
    while (c >= 48 && c <= 57) {
      expDigits += 1;
      if (exp < 100000) exp = exp * 10 + (c - 48);
      c = t.charCodeAt(++i);
    }
    if (expDigits === 0) return NOT_A_NUMBER;
    scale += expNegative ? -exp : exp;
  }
  if (i !== n) return NOT_A_NUMBER;
  let x: number;
  if (significant <= 15 && scale >= -22 && scale <= 22) {
    x = scale >= 0 ? mantissa * POW10[scale] : mantissa / POW10[-scale];
    if (negative) x = -x;
  } else x = +t;
  return Number.isFinite(x) ? x : NOT_A_NUMBER;
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
