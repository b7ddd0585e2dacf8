/**
 * Brain tables: per-participant contrast values, one per region.
 *
 * Two layouts are read:
 * - wide — an id column and one numeric column per region; a region's
 *   standard errors sit in a column named region + suffix (default `_se`,
 *   chosen at upload); an optional `session` column;
 * - long — columns `region` and `value` (any case), optional `se` and
 *   `session`, and the id column: one row per participant, session and region.
 * The layout is long when both `region` and `value` columns exist, unless
 * the caller says otherwise.
 *
 * In the wide layout, when no region list is given, every numeric column
 * (at least half of its cells numbers, see columns.ts) other than the id,
 * session and standard-error columns is a region, whatever the table's size;
 * any other column is left out only by a decision (see leftOutProblems:
 * never silently; a text column is named "not a region" with its first text
 * values). Every cell of a region or
 * standard-error column must be a number or a missing marker; standard
 * errors must be greater than 0; each participant (id and session) appears
 * once, ids being compared by the roster's rule. Every violation is reported
 * with file, row and column, all at once (status 422).
 *
 * Cost: O(rows × columns).
 */
import { IntakeError, MAX_PROBLEMS, ProblemList, problem, type Problem } from "./errors";
import { notANumberText, parseCategoryCell, quoteCell } from "./cells";
import {
  findColumn,
  profileColumn,
  resolveIdColumn,
  unknownColumnError,
  type ColumnProfile,
} from "./columns";
import type { RawTable } from "./read-table";
import { normaliseId, sameParticipantText } from "./roster";

export type BrainLayout = "wide" | "long";

export const DEFAULT_SE_SUFFIX = "_se";

export interface BrainTableOptions {
  /** Participant id column; default `participant_id` if present, else the first column. */
  idColumn?: string;
  /** Default: long when `region` and `value` columns exist, else wide. */
  layout?: BrainLayout;
  /** Wide layout: suffix pairing a standard-error column to its region (default `_se`). */
  seSuffix?: string;
  /** Session column; default `session` when present; `null` = the table has none. */
  sessionColumn?: string | null;
  /** Only these regions (each must exist); default every region. */
  regions?: readonly string[];
  /** Columns left out entirely (never read). */
  dropColumns?: readonly string[];
  /** Wide layout: the caller's type for a column: "number" = a region, "category" = not a region. */
  types?: Readonly<Record<string, "number" | "category">>;
}

export type BrainColumnRole =
  | "id"
  | "session"
  | "region"
  | "se"
  | "region-name"
  | "value"
  | "ignored"
  | "dropped";

export interface BrainColumn {
  name: string;
  role: BrainColumnRole;
  /** region / se roles in the wide layout: the region it belongs to. */
  region?: string;
  /** ignored / dropped: why, in plain words. */
  reason?: string;
  profile: ColumnProfile;
}

export interface BrainEntry {
  id: string;
  session: string | null;
  /** Spreadsheet row of the entry (long layout: its first row). */
  row: number;
}

export interface BrainTable {
  file: string;
  layout: BrainLayout;
  idColumn: string;
  /** True when the id column was not named and the first column was taken. */
  idColumnGuessed: boolean;
  sessionColumn: string | null;
  seSuffix: string;
  regions: readonly string[];
  /** One entry per participant and session, in file order. */
  entries: readonly BrainEntry[];
  /** `values[r][e]`: entry e's value in region r (NaN where missing). */
  values: readonly Float64Array[];
  /** Per region, standard errors (NaN where missing), or null when the table has none for it. */
  standardErrors: readonly (Float64Array | null)[];
  columns: readonly BrainColumn[];
}

export interface BrainAnalysis {
  /** The table, when no problem was found. */
  table: BrainTable | null;
  /** The table as read when the only problems are columns left out without a decision (for previews), else as `table`. */
  draft: BrainTable | null;
  /** Layout, roles and profiles, even when there are problems. */
  plan: Omit<BrainTable, "entries" | "values" | "standardErrors">;
  problems: readonly Problem[];
  problemCount: number;
}

/** Builds a brain table or throws IntakeError (422) with every problem found. */
export function buildBrainTable(raw: RawTable, options: BrainTableOptions = {}): BrainTable {
  const a = analyseBrainTable(raw, options);
  if (a.table === null) throw new IntakeError(422, a.problems, a.problemCount);
  return a.table;
}

/**
 * Reads a brain table and reports every problem instead of throwing for
 * cell-level ones (for previews). Still throws IntakeError (422) when a
 * column the caller named does not exist.
 */
export function analyseBrainTable(raw: RawTable, options: BrainTableOptions = {}): BrainAnalysis {
  const file = raw.file;
  const seSuffix = options.seSuffix ?? DEFAULT_SE_SUFFIX;
  if (seSuffix === "") {
    throw new IntakeError(422, [
      problem(file, "bad_option", "the standard-error suffix must not be empty"),
    ]);
  }
  const dropped = new Set<number>();
  for (const name of options.dropColumns ?? []) {
    const j = findColumn(raw, name);
    if (j < 0) throw unknownColumnError(raw, name, "asked to drop");
    dropped.add(j);
  }
  const id = resolveIdColumn(raw, options.idColumn);
  if (dropped.has(id.index)) {
    throw new IntakeError(422, [
      problem(file, "drop_id_column", "the participant id column cannot be dropped", {
        column: id.name,
      }),
    ]);
  }
  let sessionIndex = -1;
  if (options.sessionColumn !== null) {
    if (options.sessionColumn !== undefined) {
      sessionIndex = findColumn(raw, options.sessionColumn);
      if (sessionIndex < 0)
        throw unknownColumnError(raw, options.sessionColumn, "the session column");
    } else {
      sessionIndex = findColumn(raw, "session");
      if (dropped.has(sessionIndex)) sessionIndex = -1;
    }
  }
  if (sessionIndex === id.index) sessionIndex = -1;
  for (const name of Object.keys(options.types ?? {})) {
    if (findColumn(raw, name) < 0) throw unknownColumnError(raw, name, "given a type");
  }

  const regionIndex = findColumn(raw, "region");
  const valueIndex = findColumn(raw, "value");
  const looksLong =
    regionIndex >= 0 && valueIndex >= 0 && !dropped.has(regionIndex) && !dropped.has(valueIndex);
  const layout: BrainLayout = options.layout ?? (looksLong ? "long" : "wide");
  if (layout === "long" && !looksLong) {
    throw unknownColumnError(
      raw,
      regionIndex < 0 ? "region" : "value",
      "a long brain table needs region and value columns",
    );
  }

  const profiles = raw.header.map((_, j) => profileColumn(raw, j));
  const problems = new ProblemList();
  const columns: BrainColumn[] = profiles.map((p) => ({
    name: p.name,
    role: "ignored",
    profile: p,
  }));
  columns[id.index].role = "id";
  if (sessionIndex >= 0) columns[sessionIndex].role = "session";
  for (const j of dropped) {
    columns[j].role = "dropped";
    columns[j].reason = "dropped at upload";
  }

  const base = {
    file,
    layout,
    idColumn: id.name,
    idColumnGuessed: id.guessed,
    sessionColumn: sessionIndex >= 0 ? raw.header[sessionIndex] : null,
    seSuffix,
  };

  const result =
    layout === "wide"
      ? readWide(raw, options, id.index, sessionIndex, seSuffix, columns, problems)
      : readLong(raw, options, id.index, sessionIndex, regionIndex, valueIndex, columns, problems);
  const leftOut = leftOutProblems(raw, options, seSuffix, columns);

  const plan = { ...base, regions: result.regions, columns };
  const all = [...problems.list, ...leftOut].slice(0, MAX_PROBLEMS);
  const problemCount = problems.count + leftOut.length;
  if (problems.count > 0 || result.entries === null) {
    return { table: null, draft: null, plan, problems: all, problemCount };
  }
  const table = {
    ...plan,
    entries: result.entries,
    values: result.values,
    standardErrors: result.standardErrors,
  };
  if (leftOut.length > 0) return { table: null, draft: table, plan, problems: all, problemCount };
  return { table, draft: table, plan, problems: [], problemCount: 0 };
}

/**
 * The rule for columns a brain table leaves out: a column that is neither
 * the id, the session, a region, a standard error nor (long layout) a
 * region name or value is never left out silently. Each is a problem
 * (`column_left_out`, naming the column, why, and its first text cells by
 * row) until the uploader decides: drops it, types it as a category ("not
 * used"), or names the regions to read (then every other column is left
 * out by that choice). A standard-error column follows its region's
 * decision; a standard-error column without its region is a problem of its
 * own (unpaired_standard_error).
 */
function leftOutProblems(
  raw: RawTable,
  options: BrainTableOptions,
  seSuffix: string,
  columns: readonly BrainColumn[],
): Problem[] {
  if (options.regions !== undefined && options.regions.length > 0) return [];
  const decidedNotRegion = (j: number) =>
    columns[j].role === "dropped" || options.types?.[raw.header[j]] === "category";
  const out: Problem[] = [];
  columns.forEach((c, j) => {
    if (c.role !== "ignored" || decidedNotRegion(j)) return;
    if (c.name.endsWith(seSuffix) && c.name.length > seSuffix.length) {
      const k = raw.header.indexOf(c.name.slice(0, -seSuffix.length));
      if (k < 0) return; // unpaired: its own problem
      if (decidedNotRegion(k)) return;
    }
    out.push(
      problem(
        raw.file,
        "column_left_out",
        `${leftOutReason(raw, c)}; confirm leaving it out (drop it or mark it not used), or fix the file`,
        { column: c.name },
      ),
    );
  });
  return out;
}

/** Why a column would be left out, naming its first text cells by row. */
function leftOutReason(raw: RawTable, c: BrainColumn): string {
  const p = c.profile;
  if (c.reason?.startsWith("standard errors of")) return `holds the ${c.reason}`;
  if (c.reason === "not used in a long brain table")
    return "is not read: a long brain table uses only the id, session, region, value and se columns";
  if (p.numbers + p.text === 0) return "has no values, so it is not a region";
  const shown = p.textRows
    .slice(0, 3)
    .map((i) => `row ${raw.rowNumbers[i]} ${quoteCell(raw.cell(i, p.index))}`);
  const more = p.text > shown.length ? ", …" : "";
  return `not a region: column ${p.name} has text values (first: ${shown.join(", ")}${more}; ${p.text} of ${p.numbers + p.text} values are text)`;
}

interface ReadResult {
  regions: string[];
  entries: BrainEntry[] | null;
  values: Float64Array[];
  standardErrors: (Float64Array | null)[];
}

/** Reads the id (and session) of each row; reports missing ids. */
function readKey(
  raw: RawTable,
  i: number,
  idIndex: number,
  sessionIndex: number,
  problems: ProblemList,
): { id: string; session: string | null } | null {
  const rowNumber = raw.rowNumbers[i];
  const id = parseCategoryCell(raw.cell(i, idIndex));
  if (id === null) {
    problems.add(
      problem(raw.file, "missing_id", "the participant id is missing", {
        row: rowNumber,
        column: raw.header[idIndex],
      }),
    );
    return null;
  }
  let session: string | null = null;
  if (sessionIndex >= 0) {
    session = parseCategoryCell(raw.cell(i, sessionIndex));
    if (session === null) {
      problems.add(
        problem(
          raw.file,
          "missing_session",
          "the session label is missing; every row needs one when the table has a session column",
          {
            row: rowNumber,
            column: raw.header[sessionIndex],
          },
        ),
      );
      return null;
    }
  }
  return { id, session };
}

function entryText(id: string, session: string | null): string {
  return session === null
    ? `participant ${quoteCell(id)}`
    : `participant ${quoteCell(id)} in session ${quoteCell(session)}`;
}

function readWide(
  raw: RawTable,
  options: BrainTableOptions,
  idIndex: number,
  sessionIndex: number,
  seSuffix: string,
  columns: BrainColumn[],
  problems: ProblemList,
): ReadResult {
  const file = raw.file;
  const free = (j: number) => columns[j].role === "ignored";
  // Standard-error columns: name = stem + suffix where stem is another free column.
  const seOf = new Map<number, number>();
  const isSe = new Set<number>();
  raw.header.forEach((name, j) => {
    if (!free(j) || !name.endsWith(seSuffix) || name.length === seSuffix.length) return;
    const stem = name.slice(0, -seSuffix.length);
    const k = raw.header.indexOf(stem);
    if (k >= 0 && free(k)) {
      seOf.set(k, j);
      isSe.add(j);
    }
  });

  const regionIdx: number[] = [];
  if (options.regions !== undefined && options.regions.length > 0) {
    const wanted = new Set<number>();
    for (const name of options.regions) {
      const j = raw.header.indexOf(name);
      if (j < 0 || !free(j) || isSe.has(j)) {
        throw unknownColumnError(raw, name, "a region asked for");
      }
      if (!wanted.has(j)) regionIdx.push(j);
      wanted.add(j);
    }
    raw.header.forEach((_, j) => {
      if (free(j) && !wanted.has(j) && !isSe.has(j))
        columns[j].reason = "not among the regions asked for";
    });
  } else {
    raw.header.forEach((name, j) => {
      if (!free(j) || isSe.has(j)) return;
      if (
        name.endsWith(seSuffix) &&
        name.length > seSuffix.length &&
        options.types?.[name] !== "number"
      ) {
        return; // unpaired standard-error column: reported below
      }
      const type = options.types?.[name] ?? columns[j].profile.type;
      if (type === "number") {
        regionIdx.push(j);
        return;
      }
      const p = columns[j].profile;
      columns[j].reason =
        p.numbers + p.text === 0
          ? "has no values"
          : options.types?.[name] === "category"
            ? "typed as a category at upload, so not a region"
            : `not numeric (${p.text} of ${p.numbers + p.text} values are text), so not a region`;
    });
  }
  const regionSet = new Set(regionIdx);
  for (const j of isSe) {
    const stem = raw.header[j].slice(0, -seSuffix.length);
    const k = raw.header.indexOf(stem);
    if (regionSet.has(k)) {
      columns[j].role = "se";
      columns[j].region = stem;
    } else {
      isSe.delete(j);
      columns[j].reason = `standard errors of "${stem}", which is not a region here`;
    }
  }
  for (const j of regionIdx) {
    columns[j].role = "region";
    columns[j].region = raw.header[j];
    columns[j].reason = undefined;
  }
  if (regionIdx.length === 0) {
    problems.add(
      problem(
        file,
        "no_regions",
        "no region columns: a wide brain table needs at least one numeric column besides the participant id",
        {
          row: 1,
        },
      ),
    );
  }
  // A free column ending in the suffix with no region to pair with is a mistake worth reporting.
  raw.header.forEach((name, j) => {
    if (
      columns[j].role === "ignored" &&
      name.endsWith(seSuffix) &&
      name.length > seSuffix.length &&
      !isSe.has(j)
    ) {
      const stem = name.slice(0, -seSuffix.length);
      if (raw.header.indexOf(stem) < 0) {
        problems.add(
          problem(
            file,
            "unpaired_standard_error",
            `looks like a standard-error column (suffix "${seSuffix}") but there is no region column named "${stem}"; rename or drop it`,
            { row: 1, column: name },
          ),
        );
      }
    }
  });

  const regions = regionIdx.map((j) => raw.header[j]);
  const n = raw.rowCount;
  const entries: BrainEntry[] = [];
  // By the roster's rule (normaliseId): ids that are one participant there are one participant here.
  const seen = new Map<string, BrainEntry>();
  let keysOk = true;
  for (let i = 0; i < n; i++) {
    const key = readKey(raw, i, idIndex, sessionIndex, problems);
    if (key === null) {
      keysOk = false;
      continue;
    }
    const k = `${normaliseId(key.id)}\u0000${key.session ?? ""}`;
    const first = seen.get(k);
    if (first !== undefined) {
      const once = `each participant${key.session === null ? "" : " and session"} must appear once`;
      problems.add(
        problem(
          file,
          "duplicate_participant",
          first.id === key.id
            ? `${entryText(key.id, key.session)} appears again (first at row ${first.row}); ${once}`
            : `${sameParticipantText(key.id, first.id, first.row, { session: key.session })}; ${once}`,
          { row: raw.rowNumbers[i], column: raw.header[idIndex] },
        ),
      );
      keysOk = false;
      continue;
    }
    const entry = { id: key.id, session: key.session, row: raw.rowNumbers[i] };
    seen.set(k, entry);
    entries.push(entry);
  }
  // Cells were parsed once when the columns were profiled; report the bad ones, column by column.
  const values: Float64Array[] = [];
  const standardErrors: (Float64Array | null)[] = [];
  for (const j of regionIdx) {
    const p = columns[j].profile;
    for (const i of p.textRows) {
      problems.add(
        problem(file, "not_a_number", notANumberText(raw.cell(i, j)), {
          row: raw.rowNumbers[i],
          column: p.name,
        }),
      );
    }
    // The profile's numbers, not a copy (a table's values are never changed; a copy of a
    // 20,000 × 1,000 table is 160 MB more at confirmation).
    values.push(p.values);
    const sj = seOf.get(j);
    if (sj === undefined || !isSe.has(sj)) {
      standardErrors.push(null);
      continue;
    }
    const sp = columns[sj].profile;
    const se = sp.values.slice();
    const bad = new Set(sp.textRows);
    for (let i = 0; i < n; i++) {
      if (bad.has(i)) {
        problems.add(
          problem(file, "not_a_number", notANumberText(raw.cell(i, sj)), {
            row: raw.rowNumbers[i],
            column: sp.name,
          }),
        );
      } else if (se[i] <= 0) {
        problems.add(
          problem(
            file,
            "bad_standard_error",
            `${quoteCell(raw.cell(i, sj))} is not a valid standard error; expected a number greater than 0`,
            {
              row: raw.rowNumbers[i],
              column: sp.name,
            },
          ),
        );
        se[i] = Number.NaN;
      }
    }
    standardErrors.push(se);
  }
  return { regions, entries: keysOk ? entries : null, values, standardErrors };
}

function readLong(
  raw: RawTable,
  options: BrainTableOptions,
  idIndex: number,
  sessionIndex: number,
  regionIndex: number,
  valueIndex: number,
  columns: BrainColumn[],
  problems: ProblemList,
): ReadResult {
  const file = raw.file;
  columns[regionIndex].role = "region-name";
  columns[valueIndex].role = "value";
  let seIndex = findColumn(raw, "se");
  if (seIndex >= 0 && columns[seIndex].role !== "ignored") seIndex = -1;
  if (seIndex >= 0) columns[seIndex].role = "se";
  for (const c of columns) if (c.role === "ignored") c.reason = "not used in a long brain table";

  const wanted =
    options.regions !== undefined && options.regions.length > 0 ? new Set(options.regions) : null;
  const n = raw.rowCount;
  // First pass: each kept row's entry (participant and session) and region as small integers.
  const regionNumber = new Map<string, number>();
  const entryOfId = new Map<string, number | Map<string, number>>();
  const entries: BrainEntry[] = [];
  // Entries whose ids are one participant by the roster's rule (normaliseId), in the same session, form one group.
  const groupOfKey = new Map<string, number>();
  const groupOfEntry: number[] = [];
  const cellEntry = new Int32Array(n);
  const cellRegion = new Int32Array(n);
  const kept = new Int32Array(n);
  let cells = 0;
  let keysOk = true;
  for (let i = 0; i < n; i++) {
    const key = readKey(raw, i, idIndex, sessionIndex, problems);
    const region = parseCategoryCell(raw.cell(i, regionIndex));
    if (region === null) {
      problems.add(
        problem(file, "missing_region", "the region name is missing", {
          row: raw.rowNumbers[i],
          column: raw.header[regionIndex],
        }),
      );
      keysOk = false;
      continue;
    }
    if (key === null) {
      keysOk = false;
      continue;
    }
    if (wanted !== null && !wanted.has(region)) continue;
    let e: number | undefined;
    const byId = entryOfId.get(key.id);
    if (key.session === null) e = byId as number | undefined;
    else e = (byId as Map<string, number> | undefined)?.get(key.session);
    if (e === undefined) {
      e = entries.length;
      entries.push({ id: key.id, session: key.session, row: raw.rowNumbers[i] });
      const g = `${normaliseId(key.id)}\u0000${key.session ?? ""}`;
      let group = groupOfKey.get(g);
      if (group === undefined) {
        group = groupOfKey.size;
        groupOfKey.set(g, group);
      }
      groupOfEntry.push(group);
      if (key.session === null) entryOfId.set(key.id, e);
      else {
        let sessions = byId as Map<string, number> | undefined;
        if (sessions === undefined) {
          sessions = new Map();
          entryOfId.set(key.id, sessions);
        }
        sessions.set(key.session, e);
      }
    }
    let r = regionNumber.get(region);
    if (r === undefined) {
      r = regionNumber.size;
      regionNumber.set(region, r);
    }
    cellEntry[cells] = e;
    cellRegion[cells] = r;
    kept[cells] = i;
    cells += 1;
  }
  let regions = [...regionNumber.keys()];
  if (wanted !== null) {
    for (const name of options.regions ?? []) {
      if (!regionNumber.has(name)) {
        throw new IntakeError(422, [
          problem(
            file,
            "unknown_region",
            `no rows for region ${quoteCell(name)} (a region asked for) in column ${raw.header[regionIndex]}`,
          ),
        ]);
      }
    }
    regions = [...new Set(options.regions)];
  }
  if (regions.length === 0) {
    problems.add(
      problem(
        file,
        "no_regions",
        "no region rows: a long brain table needs at least one row with a region and a value",
      ),
    );
  }
  const position = new Int32Array(regionNumber.size);
  regions.forEach((name, idx) => {
    position[regionNumber.get(name) as number] = idx;
  });
  const m = entries.length;
  const values = regions.map(() => new Float64Array(m).fill(Number.NaN));
  const standardErrors = regions.map(() =>
    seIndex >= 0 ? new Float64Array(m).fill(Number.NaN) : null,
  );
  // Cells were parsed once when the columns were profiled: take their numbers, and report the text cells.
  const valueProfile = columns[valueIndex].profile;
  const seProfile = seIndex >= 0 ? columns[seIndex].profile : null;
  const isText = (p: ColumnProfile) => {
    const flags = new Uint8Array(n);
    for (const i of p.textRows) flags[i] = 1;
    return flags;
  };
  const valueText = isText(valueProfile);
  const seText = seProfile ? isText(seProfile) : null;
  // Second pass: the first row of each participant (group), session and region; a second one is a duplicate.
  const firstRow = new Cells(groupOfKey.size, regionNumber.size, cells);
  const firstEntry = new Int32Array(n);
  for (let c = 0; c < cells; c++) {
    const e = cellEntry[c];
    const r = cellRegion[c];
    const i = kept[c];
    const g = groupOfEntry[e];
    const first = firstRow.get(g, r);
    if (first >= 0) {
      const entry = entries[e];
      const earlier = entries[firstEntry[first]];
      const region = raw.cell(i, regionIndex).trim();
      const once = `each participant${entry.session === null ? "" : " and session"} has one value per region`;
      problems.add(
        problem(
          file,
          "duplicate_participant",
          earlier.id === entry.id
            ? `${entryText(entry.id, entry.session)} has region ${quoteCell(region)} again (first at row ${raw.rowNumbers[first]}); ${once}`
            : `${sameParticipantText(entry.id, earlier.id, raw.rowNumbers[first], { session: entry.session, region })}; ${once}`,
          { row: raw.rowNumbers[i], column: raw.header[idIndex] },
        ),
      );
      keysOk = false;
      continue;
    }
    firstRow.set(g, r, i);
    firstEntry[i] = e;
    const idx = position[r];
    const where = () => ({ row: raw.rowNumbers[i], column: raw.header[valueIndex] });
    if (valueText[i] === 1)
      problems.add(problem(file, "not_a_number", notANumberText(raw.cell(i, valueIndex)), where()));
    else values[idx][e] = valueProfile.values[i];
    const se = standardErrors[idx];
    if (se !== null && seProfile !== null && seText !== null) {
      const seWhere = { row: raw.rowNumbers[i], column: raw.header[seIndex] };
      const x = seProfile.values[i];
      if (seText[i] === 1)
        problems.add(problem(file, "not_a_number", notANumberText(raw.cell(i, seIndex)), seWhere));
      else if (x > 0) se[e] = x;
      else if (!Number.isNaN(x)) {
        problems.add(
          problem(
            file,
            "bad_standard_error",
            `${quoteCell(raw.cell(i, seIndex))} is not a valid standard error; expected a number greater than 0`,
            seWhere,
          ),
        );
      }
    }
  }
  return { regions, entries: keysOk ? entries : null, values, standardErrors };
}

/**
 * The row (index into the raw rows) stored for each entry and region, or
 * -1: a dense table when entries × regions is not much more than the rows
 * (the usual, nearly complete table), a hash map otherwise.
 */
class Cells {
  private readonly dense: Int32Array | null;
  private readonly sparse: Map<number, number> | null;
  private readonly stride: number;

  constructor(entries: number, regions: number, cells: number) {
    this.stride = regions;
    const size = entries * regions;
    this.dense = size <= 4 * cells + 1024 ? new Int32Array(size).fill(-1) : null;
    this.sparse = this.dense === null ? new Map() : null;
  }

  get(e: number, r: number): number {
    const k = e * this.stride + r;
    return this.dense !== null ? this.dense[k] : (this.sparse?.get(k) ?? -1);
  }

  set(e: number, r: number, row: number): void {
    const k = e * this.stride + r;
    if (this.dense !== null) this.dense[k] = row;
    else this.sparse?.set(k, row);
  }
}

/** The distinct participant ids of a brain table, in order of first appearance. */
export function brainParticipantIds(table: Pick<BrainTable, "entries">): string[] {
  const seen = new Set<string>();
  const ids: string[] = [];
  for (const e of table.entries) {
    if (!seen.has(e.id)) {
      seen.add(e.id);
      ids.push(e.id);
    }
  }
  return ids;
}

/** The distinct session labels of a brain table in natural order ("2" before "10"), or [] without sessions. */
export function brainSessions(table: Pick<BrainTable, "entries">): string[] {
  const labels = new Set<string>();
  for (const e of table.entries) if (e.session !== null) labels.add(e.session);
  return [...labels].sort(naturalCompare);
}

const natural = new Intl.Collator("en", { numeric: true, sensitivity: "variant" });

/**
 * Natural order of labels: digit runs compare as numbers ("ses-2" <
 * "ses-10"). One collator for every call (`localeCompare` with options
 * builds one per call, ~20× slower when sorting many labels).
 */
export function naturalCompare(a: string, b: string): number {
  return natural.compare(a, b) || (a < b ? -1 : a > b ? 1 : 0);
}
