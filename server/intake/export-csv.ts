/**
 * Writing tables as CSV for download, safe to open in a spreadsheet.
 *
 * Formula-injection neutralisation (OWASP "CSV Injection" guidance): a text
 * cell that begins with `=`, `+`, `-`, `@`, a tab or a carriage return gets a
 * leading apostrophe so a spreadsheet shows it as text instead of running
 * it. Decision: numbers stay numbers — a cell given as a JavaScript number,
 * or text that is a plain decimal number such as `-0.42` or `+3e-4`, is
 * written unchanged (a plain number cannot run a formula); only other text
 * is neutralised. Missing values (null, undefined, NaN) are written as
 * `n/a`. Fields holding the delimiter, a double quote, CR or LF are quoted
 * (RFC 4180); lines end with CRLF. Cost: O(cells).
 */
import { isPlainNumber } from "./cells";

export type CsvCell = string | number | null | undefined;

export interface CsvOptions {
  delimiter?: "," | "\t" | ";";
  /** Marker written for missing values (default "n/a"). */
  missing?: string;
}

const TRIGGERS = new Set(["=", "+", "-", "@", "\t", "\r"]);

/** A text cell made safe to open in a spreadsheet (see the module comment). */
export function neutraliseCell(text: string): string {
  if (text === "" || !TRIGGERS.has(text[0])) return text;
  if (isPlainNumber(text)) return text;
  return `'${text}`;
}

function field(cell: CsvCell, delimiter: string, missing: string): string {
  let text: string;
  if (cell === null || cell === undefined || (typeof cell === "number" && Number.isNaN(cell)))
    text = missing;
  else if (typeof cell === "number") text = Number.isFinite(cell) ? String(cell) : missing;
  else text = neutraliseCell(cell);
  if (
    text.includes(delimiter) ||
    text.includes('"') ||
    text.includes("\n") ||
    text.includes("\r")
  ) {
    return `"${text.replace(/"/g, '""')}"`;
  }
  return text;
}

/** The header and rows as CSV text (CRLF line ends, a final CRLF). */
export function toCsv(
  header: readonly string[],
  rows: readonly (readonly CsvCell[])[],
  options: CsvOptions = {},
): string {
  const d = options.delimiter ?? ",";
  const missing = options.missing ?? "n/a";
  const lines = [header.map((h) => field(h, d, missing)).join(d)];
  for (const row of rows) lines.push(row.map((c) => field(c, d, missing)).join(d));
  return `${lines.join("\r\n")}\r\n`;
}
