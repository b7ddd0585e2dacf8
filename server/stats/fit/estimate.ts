/**
 * Stage 2 of a fit, estimate: for one region of a prepared fit, the design
 * (intercept, the tested term, covariates), its least-squares decomposition
 * (shared by regions on the same participants) and the estimator's parametric
 * result — or, with weights "first-level-se", the weighted meta-regression.
 * Hands a `RegionWork` (rows, region data, decomposition, result) to the
 * diagnose stage and, with all regions done, to the infer stage.
 */
import type { RegionResult } from "../../../contract/spec";
import { type Design, type DesignTerm, buildDesign } from "../design-matrix";
import { estimateRegion, type OlsFit, olsFit } from "../fit-methods";
import { type QrDecomposition, qrDecompose } from "../linear-model";
import { weightedLinearModel } from "../meta-regression";
import type { Estimator, Kind, RegionData } from "../region-data";
import { FIT_LEVEL, rowsKey, valuesAt } from "./common";
import { isSharedRows, type Prepared, regionRows } from "./prepare";

/** One region after the estimate stage: what the diagnose and infer stages work on. */
export interface RegionWork {
  r: number;
  name: string;
  rows: readonly number[];
  data: RegionData;
  qr: QrDecomposition | null;
  /**
   * The least-squares fit of the design (`olsFit`) when the estimate made
   * it (the ordinary estimator, unweighted): the diagnose stage reads it
   * instead of solving again; run-fit.ts lets it go once diagnosed.
   */
  leastSquares: OlsFit | null;
  result: RegionResult;
}

/**
 * The parametric pass over region r: its participants (regionRows, which
 * throws StatsError below the minimum), its design and data, the
 * decomposition (taken from `qrCache` when an earlier region had the same
 * participants) and the estimator's result.
 */
export function estimateRegionWork(
  prep: Prepared,
  r: number,
  qrCache: Map<string, QrDecomposition>,
): RegionWork {
  const { data } = prep;
  const s = prep.spec;
  const { name, rows, data: regionData } = regionDesign(prep, r);
  const { design } = regionData;
  const key = rowsKey(rows);
  let qr: QrDecomposition | null = qrCache.get(key) ?? null;
  if (!qr && design.n > design.p) {
    qr = qrDecompose(design.x, design.n, design.p, design.columnNames);
    qrCache.set(key, qr);
  }
  let result: RegionResult;
  let leastSquares: OlsFit | null = null;
  if (s.weights === "first-level-se") {
    result = weightedRegion(prep, r, rows, regionData);
  } else {
    if (qr && s.estimator === "ols") leastSquares = olsFit(regionData, qr);
    const est = estimateRegion(regionData, qr ?? undefined, leastSquares ?? undefined);
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
  return { r, name, rows, data: regionData, qr, leastSquares, result };
}

/**
 * Region r's participants (regionRows, which throws StatsError below the
 * minimum), design and values: what a permutation test reads of a region,
 * without the estimate. Cost O(n·p).
 */
export function regionDesign(
  prep: Prepared,
  r: number,
): Pick<RegionWork, "name" | "rows" | "data"> {
  const { data } = prep;
  const s = prep.spec;
  const rows = regionRows(prep, r);
  const { design, tested, covariateColumns, x, groupIndicator } = designFor(prep, rows);
  const y = valuesAt(data.values[r], rows);
  return {
    name: data.regions[r],
    rows,
    data: {
      kind: s.kind as Kind,
      estimator: s.estimator as Estimator,
      y,
      design,
      tested,
      covariateColumns,
      x,
      groupIndicator,
      level: FIT_LEVEL,
    },
  };
}

/**
 * The design of a region on the given participants (buildDesign in
 * design-matrix.ts): intercept, the tested term (group indicator of the first
 * level, the predictor, or predictor × group), then the covariates (numeric
 * ones mean-centred for one sample). Returns the index of the tested column,
 * the number of covariate columns, the predictor or group values and, for an
 * association with a group, the group indicator.
 */
export function designFor(prep: Prepared, rows: readonly number[]): RegionDesignOf {
  if (!isSharedRows(prep, rows)) return buildRegionDesign(prep, rows);
  // Regions on all the eligible participants share one design (read only, as every design is).
  let shared = sharedDesigns.get(rows);
  if (!shared) {
    shared = buildRegionDesign(prep, rows);
    sharedDesigns.set(rows, shared);
  }
  return shared;
}

/** What `designFor` gives. */
export interface RegionDesignOf {
  design: Design;
  tested: number;
  covariateColumns: number;
  x: Float64Array | null;
  groupIndicator: Float64Array | null;
}

/** The design of the shared rows of a prepared fit (`isSharedRows`), built once. */
const sharedDesigns = new WeakMap<readonly number[], RegionDesignOf>();

function buildRegionDesign(prep: Prepared, rows: readonly number[]): RegionDesignOf {
  const { spec, predictor, group, levels, covariates } = prep;
  const n = rows.length;
  const terms: DesignTerm[] = [{ name: "(intercept)", kind: "intercept" }];
  let tested = 0;
  let x: Float64Array | null = null;
  let groupIndicator: Float64Array | null = null;
  if (group && levels) {
    const indicator = new Float64Array(n);
    for (let k = 0; k < n; k++) indicator[k] = group[rows[k]] === levels[0] ? 1 : 0;
    groupIndicator = indicator;
  }
  if (spec.kind === "two-group") {
    const g = groupIndicator as Float64Array;
    terms.push({ name: `${spec.group}: ${levels?.[0]}`, kind: "numeric", values: g });
    tested = 1;
    x = g;
    groupIndicator = null;
  } else if (spec.kind === "association") {
    x = valuesAt(predictor ?? [], rows);
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
      const values = valuesAt(c.numeric, rows);
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

/** The result of a region weighted by first-level standard errors: the weighted meta-regression with τ² (meta-regression.ts). */
function weightedRegion(
  prep: Prepared,
  r: number,
  rows: readonly number[],
  d: RegionData,
): RegionResult {
  const se = prep.data.standardErrors?.[r] as Float64Array;
  const p = d.design.p;
  const X: number[][] = [];
  for (let k = 0; k < rows.length; k++) X.push(Array.from(d.design.x.subarray(k * p, (k + 1) * p)));
  const w = weightedLinearModel({
    y: d.y,
    se: valuesAt(se, rows),
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
