/**
 * Building a linear-model design from participant-sheet columns.
 *
 * Treatment (dummy) coding for a categorical term: the reference level is the
 * first of `levels` when given, otherwise the first of the levels present in
 * the rows, in code-point order (so "F" comes before "M", "ctrl" before
 * "patient"); each other level gets a 0/1 column (Chambers & Hastie 1992,
 * "Statistical Models in S", §2.3.1). Levels absent from the rows get no
 * column. An interaction term is the elementwise product of a numeric column
 * and a 0/1 column.
 */
import { StatsError, require } from "./errors";

export type DesignTerm =
  | { name: string; kind: "intercept" }
  | { name: string; kind: "numeric"; values: ArrayLike<number> }
  | { name: string; kind: "categorical"; values: readonly string[]; levels?: readonly string[] }
  | { name: string; kind: "product"; values: ArrayLike<number>; indicator: ArrayLike<number> };

export interface Design {
  /** Row-major n×p. */
  x: Float64Array;
  n: number;
  p: number;
  columnNames: string[];
  /** For each term, the columns it produced. */
  termColumns: { name: string; columns: number[]; reference?: string; levels?: string[] }[];
}

/** Code-point order comparison (locale independent, so results never depend on the machine). */
export function compareCodePoints(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * Treatment-coded 0/1 columns for a categorical variable over n rows.
 * Throws StatsError if a given level list has duplicates or misses a value.
 */
export function treatmentCoding(
  name: string,
  values: readonly string[],
  levels?: readonly string[],
): { reference: string; levels: string[]; columns: Float64Array[] } {
  const present = Array.from(new Set(values)).sort(compareCodePoints);
  let ordered: string[];
  if (levels && levels.length > 0) {
    require(new Set(levels).size === levels.length, `${name}: levels must be distinct`);
    for (const v of present) {
      if (!levels.includes(v))
        throw new StatsError(`${name}: value '${v}' is not one of the given levels`);
    }
    ordered = levels.filter((l) => present.includes(l));
  } else {
    ordered = present;
  }
  require(ordered.length >= 1, `${name}: no values`);
  const columns = ordered
    .slice(1)
    .map((level) => Float64Array.from(values, (v) => (v === level ? 1 : 0)));
  return { reference: ordered[0], levels: ordered, columns };
}

/** Assembles the design from terms, each of length n. Cost O(n·p). */
export function buildDesign(n: number, terms: readonly DesignTerm[]): Design {
  const cols: Float64Array[] = [];
  const columnNames: string[] = [];
  const termColumns: Design["termColumns"] = [];
  for (const term of terms) {
    const start = cols.length;
    if (term.kind === "intercept") {
      cols.push(new Float64Array(n).fill(1));
      columnNames.push(term.name);
      termColumns.push({ name: term.name, columns: [start] });
    } else if (term.kind === "numeric") {
      require(term.values.length === n, `${term.name}: expected ${n} values`);
      cols.push(Float64Array.from(term.values));
      columnNames.push(term.name);
      termColumns.push({ name: term.name, columns: [start] });
    } else if (term.kind === "product") {
      require(term.values.length === n &&
        term.indicator.length === n, `${term.name}: expected ${n} values`);
      const c = new Float64Array(n);
      for (let i = 0; i < n; i++) c[i] = term.values[i] * term.indicator[i];
      cols.push(c);
      columnNames.push(term.name);
      termColumns.push({ name: term.name, columns: [start] });
    } else {
      require(term.values.length === n, `${term.name}: expected ${n} values`);
      const coding = treatmentCoding(term.name, term.values, term.levels);
      coding.columns.forEach((c, k) => {
        cols.push(c);
        columnNames.push(`${term.name}: ${coding.levels[k + 1]}`);
      });
      termColumns.push({
        name: term.name,
        columns: coding.columns.map((_, k) => start + k),
        reference: coding.reference,
        levels: coding.levels,
      });
    }
  }
  const p = cols.length;
  const x = new Float64Array(n * p);
  for (let j = 0; j < p; j++) {
    const c = cols[j];
    for (let i = 0; i < n; i++) x[i * p + j] = c[i];
  }
  return { x, n, p, columnNames, termColumns };
}
