/**
 * The stored form of a confirmed upload: the version's columns and one row
 * per participant (and session, for brain tables) of `dataset_rows`, built
 * in the intake worker thread (intake-task.ts) as CSV text that the main
 * thread hands to the database's bulk load (`COPY … FROM` a blob), chunk by
 * chunk.
 *
 * A row's numbers are one text of shortest round-trip decimals separated
 * by commas, empty where missing (`encodeNumbers` / `decodeNumbers`); its
 * categories a JSON array. Chunks hold at most CHUNK_ROWS rows and about
 * CHUNK_BYTES bytes (a longer single row is a chunk of its own), so each
 * bulk load holds the database for a few milliseconds only; the chunks lie
 * end to end in one UTF-8 buffer, which moves to the main thread without
 * copying.
 *
 * A brain table's number columns also go as they are (Float64Arrays, one
 * per slot) for their binary form (services/dataset-columns.ts).
 *
 * Pure: no database, no files. Cost: O(rows × columns).
 */
import type { IdentifierDecisionRecord, StoredColumn } from "../../contract/views/datasets";
import {
  type BrainTable,
  type ConfirmedTable,
  type ParticipantSheet,
  type RawTable,
  type SheetColumn,
  parseNumberCell,
} from "../intake";

/** Most rows in one chunk (one bulk load). */
export const CHUNK_ROWS = 1000;
/** About the most bytes of CSV in one chunk. */
export const CHUNK_BYTES = 256 * 1024;

/** The `dataset_rows` columns the CSV holds, in order. */
export const STORED_ROW_COLUMNS = [
  "dataset_id",
  "position",
  "source_row",
  "participant_id",
  "session",
  "numbers",
  "categories",
] as const;

/** What a confirmed upload stores: the version's description and its rows as CSV chunks. */
export interface EncodedVersion {
  delimiter: string;
  layout: string | null;
  idColumn: string;
  sessionColumn: string | null;
  seSuffix: string | null;
  columns: StoredColumn[];
  dropped: string[];
  decisions: IdentifierDecisionRecord[];
  rowCount: number;
  participantCount: number;
  /** The rows as CSV (UTF-8), chunk after chunk. */
  csv: Uint8Array<ArrayBuffer>;
  /** End offset (in `csv`) of each chunk. */
  chunkEnds: number[];
  /**
   * Brain tables: every number column in slot order (region values and
   * standard errors), one value per stored row in row order, NaN where
   * missing — stored in binary form (`dataset_columns`). Empty for
   * participant sheets.
   */
  numberColumns: Float64Array[];
}

interface StoredRow {
  sourceRow: number;
  participantId: string;
  session: string | null;
  numbers: string;
  categories: readonly (string | null)[];
}

interface Description {
  layout: string | null;
  idColumn: string;
  sessionColumn: string | null;
  seSuffix: string | null;
  columns: StoredColumn[];
  dropped: string[];
  participantCount: number;
  numberColumns: Float64Array[];
}

/** Numbers as shortest round-trip decimals separated by commas; empty = missing. */
export function encodeNumbers(values: ArrayLike<number>): string {
  let out = "";
  for (let k = 0; k < values.length; k++) {
    if (k > 0) out += ",";
    const x = values[k];
    if (Number.isFinite(x)) out += String(x);
  }
  return out;
}

/** The inverse of encodeNumbers for `count` numbers (NaN where missing). */
export function decodeNumbers(text: string, count: number): Float64Array {
  const out = new Float64Array(count).fill(Number.NaN);
  if (count === 0) return out;
  const parts = text.split(",");
  for (let k = 0; k < count && k < parts.length; k++) {
    const x = parseNumberCell(parts[k]);
    if (typeof x === "number") out[k] = x;
  }
  return out;
}

/** Builds the stored form of a confirmed table; `datasetId` is the version's id. */
export function encodeVersion(
  datasetId: string,
  raw: RawTable,
  confirmed: ConfirmedTable,
): EncodedVersion {
  const decisions: IdentifierDecisionRecord[] = confirmed.identifierDecisions.map((d) => ({
    ...d,
  }));
  const writer = new CsvChunks(
    datasetId,
    confirmed.kind === "brain" ? confirmed.brain.entries.length : confirmed.sheet.ids.length,
  );
  const description =
    confirmed.kind === "brain"
      ? encodeBrain(confirmed.brain, raw, writer)
      : encodeSheet(confirmed.sheet, writer);
  const { csv, chunkEnds, rowCount } = writer.finish();
  return { delimiter: raw.delimiter, ...description, decisions, rowCount, csv, chunkEnds };
}

/** A CSV field, always quoted (a quote inside doubled); null is the empty unquoted field. */
function field(text: string | null): string {
  if (text === null) return "";
  return text.includes('"') ? `"${text.replaceAll('"', '""')}"` : `"${text}"`;
}

/**
 * Collects rows as CSV and cuts them into chunks, writing each row's bytes
 * straight into one buffer: sized, once the first chunk is cut, from that
 * chunk's bytes per row (grown by a quarter when short), so the rows are
 * never held twice (as text and as bytes).
 */
class CsvChunks {
  private readonly id: string;
  private buffer = new Uint8Array(2 * CHUNK_BYTES);
  private used = 0;
  private chunkStart = 0;
  private readonly chunkEnds: number[] = [];
  private inChunk = 0;
  private rows = 0;
  private sized = false;
  private readonly encoder = new TextEncoder();

  constructor(
    datasetId: string,
    private readonly expectedRows: number,
  ) {
    this.id = field(datasetId);
  }

  add(row: StoredRow): void {
    const line = `${this.id},${this.rows},${row.sourceRow},${field(row.participantId)},${field(row.session)},${field(row.numbers)},${field(JSON.stringify(row.categories))}\n`;
    const bytes = Buffer.byteLength(line, "utf8");
    if (
      this.inChunk > 0 &&
      (this.inChunk >= CHUNK_ROWS || this.used - this.chunkStart + bytes > CHUNK_BYTES)
    )
      this.cut();
    if (this.used + bytes > this.buffer.length)
      this.resize(Math.max(this.used + bytes, Math.ceil(this.buffer.length * 1.25)));
    this.encoder.encodeInto(line, this.buffer.subarray(this.used));
    this.used += bytes;
    this.inChunk += 1;
    this.rows += 1;
  }

  finish(): { csv: Uint8Array<ArrayBuffer>; chunkEnds: number[]; rowCount: number } {
    if (this.inChunk > 0) this.chunkEnds.push(this.used);
    return {
      csv: this.buffer.subarray(0, this.used),
      chunkEnds: this.chunkEnds,
      rowCount: this.rows,
    };
  }

  private cut(): void {
    this.chunkEnds.push(this.used);
    this.chunkStart = this.used;
    this.inChunk = 0;
    if (!this.sized) {
      this.sized = true;
      const expected = Math.ceil((this.used / this.rows) * this.expectedRows * 1.02) + CHUNK_BYTES;
      if (expected > this.buffer.length) this.resize(expected);
    }
  }

  private resize(length: number): void {
    const next = new Uint8Array(length);
    next.set(this.buffer.subarray(0, this.used));
    this.buffer = next;
  }
}

/**
 * A wide table's row as stored numbers, straight from the uploaded cells
 * (already checked to be numbers or missing markers): the exact text
 * written, trimmed, with missing markers as empty. Equal, once read, to
 * encodeNumbers of the typed values, and cheaper than printing them again.
 */
function rawNumbers(raw: RawTable, i: number, columns: readonly number[]): string {
  let out = "";
  for (let k = 0; k < columns.length; k++) {
    if (k > 0) out += ",";
    const cell = raw.cell(i, columns[k]);
    const x = parseNumberCell(cell);
    if (typeof x === "number")
      out +=
        cell.length > 0 && cell.charCodeAt(0) > 32 && cell.charCodeAt(cell.length - 1) > 32
          ? cell
          : cell.trim();
  }
  return out;
}

function encodeBrain(b: BrainTable, raw: RawTable, writer: CsvChunks): Description {
  const columns: StoredColumn[] = [{ name: b.idColumn, type: "id", role: "id" }];
  if (b.sessionColumn !== null)
    columns.push({ name: b.sessionColumn, type: "category", role: "session" });
  let slot = 0;
  const valueSlots: number[] = [];
  const seSlots: (number | null)[] = [];
  const numberColumns: Float64Array[] = [];
  b.regions.forEach((region, r) => {
    numberColumns.push(b.values[r] as Float64Array);
    valueSlots.push(slot);
    columns.push({ name: region, type: "number", role: "region", region, slot: slot++ });
    if (b.standardErrors[r] !== null) {
      const seName = b.layout === "wide" ? `${region}${b.seSuffix}` : `${region}_se`;
      columns.push({ name: seName, type: "number", role: "se", region, slot });
      numberColumns.push(b.standardErrors[r] as Float64Array);
      seSlots.push(slot++);
    } else seSlots.push(null);
  });
  // Wide layout: each entry is one uploaded row, and each slot one uploaded column.
  const rawIndex = new Map(b.columns.map((c) => [c.name, c.profile.index]));
  const slotColumns = columns
    .filter((c) => c.type === "number")
    .map((c) => rawIndex.get(c.name) ?? -1);
  const fromRaw =
    b.layout === "wide" && b.entries.length === raw.rowCount && slotColumns.every((j) => j >= 0);
  const buffer = new Float64Array(slot);
  const ids = new Set<string>();
  b.entries.forEach((e, k) => {
    let numbers: string;
    if (fromRaw) numbers = rawNumbers(raw, k, slotColumns);
    else {
      for (let r = 0; r < b.regions.length; r++) {
        buffer[valueSlots[r]] = b.values[r][k];
        const s = seSlots[r];
        if (s !== null) buffer[s] = (b.standardErrors[r] as Float64Array)[k];
      }
      numbers = encodeNumbers(buffer);
    }
    ids.add(e.id);
    writer.add({
      sourceRow: e.row,
      participantId: e.id,
      session: e.session,
      numbers,
      categories: [],
    });
  });
  return {
    layout: b.layout,
    idColumn: b.idColumn,
    sessionColumn: b.sessionColumn,
    seSuffix: b.layout === "wide" ? b.seSuffix : null,
    columns,
    dropped: b.columns.filter((c) => c.role === "dropped").map((c) => c.name),
    participantCount: ids.size,
    numberColumns,
  };
}

function encodeSheet(s: ParticipantSheet, writer: CsvChunks): Description {
  const columns: StoredColumn[] = [{ name: s.idColumn, type: "id", role: "id" }];
  let numberSlot = 0;
  let categorySlot = 0;
  for (const c of s.columns) {
    columns.push({
      name: c.name,
      type: c.type,
      role: "variable",
      slot: c.type === "number" ? numberSlot++ : categorySlot++,
    });
  }
  const numberColumns = s.columns.filter(
    (c): c is Extract<SheetColumn, { type: "number" }> => c.type === "number",
  );
  const categoryColumns = s.columns.filter(
    (c): c is Extract<SheetColumn, { type: "category" }> => c.type === "category",
  );
  const buffer = new Float64Array(numberColumns.length);
  s.ids.forEach((id, k) => {
    numberColumns.forEach((c, j) => {
      buffer[j] = c.values[k] ?? Number.NaN;
    });
    writer.add({
      sourceRow: s.rows[k],
      participantId: id,
      session: null,
      numbers: encodeNumbers(buffer),
      categories: categoryColumns.map((c) => c.values[k]),
    });
  });
  return {
    layout: null,
    idColumn: s.idColumn,
    sessionColumn: null,
    seSuffix: null,
    columns,
    dropped: [...s.dropped],
    participantCount: s.ids.length,
    numberColumns: [],
  };
}
