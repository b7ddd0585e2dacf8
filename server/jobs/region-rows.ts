/**
 * The stored form of one region's per-participant diagnostics
 * (`fit_regions.participants`): JSON text, column by column.
 *
 * A row-by-row array repeats every field name for every participant; at
 * 400 regions × 500 participants that was ~40 % of the ~100 MB a fit
 * stored, and storing runs on the request thread. By columns:
 *
 *   { "layout": "columns", "n": 500,
 *     "fields": { "participant": ["sub-0001", …], "leverage": [0.0021, …], … },
 *     "absent": { "dffits": [17, 230] } }
 *
 * `fields[name][i]` is participant i's value; `absent` lists the rows that
 * have no such field at all (as opposed to null). The region's name, the
 * same in every row, is not repeated: the row's `region` column holds it.
 * Numbers keep JSON's shortest round-trip form, so decoding gives back
 * every value exactly. Text that is a JSON array is the earlier row-by-row
 * form and is read as it is.
 *
 * Pure; encode runs in the fit's worker thread, decode in the region
 * detail. Cost O(rows × fields).
 */
import type { ParticipantDiagnostics } from "../../contract/spec";

interface ColumnLayout {
  layout: "columns";
  n: number;
  fields: Record<string, unknown[]>;
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
  const fields: Record<string, unknown[]> = {};
  const absent: Record<string, number[]> = {};
  for (const name of names) {
    fields[name] = rows.map((row, i) => {
      const value = row[name];
      if (value === undefined) {
        absent[name] ??= [];
        absent[name].push(i);
        return null;
      }
      return value;
    });
  }
  const layout: ColumnLayout = {
    layout: "columns",
    n: rows.length,
    fields,
    ...(Object.keys(absent).length > 0 ? { absent } : {}),
  };
  return JSON.stringify(layout);
}

/** The rows of one region from their stored text (either form), each with `region` set. Throws SyntaxError on text that is neither. */
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
  const fields = layout.fields;
  const absent = new Map(
    Object.entries(layout.absent ?? {}).map(([name, rows]) => [name, new Set(rows)]),
  );
  const rows: ParticipantDiagnostics[] = [];
  for (let i = 0; i < layout.n; i++) {
    const row: Record<string, unknown> = {};
    for (const name in fields) {
      if (absent.get(name)?.has(i)) continue;
      row[name] = fields[name][i];
      if (name === "participant") row.region = region;
    }
    if (!("region" in row)) row.region = region;
    rows.push(row as ParticipantDiagnostics);
  }
  return rows;
}
