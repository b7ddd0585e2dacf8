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

type Column = unknown[] | { f64: string } | { object: Record<string, Column> };

interface ColumnLayout {
  layout: "columns";
  n: number;
  fields: Record<string, Column>;
  absent?: Record<string, number[]>;
}

/** One region's rows as stored text (see the module note). `region` is left out of the text. */
export function encodeRegionRows(rows: readonly ParticipantDiagnostics[]): string {
  const names: string[] = [];
  const seen = new Set<string>(["region"]);
  for (const row of rows) {
    for (const name of Object.keys(row)) {
      if (!seen.has(name)) {
        seen.add(name);
        names.push(name);
      }
    }
  }
  const fields: Record<string, Column> = {};
  const absent: Record<string, number[]> = {};
  for (const name of names) {
    const values: unknown[] = new Array(rows.length);
    const missing = new Uint8Array(rows.length);
    for (let i = 0; i < rows.length; i++) {
      const value = rows[i][name];
      if (value === undefined) {
        missing[i] = 1;
        absent[name] ??= [];
        absent[name].push(i);
        values[i] = null;
      } else values[i] = value;
    }
    fields[name] = encodeColumn(values, missing);
  }
  const layout: ColumnLayout = {
    layout: "columns",
    n: rows.length,
    fields,
    ...(Object.keys(absent).length > 0 ? { absent } : {}),
  };
  return JSON.stringify(layout);
}

/**
 * One column's stored form: numbers as doubles, objects of one shape key by
 * key, anything else as JSON. `missing[i]` is 1 where row i has no value.
 */
function encodeColumn(values: unknown[], missing: Uint8Array): Column {
  let numbers = true;
  let objects = true;
  let keys: string[] | null = null;
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
    if (!objects) break;
    if (v === null || typeof v !== "object" || Array.isArray(v)) {
      objects = false;
      break;
    }
    const own = Object.keys(v);
    if (keys === null) keys = own;
    else if (own.length !== keys.length || own.some((k, j) => k !== (keys as string[])[j])) {
      objects = false;
      break;
    }
  }
  if (present === 0 || (!numbers && !objects)) return values;
  if (numbers) {
    const doubles = new Float64Array(values.length);
    for (let i = 0; i < values.length; i++) if (!missing[i]) doubles[i] = values[i] as number;
    return { f64: toLittleEndianBytes(doubles).toString("base64") };
  }
  const object: Record<string, Column> = {};
  for (const key of keys as string[])
    object[key] = encodeColumn(
      values.map((v, i) => (missing[i] ? null : (v as Record<string, unknown>)[key])),
      missing,
    );
  return { object };
}

const littleEndian = new Uint8Array(new Float64Array([1]).buffer)[7] === 0x3f;

/** The doubles' bytes, little-endian whatever the machine's order. */
function toLittleEndianBytes(doubles: Float64Array): Buffer {
  const bytes = Buffer.from(doubles.buffer, doubles.byteOffset, doubles.byteLength);
  return littleEndian ? bytes : Buffer.from(bytes).swap64();
}

/** Participant i's value in a stored column (any of its forms). */
function columnReader(column: Column, n: number): (i: number) => unknown {
  if (Array.isArray(column)) return (i) => column[i];
  if (column !== null && typeof column === "object" && "f64" in column) {
    const bytes = Buffer.from(column.f64, "base64");
    if (bytes.length !== 8 * n)
      throw new SyntaxError(`decodeRegionRows: a column of ${bytes.length} bytes for ${n} rows`);
    // A copy: aligned for Float64Array, and in the machine's order.
    const doubles = new Float64Array(n);
    const own = Buffer.from(doubles.buffer);
    bytes.copy(own);
    if (!littleEndian) own.swap64();
    return (i) => doubles[i];
  }
  if (column !== null && typeof column === "object" && "object" in column) {
    const readers = Object.entries(column.object).map(
      ([key, inner]) => [key, columnReader(inner, n)] as const,
    );
    return (i) => {
      const value: Record<string, unknown> = {};
      for (const [key, read] of readers) value[key] = read(i);
      return value;
    };
  }
  throw new SyntaxError("decodeRegionRows: a column that is none of its stored forms");
}

/** The rows of one region from their stored text (any of its forms), each with `region` set. Throws SyntaxError on text that is none of them. */
export function decodeRegionRows(text: string, region: string): ParticipantDiagnostics[] {
  const stored = JSON.parse(text) as unknown;
  if (Array.isArray(stored)) return stored as ParticipantDiagnostics[];
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
  const fields = Object.entries(layout.fields).map(
    ([name, column]) => [name, columnReader(column, n)] as const,
  );
  const absent = new Map(
    Object.entries(layout.absent ?? {}).map(([name, rows]) => [name, new Set(rows)]),
  );
  const rows: ParticipantDiagnostics[] = [];
  for (let i = 0; i < n; i++) {
    const row: Record<string, unknown> = {};
    for (const [name, read] of fields) {
      if (absent.get(name)?.has(i)) continue;
      row[name] = read(i);
      if (name === "participant") row.region = region;
    }
    if (!("region" in row)) row.region = region;
    rows.push(row as ParticipantDiagnostics);
  }
  return rows;
}
