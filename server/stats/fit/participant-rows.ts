/**
 * One region's participants' rows as the diagnose stage hands them on: by
 * column, without an object per participant. At 20,000 participants a
 * region's rows as objects (each with its flags and its DFBETAS) were five
 * objects per participant, made only to be read back field by field when
 * stored; most of a region's time before its test went to making and
 * collecting them. `row(i)` and `rows()` make the contract's objects
 * (`ParticipantDiagnostics`) for the callers that want them, field for
 * field as the diagnose stage always made them; `field(name)` reads one
 * field of every row for the stored form (server/jobs/region-rows.ts).
 *
 * The fields, and their order in a row, live here only.
 */
import type { ParticipantDiagnostics } from "../../../contract/spec";
import { type DiagnosticColumns, flagsOf, nullIfNaN } from "../diagnostics";
import { findNonFinite, nonFiniteError } from "./common";

/**
 * One field of every row: numbers (NaN for null where `nullable`), any
 * values, the JSON text of the array of its values (written without
 * making them), or objects of one shape key by key.
 */
export type FieldColumn =
  | { numbers: Float64Array; nullable: boolean }
  | { values: unknown[] }
  | { json: string }
  | { object: { key: string; column: FieldColumn }[] };

/** A region's rows: by column from the diagnose stage, or rows made as objects. */
export type ParticipantRows = ColumnRows | ObjectRows;

interface RowsCommon {
  region: string;
  n: number;
  /** the participants, in the rows' order */
  ids: readonly string[];
  /** row i as the contract's object */
  row(i: number): ParticipantDiagnostics;
  /** every row as the contract's object */
  rows(): ParticipantDiagnostics[];
  /**
   * The first number that is not finite, in row order then field order,
   * as a path from the rows (`[i].field…`), or null when there is none.
   * Nulls are not numbers.
   */
  firstNonFinite(): string | null;
}

/** Rows the diagnose stage made, by column: every row has every field. */
export interface ColumnRows extends RowsCommon {
  byColumn: true;
  /** the participants' positions in the fit's roster, in the rows' order */
  positions: readonly number[];
  /** field names in a row's order (without `region`) */
  names(): string[];
  /** field `name` of every row */
  field(name: string): FieldColumn;
}

/** Rows made as objects (a kind without diagnostics): stored as objects are. */
export interface ObjectRows extends RowsCommon {
  byColumn: false;
}

/** What the diagnose stage has of a region's rows: its diagnostics, the design's column names and the values. */
export interface DiagnosedRegion {
  region: string;
  ids: readonly string[];
  /** the participants' positions in the fit's roster, in the rows' order */
  positions: readonly number[];
  diagnostics: DiagnosticColumns;
  /** the design's column names, one DFBETAS each */
  coefficientNames: readonly string[];
  value: ArrayLike<number>;
  fitted: ArrayLike<number>;
  residual: ArrayLike<number>;
}

/** A numeric field: its name, every row's value, and whether NaN stands for null there. */
type NumericField = [name: string, values: ArrayLike<number>, nullable: boolean];

/** A diagnosed region's rows, by column. */
export function diagnosedRows(d: DiagnosedRegion): ColumnRows {
  const c = d.diagnostics;
  const names = d.coefficientNames;
  const p = names.length;
  const dfbetasOf = (i: number): Record<string, number | null> | null => {
    if (!c.hasDfbetas[i]) return null;
    const out: Record<string, number | null> = {};
    for (let j = 0; j < p; j++) out[names[j]] = nullIfNaN(c.dfbetas[i * p + j]);
    return out;
  };
  const row = (i: number): ParticipantDiagnostics => ({
    participant: d.ids[i],
    region: d.region,
    leverage: c.leverage[i],
    studentizedResidual: nullIfNaN(c.externalStudentized[i]),
    cooksDistance: nullIfNaN(c.cooksDistance[i]),
    flags: flagsOf(c.flags[i]),
    internalStudentizedResidual: nullIfNaN(c.internalStudentized[i]),
    dffits: nullIfNaN(c.dffits[i]),
    dfbetas: dfbetasOf(i),
    mahalanobis: c.mahalanobis ? c.mahalanobis[i] : null,
    value: d.value[i],
    fitted: d.fitted[i],
    residual: d.residual[i],
  });
  const n = d.ids.length;
  const numbers = (values: ArrayLike<number>, nullable = false): FieldColumn => ({
    numbers: values instanceof Float64Array ? values : Float64Array.from(values),
    nullable,
  });
  const field = (name: string): FieldColumn => {
    switch (name) {
      case "participant":
        // The text of the ids' array, as encodeColumn writes an array of strings: once per ids list.
        return { json: idsJson(d.ids) };
      case "leverage":
        return numbers(c.leverage);
      case "studentizedResidual":
        return numbers(c.externalStudentized, true);
      case "cooksDistance":
        return numbers(c.cooksDistance, true);
      case "flags": {
        // Eight possible lists, each written once.
        const texts = Array.from({ length: 8 }, (_, bits) => JSON.stringify(flagsOf(bits)));
        const parts = new Array<string>(n);
        for (let i = 0; i < n; i++) parts[i] = texts[c.flags[i]];
        return { json: `[${parts.join(",")}]` };
      }
      case "internalStudentizedResidual":
        return numbers(c.internalStudentized, true);
      case "dffits":
        return numbers(c.dffits, true);
      case "dfbetas": {
        if (!c.hasDfbetas.every((has) => has === 1)) return { values: rowsField(n, dfbetasOf) };
        // A coefficient's key as an object made like a row's keeps it (names repeated: the last one's value).
        const keys = Object.keys(dfbetasOf(0) as object);
        return {
          object: keys.map((key) => {
            const j = names.lastIndexOf(key);
            const column = new Float64Array(n);
            for (let i = 0; i < n; i++) column[i] = c.dfbetas[i * p + j];
            return { key, column: { numbers: column, nullable: true } };
          }),
        };
      }
      case "mahalanobis":
        return c.mahalanobis ? numbers(c.mahalanobis) : { values: new Array(n).fill(null) };
      case "value":
        return numbers(d.value);
      case "fitted":
        return numbers(d.fitted);
      case "residual":
        return numbers(d.residual);
      default:
        return { values: rowsField(n, (i) => row(i)[name]) };
    }
  };
  // The numeric fields in a row's order; the others (participant, flags) hold no numbers.
  const checked: NumericField[] = [
    ["leverage", c.leverage, false],
    ["studentizedResidual", c.externalStudentized, true],
    ["cooksDistance", c.cooksDistance, true],
    ["internalStudentizedResidual", c.internalStudentized, true],
    ["dffits", c.dffits, true],
  ];
  const after: NumericField[] = [
    ...(c.mahalanobis ? [["mahalanobis", c.mahalanobis, false] as NumericField] : []),
    ["value", d.value, false],
    ["fitted", d.fitted, false],
    ["residual", d.residual, false],
  ];
  // The earliest row with a bad number, and in it the first field in a row's order: each field
  // scanned on its own up to the best row found so far (a later field wins only an earlier row).
  const firstNonFinite = (): string | null => {
    let row = n;
    let at = "";
    const scan = ([name, values, nullable]: NumericField) => {
      for (let i = 0; i < row; i++) {
        const v = values[i];
        if (!(Number.isFinite(v) || (nullable && Number.isNaN(v)))) {
          row = i;
          at = name;
          return;
        }
      }
    };
    for (const field of checked) scan(field);
    const dfbetasAt = firstInfinite(c.dfbetas, c.hasDfbetas, p, row);
    if (dfbetasAt !== null) {
      row = dfbetasAt.row;
      at = `dfbetas.${names[dfbetasAt.column]}`;
    }
    for (const field of after) scan(field);
    return row < n ? `[${row}].${at}` : null;
  };
  return {
    byColumn: true,
    region: d.region,
    n,
    ids: d.ids,
    positions: d.positions,
    firstNonFinite,
    row,
    rows: () => Array.from({ length: n }, (_, i) => row(i)),
    names: () => (n === 0 ? [] : Object.keys(row(0)).filter((name) => name !== "region")),
    field,
  };
}

/** JSON text of a list of participant ids, kept per list (regions on the same rows share one: see diagnose.ts). */
function idsJson(ids: readonly string[]): string {
  let text = idsTexts.get(ids);
  if (text === undefined) {
    text = JSON.stringify(ids);
    idsTexts.set(ids, text);
  }
  return text;
}

const idsTexts = new WeakMap<readonly string[], string>();

/** The first ±Infinity among the rows before `rows` that have DFBETAS (NaN stands for null). */
function firstInfinite(
  values: Float64Array,
  has: Uint8Array,
  p: number,
  rows: number,
): { row: number; column: number } | null {
  for (let i = 0; i < rows; i++) {
    if (!has[i]) continue;
    for (let j = 0; j < p; j++) {
      const v = values[i * p + j];
      if (!(Number.isFinite(v) || Number.isNaN(v))) return { row: i, column: j };
    }
  }
  return null;
}

function rowsField(n: number, at: (i: number) => unknown): unknown[] {
  const out = new Array(n);
  for (let i = 0; i < n; i++) out[i] = at(i);
  return out;
}

/** Rows made as objects (a kind without diagnostics, or rows read back), as `ParticipantRows`. */
export function objectRows(region: string, rows: ParticipantDiagnostics[]): ObjectRows {
  return {
    region,
    n: rows.length,
    ids: rows.map((r) => r.participant),
    row: (i) => rows[i],
    rows: () => rows,
    byColumn: false,
    firstNonFinite: () => findNonFinite(rows),
  };
}

/**
 * Throws StatsError naming the first row and field (in row order, then
 * field order) whose number is not finite: `path` then `[i].field`.
 */
export function assertFiniteRows(rows: ParticipantRows, path: string): void {
  const bad = rows.firstNonFinite();
  if (bad !== null) throw nonFiniteError(`${path}${bad}`);
}
