/**
 * Reading an uploaded delimited text file into a raw table of strings.
 *
 * The one reader used by the app's uploads and by the recipe command. It
 * accepts UTF-8 text with or without a byte-order mark, detects the
 * delimiter among comma, tab and semicolon (RFC 4180 quoting: fields may be
 * wrapped in double quotes, a quote inside is doubled), and refuses with an
 * `IntakeError` anything it cannot read as one rectangular table: empty
 * file, header only, empty or duplicate header names, ragged rows, unknown
 * delimiter, broken quotes, binary files and spreadsheets renamed .csv, text
 * that is not UTF-8, and files over the byte or column limits (413).
 *
 * Row numbers follow the spreadsheet view (see errors.ts): header = row 1.
 * Blank rows (every cell empty or white space) are skipped but counted.
 * Cells are kept exactly as written (no trimming); header names are trimmed.
 *
 * Cost: one pass over the bytes to validate, one papaparse pass (worker-less,
 * on the whole string), one pass over the records: O(bytes).
 */
import Papa from "papaparse";
import type { Delimiter } from "../../contract/views/datasets";
import { IntakeError, ProblemList, problem } from "./errors";

/** 50 MiB: larger uploads are refused with 413. */
export const DEFAULT_MAX_BYTES = 50 * 1024 * 1024;
/** More header fields than this are refused with 413. */
export const DEFAULT_MAX_COLUMNS = 20_000;

export interface ReadOptions {
  maxBytes?: number;
  maxColumns?: number;
}

export interface RawTable {
  /** The file's name as uploaded (used in every message). */
  file: string;
  delimiter: Delimiter;
  /** Header names, trimmed, unique, non-empty. */
  header: readonly string[];
  /** Data rows (blank rows removed), each exactly `header.length` cells, as written. */
  rows: readonly (readonly string[])[];
  /** Spreadsheet row number of each data row (header = row 1). */
  rowNumbers: readonly number[];
}

const DELIMITER_NAMES: Record<Delimiter, string> = { ",": "comma", "\t": "tab", ";": "semicolon" };

/** Plain-word name of a delimiter ("comma", "tab", "semicolon"). */
export function delimiterName(d: Delimiter): string {
  return DELIMITER_NAMES[d];
}

/**
 * Reads `input` (the file's bytes, or text already decoded) as a delimited
 * table. Throws `IntakeError` (400 / 413) naming `file`, and the row and
 * column where it applies.
 */
export function readTable(
  input: Uint8Array | string,
  file: string,
  options: ReadOptions = {},
): RawTable {
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_BYTES;
  const maxColumns = options.maxColumns ?? DEFAULT_MAX_COLUMNS;
  const byteLength =
    typeof input === "string" ? Buffer.byteLength(input, "utf8") : input.byteLength;
  if (byteLength > maxBytes) {
    throw new IntakeError(413, [
      problem(
        file,
        "too_large",
        `the file has ${formatBytes(byteLength)}; the limit is ${formatBytes(maxBytes)}`,
      ),
    ]);
  }

  let text = typeof input === "string" ? input : decodeUtf8(input, file);
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const nul = text.indexOf("\u0000");
  if (nul >= 0) {
    throw new IntakeError(400, [
      problem(
        file,
        "binary_file",
        "contains NUL bytes: this is a binary file, not CSV or TSV text",
        {
          row: lineOf(text, nul),
        },
      ),
    ]);
  }
  if (text.trim() === "") {
    throw new IntakeError(400, [
      problem(file, "empty_file", "the file is empty; expected a header row and data rows"),
    ]);
  }

  const delimiter = detectDelimiter(text, file);
  const parsed = Papa.parse<string[]>(text, {
    delimiter,
    quoteChar: '"',
    escapeChar: '"',
    skipEmptyLines: false,
  });
  const quoteError = parsed.errors.find(
    (e) => e.code === "MissingQuotes" || e.code === "InvalidQuotes",
  );
  if (quoteError) {
    const row = (quoteError.row ?? 0) + 1;
    const text =
      quoteError.code === "MissingQuotes"
        ? "a quoted field is opened but never closed (a double quote is missing)"
        : "a quoted field has text after its closing quote (a quote inside a quoted field must be doubled)";
    throw new IntakeError(400, [problem(file, "bad_quotes", text, { row })]);
  }

  const records = parsed.data;
  let headerIndex = 0;
  while (headerIndex < records.length && isBlank(records[headerIndex])) headerIndex += 1;
  if (headerIndex >= records.length) {
    throw new IntakeError(400, [
      problem(file, "empty_file", "the file is empty; expected a header row and data rows"),
    ]);
  }
  if (headerIndex > 0) {
    throw new IntakeError(400, [
      problem(
        file,
        "blank_header",
        "the header must be the first row; the file starts with blank rows",
        { row: 1 },
      ),
    ]);
  }

  const header = records[0].map((h) => h.trim());
  if (header.length > maxColumns) {
    throw new IntakeError(413, [
      problem(
        file,
        "too_many_columns",
        `the header has ${header.length} columns; the limit is ${maxColumns}`,
        {
          row: 1,
        },
      ),
    ]);
  }
  const headerProblems = new ProblemList();
  const firstSeen = new Map<string, number>();
  header.forEach((name, j) => {
    if (name === "") {
      headerProblems.add(
        problem(
          file,
          "empty_header",
          `column ${j + 1} has no name; every column needs a name in the header`,
          {
            row: 1,
          },
        ),
      );
      return;
    }
    const first = firstSeen.get(name);
    if (first !== undefined) {
      headerProblems.add(
        problem(
          file,
          "duplicate_header",
          `the name appears twice in the header (columns ${first + 1} and ${j + 1}); column names must be unique`,
          { row: 1, column: name },
        ),
      );
    } else firstSeen.set(name, j);
  });
  headerProblems.throwIfAny(400);

  const rows: string[][] = [];
  const rowNumbers: number[] = [];
  const ragged = new ProblemList();
  for (let i = 1; i < records.length; i++) {
    const record = records[i];
    if (isBlank(record)) continue;
    if (record.length !== header.length) {
      ragged.add(
        problem(
          file,
          "ragged_row",
          `has ${record.length} field${record.length === 1 ? "" : "s"}; expected ${header.length} as in the header (${delimiterName(delimiter)}-separated)`,
          { row: i + 1 },
        ),
      );
      continue;
    }
    rows.push(record);
    rowNumbers.push(i + 1);
  }
  ragged.throwIfAny(400);
  if (rows.length === 0) {
    throw new IntakeError(400, [
      problem(file, "header_only", "the file has a header row but no data rows", { row: 1 }),
    ]);
  }
  return { file, delimiter, header, rows, rowNumbers };
}

function isBlank(record: readonly string[]): boolean {
  for (const cell of record) if (cell.trim() !== "") return false;
  return true;
}

const ZIP_MAGIC = [0x50, 0x4b, 0x03, 0x04];
const ZIP_EMPTY_MAGIC = [0x50, 0x4b, 0x05, 0x06];
const OLE2_MAGIC = [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1];
const GZIP_MAGIC = [0x1f, 0x8b];
const PDF_MAGIC = [0x25, 0x50, 0x44, 0x46, 0x2d];

function startsWith(bytes: Uint8Array, magic: readonly number[]): boolean {
  if (bytes.length < magic.length) return false;
  for (let i = 0; i < magic.length; i++) if (bytes[i] !== magic[i]) return false;
  return true;
}

const fatalDecoder = new TextDecoder("utf-8", { fatal: true, ignoreBOM: true });

function decodeUtf8(bytes: Uint8Array, file: string): string {
  const binary = (text: string) => new IntakeError(400, [problem(file, "binary_file", text)]);
  if (startsWith(bytes, ZIP_MAGIC) || startsWith(bytes, ZIP_EMPTY_MAGIC)) {
    throw binary(
      "is a zip archive (such as an .xlsx or .ods spreadsheet), not CSV or TSV text; export it as CSV (UTF-8)",
    );
  }
  if (startsWith(bytes, OLE2_MAGIC)) {
    throw binary(
      "is a legacy binary spreadsheet (such as .xls), not CSV or TSV text; export it as CSV (UTF-8)",
    );
  }
  if (startsWith(bytes, GZIP_MAGIC)) throw binary("is a gzip-compressed file; decompress it first");
  if (startsWith(bytes, PDF_MAGIC)) throw binary("is a PDF document, not CSV or TSV text");
  if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
    throw new IntakeError(400, [
      problem(file, "not_utf8", "is UTF-16 text; save it as UTF-8 (CSV UTF-8 or plain TSV)"),
    ]);
  }
  const nul = bytes.indexOf(0);
  if (nul >= 0) {
    throw new IntakeError(400, [
      problem(
        file,
        "binary_file",
        "contains NUL bytes: this is a binary file, not CSV or TSV text",
        {
          row: lineOfByte(bytes, nul),
        },
      ),
    ]);
  }
  try {
    return fatalDecoder.decode(bytes);
  } catch {
    const at = firstInvalidUtf8(bytes);
    throw new IntakeError(400, [
      problem(
        file,
        "not_utf8",
        `is not valid UTF-8 text (byte ${at + 1}); save it as UTF-8 (CSV UTF-8 or plain TSV)`,
        { row: lineOfByte(bytes, at) },
      ),
    ]);
  }
}

/** Offset of the first byte that does not start or continue a valid UTF-8 sequence (RFC 3629). */
function firstInvalidUtf8(b: Uint8Array): number {
  let i = 0;
  while (i < b.length) {
    const x = b[i];
    if (x < 0x80) {
      i += 1;
      continue;
    }
    let need: number;
    let min: number;
    if (x >= 0xc2 && x <= 0xdf) {
      need = 1;
      min = 0x80;
    } else if (x >= 0xe0 && x <= 0xef) {
      need = 2;
      min = 0x800;
    } else if (x >= 0xf0 && x <= 0xf4) {
      need = 3;
      min = 0x10000;
    } else return i;
    let cp = x & (need === 1 ? 0x1f : need === 2 ? 0x0f : 0x07);
    for (let k = 1; k <= need; k++) {
      const c = b[i + k];
      if (c === undefined || (c & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (c & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
    i += need + 1;
  }
  return b.length;
}

/** Physical line (1-based) of a byte offset; equals the spreadsheet row unless a quoted field spans lines. */
function lineOfByte(bytes: Uint8Array, offset: number): number {
  let line = 1;
  for (let i = 0; i < offset; i++) if (bytes[i] === 0x0a) line += 1;
  return line;
}

function lineOf(text: string, offset: number): number {
  let line = 1;
  for (let i = 0; i < offset; i++) if (text.charCodeAt(i) === 0x0a) line += 1;
  return line;
}

const CANDIDATES: readonly Delimiter[] = ["\t", ",", ";"];
const SAMPLE_RECORDS = 20;

/**
 * Detects the delimiter from the first records: a candidate must occur in
 * the header (outside quotes); a candidate that splits every sampled record
 * into the same number of fields as the header wins over one that does not;
 * among equals, the one that gives more columns; ties go tab, comma,
 * semicolon. Throws 400 "unknown delimiter" when the header holds none.
 */
function detectDelimiter(text: string, file: string): Delimiter {
  const perRecord: number[][] = [];
  let counts = [0, 0, 0];
  let nonBlank = false;
  let inQuotes = false;
  const limit = Math.min(text.length, 4 * 1024 * 1024);
  let i = 0;
  for (; i < limit && perRecord.length < SAMPLE_RECORDS; i++) {
    const ch = text.charCodeAt(i);
    if (ch === 0x22) {
      if (inQuotes && text.charCodeAt(i + 1) === 0x22) i += 1;
      else inQuotes = !inQuotes;
      nonBlank = true;
      continue;
    }
    if (inQuotes) continue;
    if (ch === 0x0a || ch === 0x0d) {
      if (ch === 0x0d && text.charCodeAt(i + 1) === 0x0a) i += 1;
      if (nonBlank || perRecord.length === 0) perRecord.push(counts);
      counts = [0, 0, 0];
      nonBlank = false;
      continue;
    }
    if (ch === 0x09) counts[0] += 1;
    else if (ch === 0x2c) counts[1] += 1;
    else if (ch === 0x3b) counts[2] += 1;
    else if (ch !== 0x20) nonBlank = true;
  }
  if ((nonBlank || perRecord.length === 0) && perRecord.length < SAMPLE_RECORDS)
    perRecord.push(counts);

  const header = perRecord[0];
  let best = -1;
  let bestConsistent = false;
  for (let c = 0; c < CANDIDATES.length; c++) {
    if (header[c] === 0) continue;
    const consistent = perRecord.every((r) => r[c] === header[c]);
    if (
      best < 0 ||
      (consistent && !bestConsistent) ||
      (consistent === bestConsistent && header[c] > header[best])
    ) {
      best = c;
      bestConsistent = consistent;
    }
  }
  if (best < 0) {
    const firstLine = text.slice(0, Math.min(text.length, 10_000)).split(/\r\n|\n|\r/, 1)[0];
    const other = ["|", ":", " "].find((s) => firstLine.includes(s));
    const seen = other ? ` (it seems to use ${other === " " ? "spaces" : `"${other}"`})` : "";
    throw new IntakeError(400, [
      problem(
        file,
        "unknown_delimiter",
        `unknown delimiter: the header row has no comma, tab or semicolon${seen}; expected a CSV or TSV table with at least two columns`,
        { row: 1 },
      ),
    ]);
  }
  return CANDIDATES[best];
}

function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(1)} kB`;
  return `${n} bytes`;
}
