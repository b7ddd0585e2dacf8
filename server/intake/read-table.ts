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
 * The table keeps the file's bytes once and, per cell, where it starts and
 * ends in them (two 32-bit offsets); a cell's text is made when asked for
 * (`cell(i, j)`). So a 200 MB table of 20 million cells is held in about
 * 360 MB instead of twenty million strings, and no text of the whole file
 * is ever made (a string that long is beyond what the engine allows).
 * Quoting follows the reading papaparse gave before (a quote opens a quoted
 * field only as its first character; white space may follow the closing
 * quote; the line ending is guessed from the first megabyte as papaparse
 * guesses it).
 *
 * Cost: one pass over the bytes to validate (UTF-8, NUL), one to split them
 * into cells: O(bytes).
 */
import { isUtf8 } from "node:buffer";
import type { Delimiter } from "../../contract/views/datasets";
import { IntakeError, ProblemList, problem } from "./errors";

/** 50 MiB: larger uploads are refused with 413 (the server's limit is the MAX_UPLOAD_MB setting). */
export const DEFAULT_MAX_BYTES = 50 * 1024 * 1024;
/** More header fields than this are refused with 413 (the server's limit is the MAX_UPLOAD_COLUMNS setting). */
export const DEFAULT_MAX_COLUMNS = 20_000;
/** The most bytes of text a table can have: cell offsets are 32-bit. */
export const MAX_TEXT_BYTES = 2 ** 32 - 1;

export interface ReadOptions {
  maxBytes?: number;
  maxColumns?: number;
  /** How the limits are named in a refusal (e.g. "MAX_UPLOAD_MB"); default: no setting is named. */
  settings?: { maxBytes?: string; maxColumns?: string };
}

export interface RawTable {
  /** The file's name as uploaded (used in every message). */
  file: string;
  delimiter: Delimiter;
  /** Header names, trimmed, unique, non-empty. */
  header: readonly string[];
  /** Data rows (blank rows removed); each has exactly `header.length` cells. */
  rowCount: number;
  /** Spreadsheet row number of each data row (header = row 1). */
  rowNumbers: readonly number[];
  /** Data row `i`'s cell in column `j`, as written. */
  cell(i: number, j: number): string;
  /** Data row `i`'s cells, as written. */
  row(i: number): string[];
}

/** Every data row's cells (for small tables and tests; a large table is read cell by cell). */
export function tableRows(table: RawTable): string[][] {
  return Array.from({ length: table.rowCount }, (_, i) => table.row(i));
}

const DELIMITER_NAMES: Record<Delimiter, string> = { ",": "comma", "\t": "tab", ";": "semicolon" };

/** Plain-word name of a delimiter ("comma", "tab", "semicolon"). */
export function delimiterName(d: Delimiter): string {
  return DELIMITER_NAMES[d];
}

const QUOTE = 0x22;

/** A table's cells as offsets into the file's bytes. */
class OffsetTable implements RawTable {
  constructor(
    readonly file: string,
    readonly delimiter: Delimiter,
    readonly header: readonly string[],
    readonly rowCount: number,
    readonly rowNumbers: readonly number[],
    private readonly bytes: Buffer,
    private readonly starts: Uint32Array,
    private readonly ends: Uint32Array,
  ) {}

  cell(i: number, j: number): string {
    const k = i * this.header.length + j;
    return cellText(this.bytes, this.starts[k], this.ends[k]);
  }

  row(i: number): string[] {
    const out: string[] = [];
    for (let j = 0; j < this.header.length; j++) out.push(this.cell(i, j));
    return out;
  }
}

/** A cell's text: a quoted cell (it starts with a quote) without its quotes, doubled quotes made single. */
function cellText(bytes: Buffer, start: number, end: number): string {
  if (start < end && bytes[start] === QUOTE) {
    const inner = bytes.toString("utf8", start + 1, end - 1);
    return inner.includes('"') ? inner.replaceAll('""', '"') : inner;
  }
  return bytes.toString("utf8", start, end);
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
  if (byteLength > maxBytes || byteLength > MAX_TEXT_BYTES) {
    const limit = Math.min(maxBytes, MAX_TEXT_BYTES);
    const raise = options.settings?.maxBytes ? `; raise it with ${options.settings.maxBytes}` : "";
    throw new IntakeError(413, [
      problem(
        file,
        "too_large",
        `the file has ${formatBytes(byteLength)}; the limit is ${formatBytes(limit)}${limit === maxBytes ? raise : ""}`,
      ),
    ]);
  }

  const bytes =
    typeof input === "string"
      ? Buffer.from(input, "utf8")
      : Buffer.from(input.buffer, input.byteOffset, input.byteLength);
  if (typeof input !== "string") checkBinary(bytes, file);
  let from = 0;
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) from = 3;
  const nul = bytes.indexOf(0, from);
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
  if (onlyWhiteSpace(bytes, from)) {
    throw new IntakeError(400, [
      problem(file, "empty_file", "the file is empty; expected a header row and data rows"),
    ]);
  }

  const sample = bytes.toString("utf8", from, Math.min(bytes.length, from + 4 * 1024 * 1024));
  const delimiter = detectDelimiter(sample, file);
  const newline = guessLineEnding(
    sample.length > 1024 * 1024 ? sample.slice(0, 1024 * 1024) : sample,
  );
  const cells = splitCells(
    bytes,
    from,
    delimiter.charCodeAt(0),
    newline,
    file,
    maxColumns,
    options,
  );
  return new OffsetTable(
    file,
    delimiter,
    cells.header,
    cells.rowNumbers.length,
    cells.rowNumbers,
    bytes,
    cells.starts,
    cells.ends,
  );
}

/** True when every byte from `from` on is ASCII white space. */
function onlyWhiteSpace(bytes: Buffer, from: number): boolean {
  for (let i = from; i < bytes.length; i++) if (!isSpace(bytes[i])) return false;
  return true;
}

/** The characters String.prototype.trim removes that are ASCII. */
function isSpace(b: number): boolean {
  return b === 0x20 || (b >= 0x09 && b <= 0x0d);
}

/** The line ending papaparse guesses from the first megabyte of text (quoted text left out). */
function guessLineEnding(text: string): "\n" | "\r\n" | "\r" {
  const input = text.replace(/"[\s\S]*?"/g, "");
  const r = input.split("\r");
  const n = input.split("\n");
  if (r.length === 1 || (n.length > 1 && n[0].length < r[0].length)) return "\n";
  let withN = 0;
  for (const part of r) if (part[0] === "\n") withN += 1;
  return withN >= r.length / 2 ? "\r\n" : "\r";
}

interface Cells {
  header: string[];
  rowNumbers: number[];
  starts: Uint32Array;
  ends: Uint32Array;
}

/**
 * Splits the bytes into records and cells (see the module note on
 * quoting), checks the header (names, limit) and that every non-blank row
 * has as many cells as the header, and keeps the cells of the data rows.
 */
function splitCells(
  bytes: Buffer,
  from: number,
  delim: number,
  newline: string,
  file: string,
  maxColumns: number,
  options: ReadOptions,
): Cells {
  const len = bytes.length;
  const nl0 = newline.charCodeAt(0);
  const nlLen = newline.length;
  const isNewline = (k: number) =>
    bytes[k] === nl0 && (nlLen === 1 || (k + 1 < len && bytes[k + 1] === 0x0a));
  // The record being read: its cells' offsets.
  let recStart = new Uint32Array(64);
  let recEnd = new Uint32Array(64);
  let fields = 0;
  let record = 0; // 0-based index of the record being read
  let header: string[] | null = null;
  let m = 0;
  let starts = new Uint32Array(0);
  let ends = new Uint32Array(0);
  const rowNumbers: number[] = [];
  const ragged = new ProblemList();

  const push = (s: number, e: number) => {
    // A header longer than the limit is refused as soon as it is; a data row keeps at most one cell
    // more than the header (enough to know it is ragged) but counts them all.
    if (header === null && fields >= maxColumns) tooManyColumns(file, null, maxColumns, options);
    if (header !== null && m > 0 && fields > m) {
      fields += 1;
      return;
    }
    if (fields === recStart.length) {
      const grow = (a: Uint32Array) => {
        const b = new Uint32Array(a.length * 2);
        b.set(a);
        return b;
      };
      recStart = grow(recStart);
      recEnd = grow(recEnd);
    }
    recStart[fields] = s;
    recEnd[fields] = e;
    fields += 1;
  };
  const blank = () => {
    for (let f = 0; f < Math.min(fields, recStart.length); f++)
      if (!blankCell(bytes, recStart[f], recEnd[f])) return false;
    return true;
  };
  const endRecord = () => {
    if (header === null) {
      if (blank()) {
        if (record === 0) {
          // A first blank record: blank_header when anything follows, else the file is empty.
          header = [];
        }
      } else {
        header = [];
        for (let f = 0; f < fields; f++)
          header.push(cellText(bytes, recStart[f], recEnd[f]).trim());
        m = fields;
        const lines = countLines(bytes, from, nl0);
        starts = new Uint32Array(Math.max(1, lines) * m);
        ends = new Uint32Array(Math.max(1, lines) * m);
      }
    } else if (m === 0) {
      // The file started with a blank record: refused below once a non-blank record shows up.
      if (!blank()) {
        throw new IntakeError(400, [
          problem(
            file,
            "blank_header",
            "the header must be the first row; the file starts with blank rows",
            { row: 1 },
          ),
        ]);
      }
    } else if (!blank()) {
      if (fields !== m) {
        ragged.add(
          problem(
            file,
            "ragged_row",
            `has ${fields} field${fields === 1 ? "" : "s"}; expected ${m} as in the header (${delimiterName(String.fromCharCode(delim) as Delimiter)}-separated)`,
            { row: record + 1 },
          ),
        );
      } else {
        const at = rowNumbers.length * m;
        if (at + m > starts.length) {
          const more = (a: Uint32Array) => {
            const b = new Uint32Array(Math.max(a.length * 2, at + m));
            b.set(a);
            return b;
          };
          starts = more(starts);
          ends = more(ends);
        }
        starts.set(recStart.subarray(0, m), at);
        ends.set(recEnd.subarray(0, m), at);
        rowNumbers.push(record + 1);
      }
    }
    fields = 0;
    record += 1;
  };
  const badQuotes = (code: "MissingQuotes" | "InvalidQuotes"): never => {
    const text =
      code === "MissingQuotes"
        ? "a quoted field is opened but never closed (a double quote is missing)"
        : "a quoted field has text after its closing quote (a quote inside a quoted field must be doubled)";
    throw new IntakeError(400, [problem(file, "bad_quotes", text, { row: record + 1 })]);
  };

  let i = from;
  for (;;) {
    if (i < len && bytes[i] === QUOTE) {
      // A quoted field: find its closing quote (a doubled quote is part of the text).
      const open = i;
      let q = open + 1;
      for (;;) {
        q = bytes.indexOf(QUOTE, q);
        if (q < 0) badQuotes("MissingQuotes");
        if (q === len - 1) break;
        if (bytes[q + 1] === QUOTE) {
          q += 2;
          continue;
        }
        break;
      }
      if (q === len - 1) {
        push(open, q + 1);
        endRecord();
        break;
      }
      let k = q + 1;
      let ended: "field" | "record" | null = null;
      for (;;) {
        if (k < len && bytes[k] === delim) {
          ended = "field";
          break;
        }
        if (k < len && isNewline(k)) {
          ended = "record";
          break;
        }
        if (k < len && isSpace(bytes[k])) k += 1;
        else break;
      }
      if (ended === null) badQuotes("InvalidQuotes");
      push(open, q + 1);
      if (ended === "field") i = k + 1;
      else {
        endRecord();
        i = k + nlLen;
      }
      continue;
    }
    // An unquoted field: up to the next delimiter or line ending.
    let k = i;
    while (k < len) {
      const b = bytes[k];
      if (b === delim || (b === nl0 && (nlLen === 1 || bytes[k + 1] === 0x0a))) break;
      k += 1;
    }
    push(i, k);
    if (k >= len) {
      endRecord();
      break;
    }
    if (bytes[k] === delim) i = k + 1;
    else {
      endRecord();
      i = k + nlLen;
    }
  }

  if (header === null || m === 0) {
    throw new IntakeError(400, [
      problem(file, "empty_file", "the file is empty; expected a header row and data rows"),
    ]);
  }
  const names: string[] = header;
  const headerProblems = new ProblemList();
  const firstSeen = new Map<string, number>();
  names.forEach((name, j) => {
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
  ragged.throwIfAny(400);
  if (rowNumbers.length === 0) {
    throw new IntakeError(400, [
      problem(file, "header_only", "the file has a header row but no data rows", { row: 1 }),
    ]);
  }
  return { header: names, rowNumbers, starts, ends };
}

function tooManyColumns(
  file: string,
  count: number | null,
  maxColumns: number,
  options: ReadOptions,
): never {
  const raise = options.settings?.maxColumns
    ? `; raise it with ${options.settings.maxColumns}`
    : "";
  throw new IntakeError(413, [
    problem(
      file,
      "too_many_columns",
      `the header has ${count === null ? `more than ${maxColumns}` : count} columns; the limit is ${maxColumns}${raise}`,
      { row: 1 },
    ),
  ]);
}

/** Lines in the bytes (at most the records: a quoted field may span lines). */
function countLines(bytes: Buffer, from: number, nl: number): number {
  let count = 1;
  let at = bytes.indexOf(nl, from);
  while (at >= 0) {
    count += 1;
    at = bytes.indexOf(nl, at + 1);
  }
  return count;
}

/** True when the cell is empty or only white space (as String.prototype.trim sees it). */
function blankCell(bytes: Buffer, start: number, end: number): boolean {
  if (start < end && bytes[start] === QUOTE) return cellText(bytes, start, end).trim() === "";
  let ascii = true;
  for (let k = start; k < end; k++) {
    const b = bytes[k];
    if (b >= 0x80) ascii = false;
    else if (!isSpace(b)) return false;
  }
  return ascii || cellText(bytes, start, end).trim() === "";
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

/** Refuses binary files, spreadsheets, UTF-16 and text that is not UTF-8, naming what the file seems to be. */
function checkBinary(bytes: Buffer, file: string): void {
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
  if (!isUtf8(bytes)) {
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
