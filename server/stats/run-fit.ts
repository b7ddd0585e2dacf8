/**
 * The fit orchestrator: turns a model (ModelSpec) and the joined numbers
 * (FitData) into a FitResult, region by region.
 *
 * Pure and deterministic: randomness comes only from `createRng(spec.seed)`,
 * and every permutation or bootstrap pass starts a fresh generator from that
 * seed; the permutation pass draws one rearrangement for all regions (a
 * bootstrap resamples each region alone), and the same inputs give
 * byte-identical JSON. Regions keep
 * the order of `spec.regions` (or of the brain table); participants keep the
 * order of the roster.
 *
 * Participants: those set aside (for every region, or for one region) are
 * left out; then, per region, anyone with a missing value in the contrast,
 * the predictor, the group (or a group outside the two levels) or any
 * covariate is dropped (listwise deletion), and `n` reports who is left.
 * With weights "first-level-se", a participant who has a contrast value but
 * no standard error (missing or not > 0) is refused with a StatsError naming
 * the participant and the region, never dropped.
 *
 * Kinds and estimators:
 * - one-sample: ols (t test; numeric covariates are mean-centred and the
 *   intercept is the adjusted mean), rank (Wilcoxon signed-rank), huber or
 *   bisquare (robust location by M-estimation).
 * - two-group: ols (Student t, or ANCOVA with covariates), welch (no
 *   covariates), rank (Mann–Whitney; no covariates), huber or bisquare.
 * - association: ols, huber, bisquare (slope of the predictor with
 *   covariates; with `group` the group dummy is a covariate, with
 *   `interaction` the tested term is predictor × group); rank (Spearman, or
 *   partial Spearman on ranks with covariates); skipped and bend
 *   (correlations without covariates).
 * - reliability: intraclass correlations across sessions; the estimate is
 *   ICC(2,1), all six forms are reported.
 * - weights "first-level-se": weighted meta-regression with τ² for one-sample,
 *   two-group and association fits with estimator ols.
 *
 * Inference: "parametric"; "permutation" (Freedman–Lane or sign flipping
 * for least squares, a generic rearrangement test for other estimators,
 * which refuses covariates); "bootstrap" (participants resampled with
 * replacement; BCa interval, percentile for skipped and bend correlations).
 * Correction over regions: none, Bonferroni, Holm, Benjamini–Hochberg, or
 * max-T (permutation only). Regions may differ in participants: every
 * region is fitted on its own, and permutation inference draws one
 * rearrangement of all participants for all regions (see permutationPass).
 *
 * Diagnostics (fits other than reliability): for every participant of every
 * region, the least-squares diagnostics of the region's design (see
 * diagnostics.ts), with flags; a sensitivity refit without the participants
 * flagged `outlier` or `influence`; the leave-one-out range of the estimate
 * (least squares, exact deletion formula).
 *
 * Throws StatsError naming the field or the region for unknown regions or
 * columns, a group level that is absent, estimators that do not fit the
 * kind, too few participants, and every method precondition. A cancelled fit
 * throws StatsError with code "cancelled".
 */
import {
  type DataShape,
  dataProblems,
  minimumParticipants,
  minimumPerGroup,
  type SpecProblem,
  specProblems,
} from "../../contract/fit-rules";
import {
  type FitData,
  type FitResult,
  type ModelSpec,
  type ParticipantDiagnostics,
  type RegionResult,
  modelSpecSchema,
} from "../../contract/spec";
import { bootstrapInterval } from "./bootstrap";
import { adjustPValues } from "./corrections";
import { leaveOneOutCorrelations } from "./compare-correlations";
import { type Design, type DesignTerm, buildDesign, compareCodePoints } from "./design-matrix";
import { regressionDiagnostics } from "./diagnostics";
import { StatsError } from "./errors";
import {
  type Estimator,
  type Kind,
  type RegionData,
  bootstrapP,
  bootstrapStatistic,
  estimateRegion,
  olsFit,
  permutationStatistic,
} from "./fit-methods";
import { type IntraclassCorrelation, intraclassCorrelations } from "./icc";
import { type QrDecomposition, qrDecompose, unscaledCovariance } from "./linear-model";
import { weightedLinearModel } from "./meta-regression";
import { sharedGenericPermutationTest, sharedLinearPermutationTest } from "./permutation";
import { extremeThreshold } from "./rearrangements";
import { createRng } from "./rng";

export interface RunFitOptions {
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}

/** Confidence level of every interval in a fit. */
export const FIT_LEVEL = 0.95;
/** Bins of the permutation null histogram. */
export const NULL_HISTOGRAM_BINS = 40;

type Covariate =
  | { name: string; numeric: readonly (number | null)[] }
  | { name: string; categorical: readonly (string | null)[] };

interface Prepared {
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
}

function fail(message: string): never {
  throw new StatsError(message);
}

function cancelled(): never {
  throw new StatsError("the fit was cancelled", "cancelled");
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

/** Participants set aside from every region, and per region, from the spec's set-aside list. Throws StatsError for unknown names. */
function setAsides(
  spec: ModelSpec,
  data: FitData,
): { asideAll: Uint8Array; asideRegion: Map<string, Set<number>> } {
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
  return { asideAll, asideRegion };
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

function prepare(specIn: ModelSpec, data: FitData): Prepared {
  const spec = parseSpec(specIn);
  checkData(data);
  const { asideAll, asideRegion } = setAsides(spec, data);
  const [problem] = ruleProblems(spec, data, asideAll);
  if (problem) fail(`${problem.field.split(".")[0]}: ${problem.message}`);
  return resolve(spec, data, asideAll, asideRegion);
}

/** The columns and levels a valid model names (the rules have passed). */
function resolve(
  spec: ModelSpec,
  data: FitData,
  asideAll: Uint8Array,
  asideRegion: Map<string, Set<number>>,
): Prepared {
  const wanted = spec.regions && spec.regions.length > 0 ? spec.regions : data.regions;
  const regionIndex = wanted.map((name) => data.regions.indexOf(name));
  const predictor =
    spec.kind === "association" && spec.predictor ? data.numericColumns[spec.predictor] : null;
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
  return { spec, data, regionIndex, predictor, group, levels, covariates, asideAll, asideRegion };
}

/**
 * Participant indices used in region r (after set-aside and listwise
 * deletion), checked against the minimum the kind and estimator need
 * (fit-rules.ts) and, for two groups, the minimum per group. Throws
 * StatsError otherwise.
 */
function regionRows(prep: Prepared, r: number): number[] {
  const s = prep.spec;
  const kind = s.kind as Kind;
  const rows = rowsFor(prep, r);
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
  return rows;
}

/** Reliability: per region the participants' values in every session (at least two participants). Throws StatsError otherwise. */
function sessionMatrix(prep: Prepared, r: number): number[][] {
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
  const { asideAll, asideRegion } = setAsides(spec, data);
  const columns = options.columns !== false;
  const shape: DataShape = { ...shapeOf(data, asideAll), ...options.naming };
  if (!columns) {
    shape.numericColumns = undefined;
    shape.categoricalColumns = undefined;
  }
  const problems = [...specProblems(spec), ...dataProblems(spec, shape)];
  const needsSheet = Boolean(spec.predictor || spec.group || spec.covariates.length > 0);
  if (problems.length > 0 || (!columns && needsSheet)) return problems;
  const prep = resolve(spec, data, asideAll, asideRegion);
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

/** Participant indices used in region r (after set-aside and listwise deletion). */
function rowsFor(prep: Prepared, r: number): number[] {
  const { spec, data, predictor, group, levels, covariates, asideAll, asideRegion } = prep;
  const name = data.regions[r];
  const aside = asideRegion.get(name);
  const values = data.values[r];
  const se = spec.weights === "first-level-se" ? (data.standardErrors?.[r] ?? null) : null;
  if (spec.weights === "first-level-se" && !se)
    fail(`weights: region '${name}' has no standard errors`);
  const rows: number[] = [];
  for (let i = 0; i < data.participants.length; i++) {
    if (asideAll[i] || aside?.has(i)) continue;
    if (!Number.isFinite(values[i])) continue;
    // Weighted fits refuse, never drop, a participant with a value but no usable standard error.
    if (se && !(Number.isFinite(se[i]) && se[i] > 0)) {
      fail(
        `participant '${data.participants[i]}' has a contrast value but no first-level standard error; weights 'first-level-se' need one for every participant with a value (add it, or set the participant aside)`,
      );
    }
    if (predictor) {
      const v = predictor[i];
      if (v === null || !Number.isFinite(v)) continue;
    }
    if (group && levels) {
      const g = group[i];
      if (g === null) continue;
      if (g !== levels[0] && g !== levels[1]) continue;
    }
    let complete = true;
    for (const c of covariates) {
      if ("numeric" in c) {
        const v = c.numeric[i];
        if (v === null || !Number.isFinite(v)) complete = false;
      } else if (c.categorical[i] === null) complete = false;
    }
    if (!complete) continue;
    rows.push(i);
  }
  return rows;
}

function designFor(
  prep: Prepared,
  rows: readonly number[],
): {
  design: Design;
  tested: number;
  covariateColumns: number;
  x: Float64Array | null;
  groupIndicator: Float64Array | null;
} {
  const { spec, predictor, group, levels, covariates } = prep;
  const n = rows.length;
  const terms: DesignTerm[] = [{ name: "(intercept)", kind: "intercept" }];
  let tested = 0;
  let x: Float64Array | null = null;
  let groupIndicator: Float64Array | null = null;
  if (group && levels)
    groupIndicator = Float64Array.from(rows, (i) => (group[i] === levels[0] ? 1 : 0));
  if (spec.kind === "two-group") {
    const g = groupIndicator as Float64Array;
    terms.push({ name: `${spec.group}: ${levels?.[0]}`, kind: "numeric", values: g });
    tested = 1;
    x = g;
    groupIndicator = null;
  } else if (spec.kind === "association") {
    x = Float64Array.from(rows, (i) => predictor?.[i] as number);
    terms.push({ name: spec.predictor as string, kind: "numeric", values: x });
    tested = 1;
    if (groupIndicator) {
      terms.push({
        name: `${spec.group}: ${levels?.[0]}`,
        kind: "numeric",
        values: groupIndicator,
      });
      if (spec.interaction) {
        terms.push({
          name: `${spec.predictor} × ${spec.group}: ${levels?.[0]}`,
          kind: "product",
          values: x,
          indicator: groupIndicator,
        });
        tested = 3;
      }
    }
  }
  const before = terms.length;
  for (const c of covariates) {
    if ("numeric" in c) {
      const values = Float64Array.from(rows, (i) => c.numeric[i] as number);
      if (spec.kind === "one-sample") {
        let m = 0;
        for (const v of values) m += v;
        m /= n || 1;
        for (let k = 0; k < n; k++) values[k] -= m;
      }
      terms.push({ name: c.name, kind: "numeric", values });
    } else {
      terms.push({
        name: c.name,
        kind: "categorical",
        values: rows.map((i) => c.categorical[i] as string),
      });
    }
  }
  const design = buildDesign(n, terms);
  let covariateColumns = 0;
  for (const t of design.termColumns.slice(before)) covariateColumns += t.columns.length;
  if (spec.kind === "association" && groupIndicator && !spec.interaction) covariateColumns += 1;
  return {
    design,
    tested,
    covariateColumns,
    x,
    groupIndicator: spec.kind === "association" ? groupIndicator : null,
  };
}

function inRegion<T>(region: string, f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (e instanceof StatsError && e.code !== "cancelled" && !e.message.startsWith("region '")) {
      throw new StatsError(`region '${region}': ${e.message}`, e.code);
    }
    throw e;
  }
}

/** 40-bin histogram of a null distribution; ±Infinity fall in the end bins. */
function nullHistogram(values: ArrayLike<number>, observed: number, bins = NULL_HISTOGRAM_BINS) {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < values.length; k++) {
    const v = values[k];
    if (Number.isFinite(v)) {
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  if (!(lo < hi)) {
    const c = Number.isFinite(lo) ? lo : 0;
    lo = c - 0.5;
    hi = c + 0.5;
  }
  const width = (hi - lo) / bins;
  const edges: number[] = [];
  for (let b = 0; b <= bins; b++) edges.push(b === bins ? hi : lo + b * width);
  const counts = new Array<number>(bins).fill(0);
  for (let k = 0; k < values.length; k++) {
    const v = values[k];
    let b = v === Infinity ? bins - 1 : v === -Infinity ? 0 : Math.floor((v - lo) / width);
    if (b >= bins) b = bins - 1;
    if (b < 0) b = 0;
    counts[b]++;
  }
  return { edges, counts, observed };
}

/** Throws if any number in the result is NaN or ±Infinity: no such value may leave the engine. */
function assertFinite(value: unknown, path: string): void {
  const bad = findNonFinite(value);
  if (bad !== null)
    throw new StatsError(`internal: the fit produced a non-finite number at ${path}${bad}`);
}

function findNonFinite(value: unknown): string | null {
  if (typeof value === "number") return Number.isFinite(value) ? null : "";
  if (value === null || typeof value !== "object") return null;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const v = value[i];
      if (typeof v === "number" ? !Number.isFinite(v) : v !== null && typeof v === "object") {
        const inner = findNonFinite(v);
        if (inner !== null) return `[${i}]${inner}`;
      }
    }
    return null;
  }
  const record = value as Record<string, unknown>;
  for (const key in record) {
    const v = record[key];
    if (typeof v === "number" ? !Number.isFinite(v) : v !== null && typeof v === "object") {
      const inner = findNonFinite(v);
      if (inner !== null) return `.${key}${inner}`;
    }
  }
  return null;
}

interface RegionWork {
  r: number;
  name: string;
  rows: number[];
  data: RegionData;
  qr: QrDecomposition | null;
  result: RegionResult;
}

/**
 * Runs a fit. Cost: per region O(n·p²) for least squares and diagnostics
 * (plus O(iterations·n·p²) for M-estimation, O(n²) for the skipped
 * correlation), times (resamples + 1) with permutation or bootstrap inference.
 */
export function runFit(spec: ModelSpec, data: FitData, options: RunFitOptions = {}): FitResult {
  const { onProgress, shouldCancel } = options;
  const prep = prepare(spec, data);
  const s = prep.spec;
  if (s.kind === "reliability") return runReliability(prep, options);
  const kind = s.kind as Kind;
  const regionCount = prep.regionIndex.length;
  const heavy = s.inference !== "parametric";
  const progress = (done: number) => onProgress?.(Math.min(1, done));
  const notes: string[] = [];
  const works: RegionWork[] = [];
  const participants: ParticipantDiagnostics[] = [];
  const qrCache = new Map<string, QrDecomposition>();
  // Parametric pass: estimates, diagnostics, sensitivity.
  prep.regionIndex.forEach((r, idx) => {
    if (shouldCancel?.()) cancelled();
    const name = data.regions[r];
    inRegion(name, () => {
      const rows = regionRows(prep, r);
      const { design, tested, covariateColumns, x, groupIndicator } = designFor(prep, rows);
      const y = Float64Array.from(rows, (i) => data.values[r][i]);
      const regionData: RegionData = {
        kind,
        estimator: s.estimator as Estimator,
        y,
        design,
        tested,
        covariateColumns,
        x,
        groupIndicator,
        level: FIT_LEVEL,
      };
      const key = `${rows.join(",")}`;
      let qr: QrDecomposition | null = qrCache.get(key) ?? null;
      if (!qr && design.n > design.p) {
        qr = qrDecompose(design.x, design.n, design.p, design.columnNames);
        qrCache.set(key, qr);
      }
      let result: RegionResult;
      if (s.weights === "first-level-se") {
        result = weightedRegion(prep, r, rows, regionData);
      } else {
        const est = estimateRegion(regionData, qr ?? undefined);
        result = {
          region: name,
          n: rows.length,
          estimate: est.estimate,
          se: est.se,
          statistic: est.statistic,
          df: est.df,
          p: est.p,
          pAdjusted: est.p,
          ciLow: est.ciLow,
          ciHigh: est.ciHigh,
          ...(est.r !== undefined ? { r: est.r } : {}),
          ...(est.rCiLow !== undefined ? { rCiLow: est.rCiLow, rCiHigh: est.rCiHigh } : {}),
          method: est.method,
          ...est.extras,
        };
        if (Array.isArray(est.extras.outlierRows)) {
          const ids = (est.extras.outlierRows as number[]).map((k) => data.participants[rows[k]]);
          delete result.outlierRows;
          result.projectionOutliers = ids;
        }
      }
      if (qr) {
        const diag = diagnosticsFor(prep, name, rows, regionData, qr, result);
        participants.push(...diag);
      }
      works.push({ r, name, rows, data: regionData, qr, result });
    });
    progress(heavy ? (0.1 * (idx + 1)) / regionCount : (idx + 1) / regionCount);
  });
  // Resampling pass.
  if (s.inference === "permutation") permutationPass(prep, works, options, notes);
  if (s.inference === "bootstrap") bootstrapPass(prep, works, options, notes);
  // Correction over regions.
  if (s.correction === "maxt") {
    notes.push(
      "Adjusted p: family-wise p-values from the maximum |statistic| over regions in the same rearrangements (max-T).",
    );
  } else {
    const adjusted = adjustPValues(
      works.map((w) => w.result.p),
      s.correction,
    );
    works.forEach((w, k) => {
      w.result.pAdjusted = adjusted[k];
    });
    notes.push(correctionNote(s.correction));
  }
  if (s.weights === "first-level-se") notes.push(...weightingNotes(s));
  notes.push(...diagnosticNotes());
  const result: FitResult = {
    regions: works.map((w) => w.result),
    participants,
    notes,
    kind,
    estimator: s.estimator,
    inference: s.inference,
    correction: s.correction,
    seed: s.seed,
    level: FIT_LEVEL,
  };
  assertFinite(result, "result");
  progress(1);
  return result;
}

function correctionNote(method: string): string {
  switch (method) {
    case "bonferroni":
      return "Adjusted p: Bonferroni, min(1, m·p) over the m regions.";
    case "holm":
      return "Adjusted p: Holm (1979) step-down over the regions.";
    case "bh":
      return "Adjusted p: Benjamini–Hochberg (1995) false discovery rate over the regions.";
    default:
      return "Adjusted p: no correction over regions (equal to p).";
  }
}

function weightingNotes(s: ModelSpec): string[] {
  const tau2 =
    s.tau2Method === "reml"
      ? "restricted maximum likelihood (REML; Viechtbauer 2005)"
      : "DerSimonian–Laird method of moments (DerSimonian & Laird 1986)";
  return [
    `Weights: each participant counts with 1/(se² + τ²), se the first-level standard error and τ² the residual variance of true differences between participants, estimated by ${tau2}.`,
    s.smallSample === "knapp-hartung"
      ? "Inference: Knapp–Hartung (2003) adjusted standard error with a t reference on n − p degrees of freedom."
      : "Inference: z statistic with a normal reference (no small-sample adjustment).",
    "I²: share of the residual variance due to true differences rather than measurement noise (Higgins & Thompson 2002); the noise share is mean(se²)/(mean(se²) + τ²) and the true-difference share τ²/(mean(se²) + τ²).",
    "Leave-one-out range: not given for weighted fits.",
  ];
}

function diagnosticNotes(): string[] {
  return [
    "Diagnostics come from the least-squares fit of each region's design, whatever the estimator.",
    "Flag outlier: externally studentized residual beyond the Bonferroni critical value t(1 − 0.05/(2n), n − p − 1) (Cook & Weisberg 1982; Weisberg 2005, §9.4).",
    "Flag leverage: hat value above 2p/n (Hoaglin & Welsch 1978), or equal to 1; at leverage 1 the studentized residual and Cook's distance are undefined and shown as empty.",
    "Flag influence: Cook's distance above 4/n (Bollen & Jackman 1990).",
    "Sensitivity: the same estimator refitted without participants flagged outlier or influence.",
    "Squared Mahalanobis distance (in the exported participant rows): distance of the participant's design values from their mean, (n − 1)(h − 1/n), leverage rescaled.",
  ];
}

function diagnosticsFor(
  prep: Prepared,
  region: string,
  rows: number[],
  d: RegionData,
  qr: QrDecomposition,
  result: RegionResult,
): ParticipantDiagnostics[] {
  const fit = olsFit(d, qr);
  const diag = regressionDiagnostics(qr, fit, { interceptColumn: 0 });
  const names = d.design.columnNames;
  const ids = prep.data.participants;
  const out: ParticipantDiagnostics[] = diag.rows.map((row, k) => {
    const dfbetas: Record<string, number | null> | null = row.dfbetas ? {} : null;
    if (row.dfbetas && dfbetas) {
      for (let j = 0; j < names.length; j++) dfbetas[names[j]] = row.dfbetas[j];
    }
    return {
      participant: ids[rows[k]],
      region,
      leverage: row.leverage,
      studentizedResidual: row.externalStudentized,
      cooksDistance: row.cooksDistance,
      flags: row.flags,
      internalStudentizedResidual: row.internalStudentized,
      dffits: row.dffits,
      dfbetas,
      mahalanobis: row.mahalanobis,
      value: d.y[k],
      fitted: fit.fitted[k],
      residual: fit.residuals[k],
    };
  });
  result.vif = diag.vif;
  // the flags' cut-offs, so the influence view draws the very values the flags used
  result.flagThresholds = diag.thresholds;
  result.flagged = {
    outlier: diag.rows.filter((r) => r.flags.includes("outlier")).length,
    leverage: diag.rows.filter((r) => r.flags.includes("leverage")).length,
    influence: diag.rows.filter((r) => r.flags.includes("influence")).length,
  };
  // Leave-one-out range of the least-squares coefficient, exact: b − b(i) = (XᵀX)⁻¹x_i e_i/(1 − h_i).
  // (Weighted fits: the exact deletion formula is that of unweighted least squares, not of the weighted estimate, so no range is given.)
  if ((d.estimator === "ols" || d.estimator === "welch") && prep.spec.weights === "none") {
    const cov = unscaledCovariance(qr);
    const p = qr.p;
    let lo = Infinity;
    let hi = -Infinity;
    let loK = -1;
    let hiK = -1;
    for (let k = 0; k < rows.length; k++) {
      const h = qr.hat[k];
      if (h > 1 - 1e-8) continue;
      let c = 0;
      for (let j = 0; j < p; j++) c += cov[d.tested * p + j] * d.design.x[k * p + j];
      const value = fit.coefficients[d.tested] - (c * fit.residuals[k]) / (1 - h);
      if (value < lo) {
        lo = value;
        loK = k;
      }
      if (value > hi) {
        hi = value;
        hiK = k;
      }
    }
    if (loK >= 0) {
      result.leaveOneOut = {
        estimateMin: lo,
        estimateMax: hi,
        minWithout: ids[rows[loK]],
        maxWithout: ids[rows[hiK]],
      };
    }
    if (d.kind === "association" && d.design.p === 2) {
      try {
        const loo = leaveOneOutCorrelations(d.x as Float64Array, d.y);
        result.leaveOneOut = {
          ...(result.leaveOneOut as Record<string, unknown> | undefined),
          rMin: loo.min,
          rMax: loo.max,
          rMinWithout: ids[rows[loo.minIndex]],
          rMaxWithout: ids[rows[loo.maxIndex]],
        };
      } catch (e) {
        if (!(e instanceof StatsError)) throw e;
      }
    }
  }
  // Sensitivity: refit without participants flagged outlier or influence.
  const drop = new Set<number>();
  diag.rows.forEach((row, k) => {
    if (row.flags.includes("outlier") || row.flags.includes("influence")) drop.add(k);
  });
  if (drop.size > 0 && prep.spec.weights === "none") {
    const keep = rows.filter((_, k) => !drop.has(k));
    const excluded = rows.filter((_, k) => drop.has(k)).map((i) => ids[i]);
    try {
      const { design, tested, covariateColumns, x, groupIndicator } = designFor(prep, keep);
      const reduced: RegionData = {
        ...d,
        y: Float64Array.from(keep, (i) => prep.data.values[prep.data.regions.indexOf(region)][i]),
        design,
        tested,
        covariateColumns,
        x,
        groupIndicator,
      };
      const est = estimateRegion(reduced);
      result.sensitivity = {
        excluded,
        n: keep.length,
        estimate: est.estimate,
        p: est.p,
        ciLow: est.ciLow,
        ciHigh: est.ciHigh,
        ...(est.r !== undefined ? { r: est.r } : {}),
      };
    } catch (e) {
      if (!(e instanceof StatsError)) throw e;
      result.sensitivity = { excluded, n: keep.length, error: e.message };
    }
  }
  return out;
}

function weightedRegion(prep: Prepared, r: number, rows: number[], d: RegionData): RegionResult {
  const se = prep.data.standardErrors?.[r] as Float64Array;
  const p = d.design.p;
  const X: number[][] = [];
  for (let k = 0; k < rows.length; k++) X.push(Array.from(d.design.x.subarray(k * p, (k + 1) * p)));
  const w = weightedLinearModel({
    y: d.y,
    se: Float64Array.from(rows, (i) => se[i]),
    X,
    tested: d.tested,
    tau2Method: prep.spec.tau2Method,
    smallSample: prep.spec.smallSample,
    level: FIT_LEVEL,
    participants: rows.map((i) => prep.data.participants[i]),
  });
  return {
    region: prep.data.regions[r],
    n: rows.length,
    estimate: w.estimate,
    se: w.se,
    statistic: w.statistic,
    df: w.df,
    p: w.p,
    pAdjusted: w.p,
    ciLow: w.ciLow,
    ciHigh: w.ciHigh,
    method: `weighted by first-level standard errors with residual between-participant variance τ² (${prep.spec.tau2Method === "reml" ? "REML" : "DerSimonian–Laird"}${prep.spec.smallSample === "knapp-hartung" ? ", Knapp–Hartung" : ""})`,
    tau2: w.tau2,
    tau2Se: w.tau2Se,
    i2: w.i2,
    noiseShare: w.noiseShare,
    trueShare: w.trueShare,
  };
}

function scaledProgress(options: RunFitOptions, start: number, span: number) {
  return (f: number) =>
    options.onProgress?.(Math.min(1, start + span * Math.min(1, Math.max(0, f))));
}

/**
 * Permutation inference over the fit's regions. Each region keeps its own
 * participants; all regions share one rearrangement of the participants
 * available in at least one region (N, roster order): one sign vector, or
 * one order σ of which each region keeps its own participants in σ's order
 * (rule and reasoning in rearrangements.ts). So max-T controls the
 * family-wise error over all regions (Westfall & Young 1993; Winkler et
 * al. 2014), and every region's own p follows the same draws.
 *
 * What holds for a region's numbers: given the seed they are deterministic;
 * when every region has the same participants nothing depends on the other
 * regions (the draw runs over exactly those participants, as when the
 * region is fitted alone, two-group label assignments included); an exact
 * p (all rearrangements enumerated) is the same whether the region is
 * fitted alone or with others, provided both runs enumerate (with regions
 * that differ, enumeration needs 2^N or N! ≤ resamples for all N); a Monte
 * Carlo p in a fit whose regions differ in participants depends on N and on
 * which participants are shared, so it is an equally valid draw but not the
 * same number as when the region is fitted alone. Least squares: a region
 * with all N participants sees, draw for draw, what it sees alone (sign
 * flips, Freedman–Lane orders).
 */
function permutationPass(
  prep: Prepared,
  works: RegionWork[],
  options: RunFitOptions,
  notes: string[],
): void {
  const s = prep.spec;
  const maxT = s.correction === "maxt";
  // The shared participants: available in at least one region, in roster order.
  const position = new Int32Array(prep.data.participants.length).fill(-1);
  for (const w of works) for (const i of w.rows) position[i] = 0;
  let shared = 0;
  for (let i = 0; i < position.length; i++) if (position[i] === 0) position[i] = shared++;
  const membersOf = (rows: readonly number[]) => Int32Array.from(rows, (i) => position[i]);
  const differ = works.some((w) => w.rows.length !== shared);
  const progress = scaledProgress(options, 0.1, 0.9);
  if (s.estimator === "ols") {
    // Regions on the same participants form one block (one design, the kernel's batched product).
    const groups = new Map<string, RegionWork[]>();
    for (const w of works) {
      const key = w.rows.join(",");
      const list = groups.get(key) ?? [];
      list.push(w);
      groups.set(key, list);
    }
    const lists = [...groups.values()];
    const scheme = s.kind === "one-sample" ? "sign-flip" : "freedman-lane";
    const res = sharedLinearPermutationTest({
      participants: shared,
      blocks: lists.map((list) => {
        const d = list[0].data;
        return {
          design: d.design.x,
          n: d.design.n,
          p: d.design.p,
          tested: d.tested,
          y: list.map((w) => w.data.y),
          members: membersOf(list[0].rows),
          label: list[0].name,
        };
      }),
      scheme,
      resamples: s.resamples,
      rng: createRng(s.seed),
      maxT,
      keepNull: true,
      onProgress: progress,
      shouldCancel: options.shouldCancel,
    });
    let k = 0;
    for (const list of lists) {
      for (const w of list) {
        const nulls = res.nullStatistics?.[k] ?? new Float32Array(0);
        applyPermutation(
          w,
          res.p[k],
          res.observed[k],
          res.exact,
          res.rearrangements,
          nulls,
          scheme === "sign-flip" ? "sign flipping" : "Freedman–Lane",
        );
        if (res.pMaxT) w.result.pAdjusted = res.pMaxT[k];
        k++;
      }
    }
    notes.push(
      s.kind === "one-sample"
        ? "p: sign-flipping permutation test of the t statistic (Winkler et al. 2014)."
        : "p: Freedman–Lane permutation test of the t statistic (Freedman & Lane 1983).",
    );
  } else {
    const plans = works.map((w) => permutationStatistic(w.data));
    const res = sharedGenericPermutationTest({
      participants: shared,
      regions: works.map((w, idx) => ({
        members: membersOf(w.rows),
        statistic: plans[idx].statistic,
        slots: plans[idx].slots,
        groupSizes: plans[idx].groupSizes,
        label: w.name,
      })),
      scheme: plans[0].scheme,
      resamples: s.resamples,
      rng: createRng(s.seed),
      onProgress: progress,
      shouldCancel: options.shouldCancel,
    });
    works.forEach((w, idx) => {
      applyPermutation(
        w,
        res.p[idx],
        res.observed[idx],
        res.exact,
        res.rearrangements,
        res.nullStatistics[idx],
        plans[idx].name,
      );
    });
    if (maxT) {
      const m = res.rearrangements;
      const maxima = new Float64Array(m);
      for (let k = 0; k < m; k++) {
        let best = 0;
        for (const nulls of res.nullStatistics) best = Math.max(best, Math.abs(nulls[k]));
        maxima[k] = best;
      }
      works.forEach((w, idx) => {
        const threshold = extremeThreshold(res.observed[idx]);
        let count = 0;
        for (let k = 0; k < m; k++) if (maxima[k] >= threshold) count++;
        w.result.pAdjusted = count / m;
      });
    }
    notes.push(
      "p: permutation test of the estimator's statistic (generic rearrangement test; the same rearrangements in every region).",
    );
  }
  if (differ) {
    notes.push(
      `Regions differ in participants (empty cells or set-asides in one region): each region is fitted on its own participants, and all regions share one rearrangement of the ${shared} participants available in at least one region — ${
        s.kind === "one-sample"
          ? "one sign vector, each region taking the signs of its own participants"
          : "one order, each region keeping its own participants in that order"
      } — so the rearranged statistics of all regions come from the same draws (Westfall & Young 1993; Winkler et al. 2014). Rearrangements are enumerated exhaustively only when the ${shared} participants have at most ${s.resamples} of them (${
        s.kind === "one-sample" ? `2^${shared} sign vectors` : `${shared}! orders`
      }).`,
    );
  }
}

function applyPermutation(
  w: RegionWork,
  p: number,
  observed: number,
  exact: boolean,
  rearrangements: number,
  nulls: ArrayLike<number>,
  scheme: string,
): void {
  const res = w.result;
  res.pParametric = res.p;
  res.p = p;
  res.pAdjusted = p;
  res.permutation = { scheme, exact, rearrangements, observed };
  res.nullHistogram = nullHistogram(nulls, observed);
}

function bootstrapPass(
  prep: Prepared,
  works: RegionWork[],
  options: RunFitOptions,
  notes: string[],
): void {
  const s = prep.spec;
  const total = works.length;
  const method = s.estimator === "skipped" || s.estimator === "bend" ? "percentile" : "bca";
  works.forEach((w, idx) => {
    if (options.shouldCancel?.()) cancelled();
    const res = inRegion(w.name, () =>
      bootstrapInterval({
        n: w.data.y.length,
        statistic: bootstrapStatistic(w.data),
        resamples: s.resamples,
        rng: createRng(s.seed),
        level: FIT_LEVEL,
        method,
      }),
    );
    const r = w.result;
    r.pParametric = r.p;
    r.ciLowParametric = r.ciLow;
    r.ciHighParametric = r.ciHigh;
    r.se = res.se;
    r.ciLow = res.ciLow;
    r.ciHigh = res.ciHigh;
    r.p = bootstrapP(res.distribution);
    r.pAdjusted = r.p;
    r.statistic = null;
    r.df = null;
    if (
      s.kind === "association" &&
      (s.estimator === "rank" || s.estimator === "skipped" || s.estimator === "bend")
    ) {
      r.rCiLow = res.ciLow;
      r.rCiHigh = res.ciHigh;
    }
    r.bootstrap = {
      method,
      resamples: s.resamples,
      kept: res.distribution.length,
      discarded: res.discarded,
    };
    options.onProgress?.(Math.min(1, 0.1 + (0.9 * (idx + 1)) / total));
  });
  notes.push(
    `Intervals: ${method === "bca" ? "bias-corrected and accelerated (BCa)" : "percentile"} bootstrap over participants (Efron & Tibshirani 1993); p: 2·min(A, 1 − A), A the share of bootstrap estimates below 0.`,
  );
}

/**
 * One ICC form as a fit reports it: { value, ciLow, ciHigh, f, df1, df2, p }.
 * A k-session lower bound past the Spearman–Brown pole is unbounded below
 * (−Infinity in icc.ts) and is reported as null.
 */
function iccForm(x: IntraclassCorrelation) {
  return {
    value: x.value,
    ciLow: Number.isFinite(x.ciLow) ? x.ciLow : null,
    ciHigh: Number.isFinite(x.ciHigh) ? x.ciHigh : null,
    f: x.f,
    df1: x.df1,
    df2: x.df2,
    p: x.p,
  };
}

function runReliability(prep: Prepared, options: RunFitOptions): FitResult {
  const { data, spec } = prep;
  const sessions = data.sessions as NonNullable<FitData["sessions"]>;
  const k = sessions.labels.length;
  const regions: RegionResult[] = [];
  prep.regionIndex.forEach((r, idx) => {
    if (options.shouldCancel?.()) cancelled();
    const name = data.regions[r];
    inRegion(name, () => {
      const matrix = sessionMatrix(prep, r);
      const icc = intraclassCorrelations(matrix, { level: FIT_LEVEL });
      const main = icc.icc21;
      regions.push({
        region: name,
        n: matrix.length,
        estimate: main.value,
        se: null,
        statistic: main.f,
        df: null,
        p: main.p,
        pAdjusted: main.p,
        ciLow: main.ciLow,
        ciHigh: main.ciHigh,
        method:
          "intraclass correlation ICC(2,1), two-way random effects, absolute agreement (Shrout & Fleiss 1979)",
        sessions: k,
        df1: main.df1,
        df2: main.df2,
        icc11: iccForm(icc.icc11),
        icc21: iccForm(icc.icc21),
        icc31: iccForm(icc.icc31),
        icc1k: iccForm(icc.icc1k),
        icc2k: iccForm(icc.icc2k),
        icc3k: iccForm(icc.icc3k),
      });
    });
    options.onProgress?.((idx + 1) / prep.regionIndex.length);
  });
  const notes: string[] = [];
  if (spec.correction === "maxt")
    fail("correction: max-T correction requires permutation inference");
  const adjusted = adjustPValues(
    regions.map((x) => x.p),
    spec.correction,
  );
  regions.forEach((x, i) => {
    x.pAdjusted = adjusted[i];
  });
  notes.push(correctionNote(spec.correction));
  notes.push("p: F test of the hypothesis that the population ICC is 0 (one-sided).");
  notes.push(
    "ICC(1,1), ICC(2,1), ICC(3,1) and their k-session forms ICC(1,k), ICC(2,k), ICC(3,k) after Shrout & Fleiss (1979), with 95% confidence intervals; a k-session lower bound that is unbounded below is shown as empty.",
  );
  const result: FitResult = {
    regions,
    participants: [],
    notes,
    kind: "reliability",
    estimator: spec.estimator,
    inference: spec.inference,
    correction: spec.correction,
    seed: spec.seed,
    level: FIT_LEVEL,
  };
  assertFinite(result, "result");
  return result;
}
