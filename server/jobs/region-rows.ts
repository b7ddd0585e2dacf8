/**
 * The stored form of one region's per-participant diagnostics
 * (`fit_regions.participants`): JSON text, column by column.
 *
 * A row-by-row array repeats every field name for every participant; at
 * 400 regions × 500 participants that was ~40 % of the ~100 MB a fit
 * stored, and storing runs on the request thread. By columns:
 *
 *   { "layout": "columns", "n": 500,
 *     "fields": { "participant": ["sub-0001", …], "leverage": { "f64": "…" },
 *                 "dfbetas": { "object": { "(intercept)": { "f64": "…" }, … } }, … },
 *     "absent": { "dffits": [17, 230] } }
 *
 * A field's column is one of:
 * - an array: `column[i]` is participant i's value as JSON;
 * - `{ "f64": base64 }`: every value is a number, stored as its 8 bytes
 *   (IEEE 754 double, little-endian) in base64 — exact, about half the text
 *   of JSON's decimal form, and several times faster to write and read: at
 *   20,000 participants, turning a region's ~300,000 numbers into decimal
 *   text was the largest single cost of a fit's regions before its test;
 * - `{ "object": { key: column, … } }`: every value is an object with the
 *   same keys in the same order (a coefficient each, as dfbetas), each key a
 *   column of its own.
 * `absent` lists the rows that have no such field at all (as opposed to
 * null); in an `f64` column their slots hold 0 and are not read. The
 * region's name, the same in every row, is not repeated: the row's `region`
 * column holds it. Text that is a JSON array is the earlier row-by-row form,
 * and columns that are all arrays the earlier column form; both are read as
 * they are.
 *
 * Pure; encode runs in the fit's worker thread, decode in the region
 * detail. Cost O(rows × fields).
 */
import type { ParticipantDiagnostics } from "../../contract/spec";
import { nullIfNaN } from "../stats/diagnostics";
import type { FieldColumn, ParticipantRows } from "../stats/fit/participant-rows";
import type { RegionPlot } from "../../contract/views/fits";
import type { RegionPlotByColumn } from "../stats/region-plot";
import type { RegionRowInput } from "./fit-jobs";

type Column = unknown[] | { f64: string } | { object: Record<string, Column> };

interface ColumnLayout {
  layout: "columns";
  n: number;
  fields: Record<string, Column>;
  absent?: Record<string, number[]>;
}

/** One region's rows as stored text (see the module note). `region` is left out of the text. */
export function encodeRegionRows(rows: readonly ParticipantDiagnostics[]): string {
  const { names, columns } = byKey(rows, { field: "region" });
  const fields: Record<string, Column> = {};
  const absent: Record<string, number[]> = {};
  names.forEach((name, k) => {
    const values = columns[k];
    const missing = new Uint8Array(rows.length);
    for (let i = 0; i < values.length; i++) {
      if (values[i] !== undefined) continue;
      missing[i] = 1;
      absent[name] ??= [];
      absent[name].push(i);
      values[i] = null;
    }
    fields[name] = encodeColumn(values, missing);
  });
  const text = new PieceText();
  layoutText(text, rows.length, names, fields, absent);
  return text.toString();
}

/**
 * One region's rows as stored text: the text `encodeRegionRows(rows.rows())`
 * makes, written field by field — without an object per row — for rows the
 * diagnose stage hands on by column (every row has every field, so none is
 * absent).
 */
export function encodeParticipantRows(rows: ParticipantRows): string {
  const text = new PieceText();
  writeParticipantRows(text, rows);
  return text.toString();
}

function writeParticipantRows(text: PieceText, rows: ParticipantRows): void {
  if (!rows.byColumn) {
    text.push(encodeRegionRows(rows.rows()));
    return;
  }
  const names = rows.names();
  const fields: Record<string, WrittenColumn> = {};
  for (const name of names) fields[name] = fieldColumn(rows.field(name), rows.n);
  layoutText(text, rows.n, names, fields, {});
}

/**
 * One region's stored texts — its rows (`encodeParticipantRows`) and its
 * plot data (`encodeRegionPlotColumns`) — as UTF-8 bytes in one buffer,
 * which the fit thread hands on without a copy (`regionRowsOf` reads them
 * back). At 20,000 participants, joining the ~3.5 MB of text into strings
 * and copying them into and out of a message was a tenth of a region's
 * time before its test.
 */
export interface RegionTextBytes {
  bytes: Uint8Array;
  /** the rows' text is bytes [0, rowsLength), the plot's the rest */
  rowsLength: number;
  /** whether the region has a plot (false: no plot text, stored as null) */
  plot: boolean;
  /** every byte is ASCII (read back as Latin-1, several times faster than UTF-8) */
  ascii: boolean;
}

/** A region's rows and plot data as one buffer of their stored texts (see RegionTextBytes). */
export function encodeRegionTexts(
  rows: ParticipantRows,
  plot: RegionPlotByColumn | { error: string } | null,
): RegionTextBytes {
  const text = new PieceText();
  writeParticipantRows(text, rows);
  const rowsLength = text.byteLength;
  if (plot) writeRegionPlotColumns(text, plot);
  return { bytes: text.toBytes(), rowsLength, plot: plot !== null, ascii: text.ascii };
}

/** A region's position, name and texts (a fit thread's region message, `encodeRegionTexts`' buffer) as stored. */
export function regionRowsOf(
  message: { position: number; region: string } & RegionTextBytes,
): RegionRowInput {
  const { bytes, rowsLength } = message;
  const buffer = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const encoding = message.ascii ? "latin1" : "utf8";
  return {
    position: message.position,
    region: message.region,
    participants: buffer.toString(encoding, 0, rowsLength),
    plot: message.plot ? buffer.toString(encoding, rowsLength) : null,
  };
}

/**
 * Text written piece by piece and joined once, as a string or as UTF-8
 * bytes. Pieces known to be ASCII (base64, the layout's own syntax) are
 * not scanned for their byte length.
 */
class PieceText {
  private pieces: string[] = [];
  byteLength = 0;
  ascii = true;

  /** Any text (JSON of names and labels may hold any character). */
  push(piece: string): void {
    const bytes = Buffer.byteLength(piece, "utf8");
    if (bytes !== piece.length) this.ascii = false;
    this.pieces.push(piece);
    this.byteLength += bytes;
  }

  /** Text of ASCII characters only. */
  pushAscii(piece: string): void {
    this.pieces.push(piece);
    this.byteLength += piece.length;
  }

  toString(): string {
    return this.pieces.join("");
  }

  toBytes(): Uint8Array {
    const out = Buffer.allocUnsafeSlow(this.byteLength);
    const encoding = this.ascii ? "latin1" : "utf8";
    let at = 0;
    for (const piece of this.pieces) at += out.write(piece, at, encoding);
    if (at !== this.byteLength) throw new Error("region text: the pieces' byte length changed");
    return new Uint8Array(out.buffer, out.byteOffset, out.byteLength);
  }
}

/** A column about to be written: a stored form, or the JSON text of an array column already written. */
type WrittenColumn =
  | unknown[]
  | { f64: string }
  | { json: string }
  | { object: Record<string, WrittenColumn> };

/** A field's stored form, as `encodeColumn` gives it for the same values with none missing. */
function fieldColumn(column: FieldColumn, n: number): WrittenColumn {
  if ("values" in column) return encodeColumn(column.values, new Uint8Array(n));
  if ("json" in column) return column;
  if ("object" in column) {
    const object: Record<string, WrittenColumn> = {};
    for (const { key, column: inner } of column.object) object[key] = fieldColumn(inner, n);
    return { object };
  }
  const { numbers, nullable } = column;
  // A null among numbers makes the column a plain array (NaN stands for null where nullable).
  if (nullable && hasNaN(numbers)) return Array.from(numbers, nullIfNaN);
  return f64Column(numbers);
}

/** Whether any of the doubles is NaN (a plain loop: `some(Number.isNaN)` took a call per value). */
function hasNaN(doubles: Float64Array): boolean {
  for (let i = 0; i < doubles.length; i++) if (Number.isNaN(doubles[i])) return true;
  return false;
}

/** A column of doubles in its stored form: their little-endian bytes in base64. */
function f64Column(doubles: Float64Array): { f64: string } {
  return { f64: toLittleEndianBytes(doubles).toString("base64") };
}

/**
 * The text JSON.stringify would make of the layout, written piece by
 * piece so that the base64 of the doubles (most of it, and never in need of
 * escaping) is neither scanned nor copied again before the text is joined.
 */
function layoutText(
  text: PieceText,
  n: number,
  names: readonly string[],
  fields: Record<string, WrittenColumn>,
  absent: Record<string, number[]>,
): void {
  text.pushAscii(`{"layout":"columns","n":${n},"fields":{`);
  names.forEach((name, k) => {
    text.push(`${k > 0 ? "," : ""}${JSON.stringify(name)}:`);
    columnText(text, fields[name]);
  });
  text.pushAscii("}");
  if (Object.keys(absent).length > 0) text.push(`,"absent":${JSON.stringify(absent)}`);
  text.pushAscii("}");
}

/** JSON.stringify(column), with a column of doubles' base64 put in as it is. */
function columnText(text: PieceText, column: WrittenColumn): void {
  if (Array.isArray(column)) text.push(JSON.stringify(column));
  else if ("json" in column) text.push(column.json);
  else if ("f64" in column) {
    text.pushAscii('{"f64":"');
    text.pushAscii(column.f64);
    text.pushAscii('"}');
  } else {
    text.pushAscii('{"object":{');
    Object.keys(column.object).forEach((key, k) => {
      text.push(`${k > 0 ? "," : ""}${JSON.stringify(key)}:`);
      columnText(text, column.object[key]);
    });
    text.pushAscii("}}");
  }
}

/**
 * The fields of `objects` as columns, in one pass: `columns[k][i]` is
 * objects[i][names[k]], undefined where that object has no such field (or
 * is not an object); names in the order first met. `sameShape`: every
 * object has exactly `names`, in that order. Reading each object's own
 * fields in turn (for…in, with the column of the previous object's k-th
 * field tried first) costs far less than reading every object once per
 * field name: at 20,000 participants that made most of a region's
 * encoding time. Rows marked in `skip.rows` are passed over (their
 * slots stay undefined), as is the field `skip.field`.
 */
function byKey(
  objects: readonly unknown[],
  skip: { field?: string; rows?: Uint8Array } = {},
): { names: string[]; columns: unknown[][]; sameShape: boolean } {
  const n = objects.length;
  const names: string[] = [];
  const columns: unknown[][] = [];
  const index = new Map<string, number>();
  let sameShape = true;
  let first = true;
  for (let i = 0; i < n; i++) {
    if (skip.rows?.[i]) continue;
    const object = objects[i];
    if (object === null || typeof object !== "object") {
      sameShape = false;
      continue;
    }
    const record = object as Record<string, unknown>;
    let k = 0;
    for (const name in record) {
      if (name === skip.field) continue;
      let at = k < names.length && names[k] === name ? k : index.get(name);
      if (at === undefined) {
        at = names.length;
        if (!first) sameShape = false;
        names.push(name);
        columns.push(new Array(n).fill(undefined));
        index.set(name, at);
      } else if (at !== k) sameShape = false;
      columns[at][i] = record[name];
      k++;
    }
    if (k !== names.length) sameShape = false;
    first = false;
  }
  return { names, columns, sameShape };
}

/**
 * One column's stored form: numbers as doubles, objects of one shape key by
 * key, anything else as JSON. `missing[i]` is 1 where row i has no value.
 */
function encodeColumn(values: unknown[], missing: Uint8Array): Column {
  let numbers = true;
  let objects = true;
  let present = 0;
  for (let i = 0; i < values.length; i++) {
    if (missing[i]) continue;
    present++;
    const v = values[i];
    if (typeof v === "number") {
      objects = false;
      continue;
    }
    numbers = false;
    if (v === null || typeof v !== "object" || Array.isArray(v)) {
      objects = false;
      break;
    }
  }
  if (present === 0 || (!numbers && !objects)) return values;
  if (numbers) {
    const doubles = new Float64Array(values.length);
    for (let i = 0; i < values.length; i++) if (!missing[i]) doubles[i] = values[i] as number;
    return f64Column(doubles);
  }
  // Objects only: stored key by key when every present one has the same fields in the same order.
  const shape = byKey(values, { rows: missing });
  if (!shape.sameShape) return values;
  const object: Record<string, Column> = {};
  shape.names.forEach((key, k) => {
    const inner = shape.columns[k];
    for (let i = 0; i < inner.length; i++) if (missing[i]) inner[i] = null;
    object[key] = encodeColumn(inner, missing);
  });
  return { object };
}

const littleEndian = new Uint8Array(new Float64Array([1]).buffer)[7] === 0x3f;

/** The doubles' bytes, little-endian whatever the machine's order. */
function toLittleEndianBytes(doubles: Float64Array): Buffer {
  const bytes = Buffer.from(doubles.buffer, doubles.byteOffset, doubles.byteLength);
  return littleEndian ? bytes : Buffer.from(bytes).swap64();
}

/** A stored column read back: participant i's value, and all values as doubles when it was stored as doubles. */
interface DecodedColumn {
  at: (i: number) => unknown;
  doubles: Float64Array | null;
}

/** A stored column (any of its forms) read back. */
function decodeColumn(column: Column, n: number): DecodedColumn {
  if (Array.isArray(column)) return { at: (i) => column[i], doubles: null };
  if (column !== null && typeof column === "object" && "f64" in column) {
    const bytes = Buffer.from(column.f64, "base64");
    if (bytes.length !== 8 * n)
      throw new SyntaxError(`decodeRegionRows: a column of ${bytes.length} bytes for ${n} rows`);
    // A copy: aligned for Float64Array, and in the machine's order.
    const doubles = new Float64Array(n);
    const own = Buffer.from(doubles.buffer);
    bytes.copy(own);
    if (!littleEndian) own.swap64();
    return { at: (i) => doubles[i], doubles };
  }
  if (column !== null && typeof column === "object" && "object" in column) {
    const readers = Object.entries(column.object).map(
      ([key, inner]) => [key, decodeColumn(inner, n).at] as const,
    );
    return {
      at: (i) => {
        const value: Record<string, unknown> = {};
        for (const [key, read] of readers) value[key] = read(i);
        return value;
      },
      doubles: null,
    };
  }
  throw new SyntaxError("decodeRegionRows: a column that is none of its stored forms");
}

/** One region's rows read back by field, without making an object per row. */
export interface RegionRowColumns {
  n: number;
  /** Field names in their stored order (without `region`). */
  names: string[];
  /** Row i's value of field `name`; undefined where the row has no such field. */
  value(name: string, i: number): unknown;
  /**
   * Field `name` of every row as doubles: a row whose value is not a
   * number (null, absent, text) reads NaN. Made once per field.
   */
  numbers(name: string): Float64Array;
}

/** The rows of one region from their stored text (any of its forms), by field. Throws SyntaxError on text that is none of them. */
export function decodeRegionColumns(text: string): RegionRowColumns {
  const stored = JSON.parse(text) as unknown;
  return Array.isArray(stored)
    ? rowArrayColumns(stored as Record<string, unknown>[])
    : layoutColumns(stored);
}

/** The column layout (see the module note), read by field. */
function layoutColumns(stored: unknown): RegionRowColumns {
  const layout = stored as Partial<ColumnLayout> | null;
  if (
    !layout ||
    layout.layout !== "columns" ||
    typeof layout.n !== "number" ||
    typeof layout.fields !== "object" ||
    layout.fields === null
  ) {
    throw new SyntaxError("decodeRegionRows: neither a row array nor a column layout");
  }
  const n = layout.n;
  const columns = new Map(
    Object.entries(layout.fields).map(([name, column]) => [name, decodeColumn(column, n)]),
  );
  const absent = new Map(
    Object.entries(layout.absent ?? {}).map(([name, rows]) => [name, new Set(rows)]),
  );
  const value = (name: string, i: number) =>
    absent.get(name)?.has(i) ? undefined : columns.get(name)?.at(i);
  // The decoded doubles are this reader's own copy, and `value` never reads an absent row's slot.
  const stored64 = (name: string) => {
    const doubles = columns.get(name)?.doubles;
    if (!doubles) return null;
    for (const i of absent.get(name) ?? []) doubles[i] = Number.NaN;
    return doubles;
  };
  return { n, names: [...columns.keys()], value, numbers: numbersOnce(n, stored64, value) };
}

/** The earlier row-by-row form, read by field. */
function rowArrayColumns(rows: Record<string, unknown>[]): RegionRowColumns {
  const { names, columns } = byKey(rows, { field: "region" });
  const index = new Map(names.map((name, k) => [name, k]));
  const value = (name: string, i: number) => {
    const k = index.get(name);
    return k === undefined ? undefined : columns[k][i];
  };
  return { n: rows.length, names, value, numbers: numbersOnce(rows.length, () => null, value) };
}

/** `numbers(name)` for RegionRowColumns: the stored doubles when there are, else read value by value; kept per field. */
function numbersOnce(
  n: number,
  stored: (name: string) => Float64Array | null,
  value: (name: string, i: number) => unknown,
): (name: string) => Float64Array {
  const made = new Map<string, Float64Array>();
  return (name) => {
    let out = made.get(name);
    if (!out) {
      out = stored(name) ?? readNumbers(n, name, value);
      made.set(name, out);
    }
    return out;
  };
}

function readNumbers(
  n: number,
  name: string,
  value: (name: string, i: number) => unknown,
): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = value(name, i);
    out[i] = typeof v === "number" ? v : Number.NaN;
  }
  return out;
}

/** The rows of one region from their stored text (any of its forms), each with `region` set. Throws SyntaxError on text that is none of them. */
export function decodeRegionRows(text: string, region: string): ParticipantDiagnostics[] {
  const stored = JSON.parse(text) as unknown;
  if (Array.isArray(stored)) return stored as ParticipantDiagnostics[];
  const columns = layoutColumns(stored);
  const rows: ParticipantDiagnostics[] = [];
  for (let i = 0; i < columns.n; i++) {
    const row: Record<string, unknown> = {};
    for (const name of columns.names) {
      const value = columns.value(name, i);
      if (value === undefined) continue;
      row[name] = value;
      if (name === "participant") row.region = region;
    }
    if (!("region" in row)) row.region = region;
    rows.push(row as ParticipantDiagnostics);
  }
  return rows;
}

/**
 * A region's plot data as stored (`fit_regions.plot`). Its points are the
 * region's rows' participants in the rows' order (the fit task draws the
 * plot for exactly those), so they are stored by position, without ids,
 * each of x, group and y as a column of the forms above:
 *
 *   { "layout": "columns", "n": 500, "x": { "f64": "…" }, "group": null,
 *     "y": { "f64": "…" }, "band": …, "groupMeans": …, "notes": […] }
 *
 * (a column of nulls only is written as null)
 * At 20,000 participants that is about a fifth of the text of the points
 * one object each, and reads back several times faster. A plot whose points
 * are not the rows' participants in order, or that failed (`{ error }`), is
 * stored as plain JSON, as every plot was before; both forms read back.
 */
export function encodeRegionPlot(
  plot: RegionPlot | { error: string },
  participants: readonly string[],
): string {
  if (
    "error" in plot ||
    plot.points.length !== participants.length ||
    plot.points.some((p, i) => p.participant !== participants[i])
  )
    return JSON.stringify(plot);
  const { points, band, groupMeans, notes } = plot;
  return encodeRegionPlotColumns({
    x: points.map((p) => p.x),
    group: points.map((p) => p.group),
    y: Float64Array.from(points, (p) => p.y),
    band,
    groupMeans,
    notes,
  });
}

/**
 * A plot by column (`regionPlotColumns`, whose points are the region's rows'
 * participants in the rows' order) as stored: the text `encodeRegionPlot`
 * makes of the same plot with a point object each, written without them.
 */
export function encodeRegionPlotColumns(plot: RegionPlotByColumn | { error: string }): string {
  const text = new PieceText();
  writeRegionPlotColumns(text, plot);
  return text.toString();
}

function writeRegionPlotColumns(
  text: PieceText,
  plot: RegionPlotByColumn | { error: string },
): void {
  if ("error" in plot) {
    text.push(JSON.stringify(plot));
    return;
  }
  const n = plot.y.length;
  const none = new Uint8Array(n);
  // A column of nulls only (x of a two-group plot, group of most) is written as null.
  const column = (values: ArrayLike<unknown> | null) => {
    if (values === null || n === 0) text.pushAscii("null");
    else if (values instanceof Float64Array) columnText(text, f64Column(values));
    else {
      const all = Array.from(values);
      if (all.every((v) => v === null)) text.pushAscii("null");
      else columnText(text, encodeColumn(all, none));
    }
  };
  text.pushAscii(`{"layout":"columns","n":${n},"x":`);
  column(plot.x);
  text.pushAscii(`,"group":`);
  column(plot.group);
  text.pushAscii(`,"y":`);
  column(plot.y);
  const { band, groupMeans, notes } = plot;
  text.push(`,${JSON.stringify({ band, groupMeans, notes }).slice(1)}`);
}

/** A region's plot data read back, its points lined up with the region's rows (see encodeRegionPlot). */
export interface RegionPlotColumns {
  /** The plot besides its points (band, group means, notes), or `{ error }`. */
  head: Omit<RegionPlot, "points"> | { error: string };
  /** Row i's x, group and y; NaN / null where the plot has no point for that row. */
  x: Float64Array;
  group: (string | null)[];
  y: Float64Array;
}

/** The stored plot text (either form) lined up with the rows' participant ids. Throws SyntaxError on text that is neither. */
export function decodeRegionPlot(text: string, participants: readonly string[]): RegionPlotColumns {
  const stored = JSON.parse(text) as Record<string, unknown> | null;
  if (stored === null || typeof stored !== "object" || Array.isArray(stored))
    throw new SyntaxError("decodeRegionPlot: not a plot");
  const n = participants.length;
  const x = new Float64Array(n).fill(Number.NaN);
  const y = new Float64Array(n).fill(Number.NaN);
  const group: (string | null)[] = new Array(n).fill(null);
  if ("error" in stored) return { head: stored as { error: string }, x, group, y };
  if (stored.layout === "columns") {
    const { layout: _l, n: count, x: xs, group: gs, y: ys, ...head } = stored;
    if (typeof count !== "number") throw new SyntaxError("decodeRegionPlot: a layout without n");
    const [atX, atGroup, atY] = [xs, gs, ys].map((c) =>
      c === null ? () => null : decodeColumn(c as Column, count).at,
    );
    // By position: the plot's points are the rows' participants in order (see encodeRegionPlot).
    if (count === n)
      for (let i = 0; i < n; i++) {
        const xi = atX(i);
        const gi = atGroup(i);
        const yi = atY(i);
        if (typeof xi === "number") x[i] = xi;
        if (typeof gi === "string") group[i] = gi;
        if (typeof yi === "number") y[i] = yi;
      }
    return { head: head as Omit<RegionPlot, "points">, x, group, y };
  }
  const { points, ...head } = stored as unknown as RegionPlot;
  if (!Array.isArray(points)) throw new SyntaxError("decodeRegionPlot: neither plot form");
  const position = new Map(participants.map((id, i) => [id, i]));
  for (const p of points) {
    const i = position.get(p.participant);
    if (i === undefined) continue;
    if (typeof p.x === "number") x[i] = p.x;
    group[i] = p.group ?? null;
    if (typeof p.y === "number") y[i] = p.y;
  }
  return { head, x, group, y };
}
