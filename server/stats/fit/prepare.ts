/**
 * Stage 1 of a fit, prepare: checks the model and the data through the fit
 * rules (contract/fit-rules.ts), resolves the set-asides (with those the
 * model's exclusion rules make, model-rules.ts), the columns and the
 * group levels a valid model names, and gives each region its participants
 * (after set-asides and listwise deletion; weights: a standard error for
 * every value) or, for reliability, its matrix of sessions. Hands a
 * `Prepared` fit and the rows of each region to the estimate stage (and to
 * reliability.ts); `fitPreconditionProblems` judges the same preconditions
 * without fitting.
 */
import {
  type DataShape,
  dataProblems,
  minimumParticipants,
  minimumPerGroup,
  type SpecProblem,
  specProblems,
} from "../../../contract/fit-rules";
import { type FitData, type ModelSpec, modelSpecSchema } from "../../../contract/spec";
import { compareCodePoints } from "../design-matrix";
import { StatsError } from "../errors";
import type { Kind } from "../region-data";
import { fail } from "./common";
import { ruleMembers } from "./model-rules";

export type Covariate =
  | { name: string; numeric: readonly (number | null)[] }
  | { name: string; categorical: readonly (string | null)[] };

export interface Prepared {
  spec: ModelSpec;
  data: FitData;
  regionIndex: number[];
  predictor: readonly (number | null)[] | null;
  group: readonly (string | null)[] | null;
  levels: [string, string] | null;
  covariates: Covariate[];
  /** participant index → set aside from every region */
  asideAll: Uint8Array;
  /** region name → participant indices set aside there */
  asideRegion: Map<string, Set<number>>;
  /** Per rule of `spec.exclusionRules`, the participant indices it leaves out of every region (model-rules.ts). */
  ruleExclusions: number[][];
}

function parseSpec(spec: ModelSpec): ModelSpec {
  const parsed = modelSpecSchema.safeParse(spec);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    fail(`model field '${issue.path.join(".") || "(model)"}': ${issue.message}`);
  }
  return parsed.data;
}

function checkData(data: FitData): void {
  const n = data.participants.length;
  if (data.values.length !== data.regions.length)
    fail("fit data: values must have one row per region");
  data.values.forEach((v, r) => {
    if (v.length !== n)
      fail(`fit data: region '${data.regions[r]}' has ${v.length} values for ${n} participants`);
  });
  if (new Set(data.participants).size !== n)
    fail("fit data: participant identifiers must be unique");
  for (const [name, col] of Object.entries(data.numericColumns)) {
    if (col.length !== n)
      fail(`fit data: column '${name}' has ${col.length} values for ${n} participants`);
  }
  for (const [name, col] of Object.entries(data.categoricalColumns)) {
    if (col.length !== n)
      fail(`fit data: column '${name}' has ${col.length} values for ${n} participants`);
  }
}

function has(record: Readonly<Record<string, unknown>>, key: string): boolean {
  return Object.hasOwn(record, key);
}

/**
 * Participants set aside from every region, and per region, from the spec's
 * set-aside list, and those the model's exclusion rules leave out of every
 * region (model-rules.ts). Throws StatsError for unknown names.
 */
function setAsides(
  spec: ModelSpec,
  data: FitData,
): {
  asideAll: Uint8Array;
  asideRegion: Map<string, Set<number>>;
  ruleExclusions: number[][];
} {
  const n = data.participants.length;
  const asideAll = new Uint8Array(n);
  const asideRegion = new Map<string, Set<number>>();
  for (const entry of spec.setAside) {
    const i = data.participants.indexOf(entry.participant);
    if (i < 0) fail(`setAside: unknown participant '${entry.participant}'`);
    if (entry.region === undefined) asideAll[i] = 1;
    else {
      if (!data.regions.includes(entry.region))
        fail(`setAside: unknown region '${entry.region}' for participant '${entry.participant}'`);
      const set = asideRegion.get(entry.region) ?? new Set<number>();
      set.add(i);
      asideRegion.set(entry.region, set);
    }
  }
  const ruleExclusions = ruleMembers(spec.exclusionRules ?? [], data);
  for (const members of ruleExclusions) for (const i of members) asideAll[i] = 1;
  return { asideAll, asideRegion, ruleExclusions };
}

/** The levels of a column among the participants not set aside from every region (numbers as text), sorted by code point. */
function levelsPresent(data: FitData, column: string, asideAll: Uint8Array): string[] | undefined {
  let values: readonly (string | null)[];
  if (has(data.categoricalColumns, column)) values = data.categoricalColumns[column];
  else if (has(data.numericColumns, column))
    values = data.numericColumns[column].map((v) =>
      v === null || !Number.isFinite(v) ? null : String(v),
    );
  else return undefined;
  const present = new Set<string>();
  values.forEach((g, i) => {
    if (g !== null && !asideAll[i]) present.add(g);
  });
  return Array.from(present).sort(compareCodePoints);
}

/** The shape of fit data as the fit rules see it (fit-rules.ts). */
function shapeOf(data: FitData, asideAll: Uint8Array): DataShape {
  return {
    regions: data.regions,
    sessions: data.sessions?.labels.length ?? 0,
    hasStandardErrors: Boolean(data.standardErrors),
    numericColumns: Object.keys(data.numericColumns),
    categoricalColumns: Object.keys(data.categoricalColumns),
    levelsOf: (column) => levelsPresent(data, column, asideAll),
  };
}

/** The rules of fit-rules.ts on the model and the shape of the data: every problem. */
function ruleProblems(
  spec: ModelSpec,
  data: FitData,
  asideAll: Uint8Array,
  naming: Pick<DataShape, "brainTable" | "participantSheet"> = {},
): SpecProblem[] {
  return [...specProblems(spec), ...dataProblems(spec, { ...shapeOf(data, asideAll), ...naming })];
}

/**
 * Stage 1 as the fit runs it: the model and the data checked against the fit
 * rules (the first problem throws StatsError naming its field), then the
 * set-asides, columns and group levels resolved.
 */
export function prepare(specIn: ModelSpec, data: FitData): Prepared {
  const spec = parseSpec(specIn);
  checkData(data);
  const { asideAll, asideRegion, ruleExclusions } = setAsides(spec, data);
  const [problem] = ruleProblems(spec, data, asideAll);
  if (problem) fail(`${problem.field.split(".")[0]}: ${problem.message}`);
  return resolve(spec, data, asideAll, asideRegion, ruleExclusions);
}

/** The columns and levels a valid model names (the rules have passed). */
function resolve(
  spec: ModelSpec,
  data: FitData,
  asideAll: Uint8Array,
  asideRegion: Map<string, Set<number>>,
  ruleExclusions: number[][],
): Prepared {
  const wanted = spec.regions && spec.regions.length > 0 ? spec.regions : data.regions;
  const regionIndex = wanted.map((name) => data.regions.indexOf(name));
  const predictor =
    (spec.kind === "association" || spec.kind === "prediction") && spec.predictor
      ? data.numericColumns[spec.predictor]
      : null;
  let group: readonly (string | null)[] | null = null;
  let levels: [string, string] | null = null;
  if (spec.group) {
    group = has(data.categoricalColumns, spec.group)
      ? data.categoricalColumns[spec.group]
      : data.numericColumns[spec.group].map((v) =>
          v === null || !Number.isFinite(v) ? null : String(v),
        );
    const found = levelsPresent(data, spec.group, asideAll) as string[];
    levels = spec.levels ? [spec.levels[0], spec.levels[1]] : [found[0], found[1]];
  }
  const covariates: Covariate[] = spec.covariates.map((name) =>
    has(data.numericColumns, name)
      ? { name, numeric: data.numericColumns[name] }
      : { name, categorical: data.categoricalColumns[name] },
  );
  return {
    spec,
    data,
    regionIndex,
    predictor,
    group,
    levels,
    covariates,
    asideAll,
    asideRegion,
    ruleExclusions,
  };
}

/**
 * Participant indices used in region r (after set-aside and listwise
 * deletion), checked against the minimum the kind and estimator need
 * (fit-rules.ts) and, for two groups, the minimum per group. Throws
 * StatsError otherwise.
 */
export function regionRows(prep: Prepared, r: number): readonly number[] {
  const s = prep.spec;
  const kind = s.kind as Kind;
  const rows = rowsFor(prep, r);
  if (checkedShared.has(rows)) return rows;
  const min = minimumParticipants(kind, s.estimator);
  if (rows.length < min) fail(`too few participants (n = ${rows.length}; at least ${min} needed)`);
  if (kind === "two-group") {
    const g = prep.group as readonly (string | null)[];
    const need = minimumPerGroup(s.estimator);
    for (const level of prep.levels as [string, string]) {
      const count = rows.filter((i) => g[i] === level).length;
      if (count < need)
        fail(
          `group level '${level}' has ${count} participant${count === 1 ? "" : "s"} (at least ${need} needed)`,
        );
    }
  }
  if (isSharedRows(prep, rows)) checkedShared.add(rows);
  return rows;
}

/** Shared rows (`eligibleRows`) that met the minimums once: they meet them for every region. */
const checkedShared = new WeakSet<readonly number[]>();

/** Reliability: per region the participants' values in every session (at least two participants). Throws StatsError otherwise. */
export function sessionMatrix(prep: Prepared, r: number): number[][] {
  const { data } = prep;
  const sessions = data.sessions as NonNullable<FitData["sessions"]>;
  const bySession = sessions.values[r];
  if (!bySession || bySession.length !== sessions.labels.length)
    fail("sessions: expected one value array per session");
  const aside = prep.asideRegion.get(data.regions[r]);
  const matrix: number[][] = [];
  for (let i = 0; i < data.participants.length; i++) {
    if (prep.asideAll[i] || aside?.has(i)) continue;
    const row = bySession.map((v) => v[i]);
    if (row.every((v) => Number.isFinite(v))) matrix.push(row);
  }
  if (matrix.length < 2)
    fail(`too few participants with every session (n = ${matrix.length}; at least 2 needed)`);
  return matrix;
}

/**
 * The preconditions of a fit that the data decide, judged without fitting:
 * the rules of fit-rules.ts on the model and the data's shape (regions,
 * columns and their types, sessions, standard errors, group levels among
 * the participants not set aside), then per region the participants left
 * after set-asides and missing values (the kind's minimum, per group for
 * two groups; weights: a standard error for every value). What only the
 * fit itself finds (a design whose columns depend on each other) is not
 * judged. `columns: false` leaves out everything that needs the
 * participant sheet (none uploaded yet). `naming` names the tables in the
 * messages. Returns every problem (fields inside the model fields; a
 * region's problem under "regions"); a malformed model or set-aside list
 * throws StatsError. Cost O(regions × participants × columns).
 */
export function fitPreconditionProblems(
  specIn: ModelSpec,
  data: FitData,
  options: { columns?: boolean; naming?: Pick<DataShape, "brainTable" | "participantSheet"> } = {},
): SpecProblem[] {
  const spec = parseSpec(specIn);
  checkData(data);
  const { asideAll, asideRegion, ruleExclusions } = setAsides(spec, data);
  const columns = options.columns !== false;
  const shape: DataShape = { ...shapeOf(data, asideAll), ...options.naming };
  if (!columns) {
    shape.numericColumns = undefined;
    shape.categoricalColumns = undefined;
  }
  const problems = [...specProblems(spec), ...dataProblems(spec, shape)];
  const needsSheet = Boolean(
    spec.predictor ||
      spec.group ||
      spec.covariates.length > 0 ||
      (spec.exclusionRules ?? []).length > 0,
  );
  if (problems.length > 0 || (!columns && needsSheet)) return problems;
  const prep = resolve(spec, data, asideAll, asideRegion, ruleExclusions);
  if (spec.kind === "prediction") {
    const n = predictionRows(prep).length;
    if (n < PREDICTION_MINIMUM)
      problems.push({
        field: "regions",
        message: `${n} participant${n === 1 ? " has" : "s have"} a value in every chosen region, the trait and each confound; a prediction needs at least ${PREDICTION_MINIMUM}`,
      });
    return problems;
  }
  for (const r of prep.regionIndex) {
    try {
      if (spec.kind === "reliability") sessionMatrix(prep, r);
      else regionRows(prep, r);
    } catch (e) {
      if (!(e instanceof StatsError)) throw e;
      problems.push({ field: "regions", message: `region '${data.regions[r]}': ${e.message}` });
    }
  }
  return problems;
}

/** The fewest complete participants a prediction needs (leave-one-out on 3). */
export const PREDICTION_MINIMUM = 3;

/**
 * A prediction's participants: not set aside (from every region or from any
 * chosen region), with a value in every chosen region, the trait and each
 * confound (listwise over all of them, since one model uses every region).
 */
export function predictionRows(prep: Prepared): number[] {
  const { data, predictor, covariates, asideAll, asideRegion, regionIndex } = prep;
  const rows: number[] = [];
  for (let i = 0; i < data.participants.length; i++) {
    if (asideAll[i]) continue;
    if (regionIndex.some((r) => asideRegion.get(data.regions[r])?.has(i))) continue;
    if (regionIndex.some((r) => !Number.isFinite(data.values[r][i]))) continue;
    const trait = predictor?.[i];
    if (trait === null || trait === undefined || !Number.isFinite(trait)) continue;
    const complete = covariates.every((c) => {
      if (!("numeric" in c)) return c.categorical[i] !== null;
      const v = c.numeric[i];
      return v !== null && Number.isFinite(v);
    });
    if (complete) rows.push(i);
  }
  return rows;
}

/**
 * The participants any region may use: not set aside from every region,
 * with the tested term (predictor, a group level) and every covariate, in
 * roster order. Computed once per prepared fit (a copy of `prep` computes
 * its own) and frozen: a region that keeps all of them is given this very
 * array, so that regions on the same participants share it (and their
 * design, `designFor`).
 */
const eligibleOf = new WeakMap<Prepared, readonly number[]>();

function eligibleRows(prep: Prepared): readonly number[] {
  const known = eligibleOf.get(prep);
  if (known) return known;
  const { data, asideAll } = prep;
  const rows: number[] = [];
  for (let i = 0; i < data.participants.length; i++) {
    if (!asideAll[i] && hasModelColumns(prep, i)) rows.push(i);
  }
  Object.freeze(rows);
  eligibleOf.set(prep, rows);
  return rows;
}

/** Participant i has the model's predictor, one of its two group levels and every covariate (those it names). */
function hasModelColumns(prep: Prepared, i: number): boolean {
  const { predictor, group, levels, covariates } = prep;
  if (predictor) {
    const v = predictor[i];
    if (v === null || !Number.isFinite(v)) return false;
  }
  if (group && levels) {
    const g = group[i];
    if (g === null || (g !== levels[0] && g !== levels[1])) return false;
  }
  for (const c of covariates) {
    if ("numeric" in c) {
      const v = c.numeric[i];
      if (v === null || !Number.isFinite(v)) return false;
    } else if (c.categorical[i] === null) return false;
  }
  return true;
}

/** True when `rows` are all of a prepared fit's eligible participants, as one shared array (see `eligibleRows`). */
export function isSharedRows(prep: Prepared, rows: readonly number[]): boolean {
  return eligibleOf.get(prep) === rows;
}

/**
 * Participant indices used in region r (after set-aside and listwise
 * deletion): the eligible participants (`eligibleRows`) with a value in r
 * and not set aside there — the eligible array itself when that is all of
 * them. Weighted fits walk every participant, as a participant with a
 * value but no usable standard error fails the fit even when the model
 * would leave it out for another reason.
 */
function rowsFor(prep: Prepared, r: number): readonly number[] {
  if (prep.spec.weights === "first-level-se") return weightedRowsFor(prep, r);
  const { data } = prep;
  const aside = prep.asideRegion.get(data.regions[r]);
  const values = data.values[r];
  const eligible = eligibleRows(prep);
  const rows: number[] = [];
  for (let k = 0; k < eligible.length; k++) {
    const i = eligible[k];
    if (aside?.has(i) || !Number.isFinite(values[i])) continue;
    rows.push(i);
  }
  return rows.length === eligible.length ? eligible : rows;
}

/** `rowsFor` of a weighted fit: every participant with a value needs a usable standard error. */
function weightedRowsFor(prep: Prepared, r: number): number[] {
  const { data, asideAll, asideRegion } = prep;
  const name = data.regions[r];
  const aside = asideRegion.get(name);
  const values = data.values[r];
  const se = data.standardErrors?.[r] ?? null;
  if (!se) fail(`weights: region '${name}' has no standard errors`);
  const rows: number[] = [];
  for (let i = 0; i < data.participants.length; i++) {
    if (asideAll[i] || aside?.has(i)) continue;
    if (!Number.isFinite(values[i])) continue;
    // Weighted fits refuse, never drop, a participant with a value but no usable standard error.
    if (!(Number.isFinite(se[i]) && se[i] > 0)) {
      fail(
        `participant '${data.participants[i]}' has a contrast value but no first-level standard error; weights 'first-level-se' need one for every participant with a value (add it, or set the participant aside)`,
      );
    }
    if (hasModelColumns(prep, i)) rows.push(i);
  }
  return rows;
}
