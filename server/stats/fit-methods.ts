/**
 * One region of a fit: the parametric estimate for every (kind, estimator)
 * pair, the statistic a permutation test rearranges, and the statistic a
 * bootstrap resamples. The orchestrator (run-fit.ts) chooses participants,
 * builds the design and calls these; each function is pure.
 *
 * Conventions:
 * - two-group: estimate = first level − second level; the group column in
 *   the design is 1 for the first level.
 * - association: the tested coefficient is the predictor's slope, or the
 *   predictor × group slope difference (first level − second) with
 *   `interaction`.
 * - r for a slope is the partial correlation implied by its t,
 *   r = t/√(t² + df) (exact for least squares; for M-estimates the same
 *   conversion of the robust t), with a Fisher-z interval on n − 3 − k,
 *   k = number of other non-intercept columns (Fisher 1924).
 */
import { fisherInterval, pearsonR } from "./correlation";
import { mean, sampleSd, sortedCopy } from "./descriptive";
import type { Design } from "./design-matrix";
import { studentTTwoSidedP } from "./distributions";
import {
  effectSizesFromT,
  noncentralityInterval,
  standardizedMeanDifference,
  cohensDOneSample,
} from "./effect-size";
import { StatsError, require } from "./errors";
import { walshMedian, differenceMedian } from "./hodges-lehmann";
import {
  type LinearModelFit,
  type QrDecomposition,
  coefficientInterval,
  qrDecompose,
  solveLinearModel,
} from "./linear-model";
import { mannWhitneyU } from "./mann-whitney";
import { averageRanks } from "./ranks";
import { percentageBendCorrelation, skippedCorrelation } from "./robust-correlation";
import { type RobustPsi, robustCoefficientInterval, robustLinearModel } from "./robust-regression";
import { type SpearmanPMethod, spearmanCorrelation } from "./spearman";
import { welchTTest } from "./two-sample-t";
import { wilcoxonSignedRank } from "./wilcoxon-signed-rank";

export type Kind = "one-sample" | "two-group" | "association";
export type Estimator = "ols" | "welch" | "rank" | "huber" | "bisquare" | "skipped" | "bend";

/** Everything one region's computation needs, already restricted to its participants. */
export interface RegionData {
  kind: Kind;
  estimator: Estimator;
  /** Contrast values of the included participants. */
  y: Float64Array;
  design: Design;
  /** Index of the tested column in the design. */
  tested: number;
  /** Number of covariate columns (non-intercept columns other than the tested one and, for association, the predictor/group terms). */
  covariateColumns: number;
  /** association: the predictor's values; two-group: 1 for the first level, 0 for the second. */
  x: Float64Array | null;
  /** For association with group (and interaction): 1 for the first level. */
  groupIndicator: Float64Array | null;
  level: number;
}

/** The numbers of a region result computed here (names as in RegionResult). */
export interface RegionEstimate {
  estimate: number;
  se: number | null;
  statistic: number | null;
  df: number | null;
  p: number;
  ciLow: number | null;
  ciHigh: number | null;
  r?: number;
  rCiLow?: number;
  rCiHigh?: number;
  method: string;
  extras: Record<string, unknown>;
}

const PSI_NAME: Record<RobustPsi, string> = {
  huber: "Huber M-estimation (k = 1.345)",
  bisquare: "Tukey bisquare M-estimation (c = 4.685, started from Huber)",
};

function interval(e: { value: number; ciLow: number; ciHigh: number }) {
  return { value: e.value, ciLow: e.ciLow, ciHigh: e.ciHigh };
}

function split(y: Float64Array, indicator: Float64Array): [Float64Array, Float64Array] {
  const a: number[] = [];
  const b: number[] = [];
  for (let i = 0; i < y.length; i++) (indicator[i] === 1 ? a : b).push(y[i]);
  return [Float64Array.from(a), Float64Array.from(b)];
}

function hasCovariates(d: RegionData): boolean {
  return d.covariateColumns > 0;
}

function partialR(
  t: number,
  df: number,
  n: number,
  k: number,
  level: number,
): { r: number; rCiLow?: number; rCiHigh?: number } {
  const r = t / Math.sqrt(t * t + df);
  const ci = fisherInterval(r, n, { k, level });
  return ci.low === null || ci.high === null ? { r } : { r, rCiLow: ci.low, rCiHigh: ci.high };
}

function correlationFields(c: { r: number; ciLow: number | null; ciHigh: number | null }): {
  r: number;
  rCiLow?: number;
  rCiHigh?: number;
} {
  return c.ciLow === null || c.ciHigh === null
    ? { r: c.r }
    : { r: c.r, rCiLow: c.ciLow, rCiHigh: c.ciHigh };
}

/** Least-squares fit of the region's design (decomposition shared through `qr` when given). */
export function olsFit(
  d: RegionData,
  qr?: QrDecomposition,
): LinearModelFit & { qr: QrDecomposition } {
  const { design } = d;
  require(design.n >
    design.p, `too few participants (n = ${design.n}) for a model with ${design.p} coefficients`);
  const q = qr ?? qrDecompose(design.x, design.n, design.p, design.columnNames);
  return { ...solveLinearModel(q, d.y), qr: q };
}

function olsEstimate(d: RegionData, qr?: QrDecomposition): RegionEstimate {
  const fit = olsFit(d, qr);
  const j = d.tested;
  const se = fit.se[j];
  const t = fit.t[j];
  const p = fit.pValues[j];
  if (se === null || t === null || p === null)
    throw new StatsError("the residual variance is zero, so the standard error is undefined");
  const ci = coefficientInterval(fit, j, d.level);
  const base = {
    estimate: fit.coefficients[j],
    se,
    statistic: t,
    df: fit.df,
    p,
    ciLow: ci.low,
    ciHigh: ci.high,
  };
  const sigma = fit.sigma as number;
  if (d.kind === "one-sample") {
    const extras: Record<string, unknown> = {
      mean: mean(d.y),
      sd: d.y.length > 1 ? sampleSd(d.y) : null,
    };
    if (!hasCovariates(d)) {
      extras.cohensD = interval(cohensDOneSample(d.y, { level: d.level }));
      return { ...base, method: "one-sample t test", extras };
    }
    // d = adjusted mean / residual SD; t = d / √[(XᵀX)⁻¹]₀₀
    const dValue = fit.coefficients[j] / sigma;
    const scale = sigma / se;
    const nc = noncentralityInterval(dValue * scale, fit.df, d.level);
    extras.cohensD = { value: dValue, ciLow: nc.low / scale, ciHigh: nc.high / scale };
    return {
      ...base,
      method: "linear model, intercept with mean-centred covariates (adjusted mean)",
      extras,
    };
  }
  if (d.kind === "two-group") {
    const [a, b] = split(d.y, d.x as Float64Array);
    const extras: Record<string, unknown> = {
      n1: a.length,
      n2: b.length,
      mean1: mean(a),
      mean2: mean(b),
    };
    const es = hasCovariates(d)
      ? effectSizesFromT(fit.coefficients[j] / sigma, sigma / se, fit.df, d.level)
      : standardizedMeanDifference(a, b, { level: d.level });
    extras.cohensD = interval(es.d);
    extras.hedgesG = interval(es.g);
    return {
      ...base,
      method: hasCovariates(d)
        ? "linear model with covariates (ANCOVA), adjusted group difference"
        : "Student t test (pooled variance)",
      extras,
    };
  }
  // association
  const k = d.design.p - 2;
  const pr = partialR(t, fit.df, d.design.n, k, d.level);
  const extras: Record<string, unknown> = {};
  if (d.groupIndicator === null || j === 1) {
    const sy = sampleSd(d.y);
    const sx = sampleSd(d.x as Float64Array);
    extras.standardizedSlope = sy > 0 ? (fit.coefficients[j] * sx) / sy : null;
  }
  return {
    ...base,
    ...pr,
    method:
      j === 1
        ? d.design.p > 2
          ? "linear model: slope of the predictor adjusted for covariates, partial r"
          : "linear regression slope and Pearson r"
        : "linear model: difference in slopes between groups (interaction)",
    extras,
  };
}

function robustEstimate(d: RegionData, psi: RobustPsi): RegionEstimate {
  const { design } = d;
  require(design.n >
    design.p, `too few participants (n = ${design.n}) for a model with ${design.p} coefficients`);
  const fit = robustLinearModel(design.x, design.n, design.p, d.y, {
    psi,
    columnNames: design.columnNames,
  });
  const j = d.tested;
  const ci = robustCoefficientInterval(fit, j, d.level);
  const extras: Record<string, unknown> = {
    scale: fit.scale,
    iterations: fit.iterations,
    converged: fit.converged,
  };
  const base = {
    estimate: fit.coefficients[j],
    se: fit.se[j],
    statistic: fit.t[j],
    df: fit.df,
    p: fit.pValues[j],
    ciLow: ci.low,
    ciHigh: ci.high,
    method: `${PSI_NAME[psi]}, MAD scale, IRLS`,
    extras,
  };
  if (d.kind === "association")
    return { ...base, ...partialR(fit.t[j], fit.df, design.n, design.p - 2, d.level) };
  return base;
}

/** Ranks of a vector (mid-ranks) as a Float64Array. */
function rankOf(x: ArrayLike<number>): Float64Array {
  return averageRanks(x).ranks;
}

/**
 * Partial Spearman correlation: Pearson partial correlation of the mid-ranks
 * of y and the predictor, adjusting for the (numeric covariates' ranks and
 * categorical covariates' dummies); t on n − p df; Fisher-z interval with
 * variance 1.06/(n − 3 − k), extending Fieller, Hartley & Pearson (1957) to
 * the partial case (an approximation).
 */
function partialSpearman(d: RegionData): RegionEstimate {
  const { design } = d;
  const x = new Float64Array(design.x);
  const p = design.p;
  for (const term of design.termColumns) {
    if (term.levels) continue; // dummies stay 0/1
    for (const c of term.columns) {
      if (c === 0 && term.name === "(intercept)") continue;
      const col = new Float64Array(design.n);
      for (let i = 0; i < design.n; i++) col[i] = design.x[i * p + c];
      const rk = rankOf(col);
      for (let i = 0; i < design.n; i++) x[i * p + c] = rk[i];
    }
  }
  require(design.n >
    p, `too few participants (n = ${design.n}) for a model with ${p} coefficients`);
  const fit = solveLinearModel(qrDecompose(x, design.n, p, design.columnNames), rankOf(d.y));
  const t = fit.t[d.tested];
  if (t === null) throw new StatsError("the residual variance of the ranks is zero");
  const r = t / Math.sqrt(t * t + fit.df);
  const k = p - 2;
  const m = design.n - 3 - k;
  const ci =
    m > 0
      ? fisherInterval(r, design.n, { k, level: d.level, variance: 1.06 / m })
      : { low: null, high: null };
  return {
    estimate: r,
    se: null,
    statistic: t,
    df: fit.df,
    p: studentTTwoSidedP(t, fit.df),
    ciLow: ci.low,
    ciHigh: ci.high,
    ...correlationFields({ r, ciLow: ci.low, ciHigh: ci.high }),
    method: "partial Spearman correlation (ranks, linear adjustment for covariates)",
    extras: { exact: false },
  };
}

/** How a Spearman p-value was found, in a region's method words. */
const SPEARMAN_METHOD: Record<SpearmanPMethod, string> = {
  exact: "Spearman correlation, exact permutation p (S = Σd²)",
  edgeworth: "Spearman correlation, Edgeworth series p (S = Σd², Best & Roberts 1975)",
  t: "Spearman correlation, t approximation",
};

/**
 * The parametric estimate of one region. Throws StatsError when the
 * estimator does not apply (the orchestrator checks kind/estimator pairs
 * first) or a method's preconditions fail.
 */
export function estimateRegion(d: RegionData, qr?: QrDecomposition): RegionEstimate {
  const { kind, estimator } = d;
  if (estimator === "ols") return olsEstimate(d, qr);
  if (estimator === "huber" || estimator === "bisquare") return robustEstimate(d, estimator);
  if (kind === "one-sample") {
    require(estimator ===
      "rank", `estimator '${estimator}' is not available for kind 'one-sample'`);
    const w = wilcoxonSignedRank(d.y, { level: d.level });
    return {
      estimate: w.estimate,
      se: null,
      statistic: w.v,
      df: null,
      p: w.p,
      ciLow: w.ciLow,
      ciHigh: w.ciHigh,
      method: `Wilcoxon signed-rank test (${w.exact ? "exact" : "normal approximation with tie and continuity correction"}), Hodges–Lehmann pseudomedian`,
      extras: { exact: w.exact, zeros: w.zeros, z: w.z },
    };
  }
  if (kind === "two-group") {
    const [a, b] = split(d.y, d.x as Float64Array);
    if (estimator === "welch") {
      const w = welchTTest(a, b, { level: d.level });
      const es = standardizedMeanDifference(a, b, { level: d.level });
      return {
        estimate: w.estimate,
        se: w.se,
        statistic: w.t,
        df: w.df,
        p: w.p,
        ciLow: w.ciLow,
        ciHigh: w.ciHigh,
        method: "Welch t test (Welch–Satterthwaite df)",
        extras: {
          n1: w.n1,
          n2: w.n2,
          mean1: w.mean1,
          mean2: w.mean2,
          cohensD: interval(es.d),
          hedgesG: interval(es.g),
        },
      };
    }
    require(estimator === "rank", `estimator '${estimator}' is not available for kind 'two-group'`);
    const m = mannWhitneyU(a, b, { level: d.level });
    return {
      estimate: m.estimate,
      se: null,
      statistic: m.u,
      df: null,
      p: m.p,
      ciLow: m.ciLow,
      ciHigh: m.ciHigh,
      method: `Mann–Whitney U test (${m.exact ? "exact" : "normal approximation with tie and continuity correction"}), Hodges–Lehmann shift`,
      extras: {
        n1: m.n1,
        n2: m.n2,
        exact: m.exact,
        z: m.z,
        probabilitySuperiority: m.probabilitySuperiority,
      },
    };
  }
  // association
  const x = d.x as Float64Array;
  if (estimator === "rank") {
    if (hasCovariates(d) || d.groupIndicator !== null) return partialSpearman(d);
    const s = spearmanCorrelation(x, d.y, { level: d.level });
    return {
      estimate: s.r,
      se: null,
      statistic: s.pMethod === "t" ? s.t : s.s,
      df: s.df,
      p: s.p,
      ciLow: s.ciLow,
      ciHigh: s.ciHigh,
      ...correlationFields(s),
      method: SPEARMAN_METHOD[s.pMethod],
      extras: { exact: s.exact },
    };
  }
  if (estimator === "skipped") {
    const s = skippedCorrelation(x, d.y, { level: d.level });
    return {
      estimate: s.r,
      se: null,
      statistic: s.t,
      df: s.df,
      p: s.p,
      ciLow: s.ciLow,
      ciHigh: s.ciHigh,
      ...correlationFields(s),
      method:
        "skipped correlation (projection outliers removed, boxplot rule on ideal fourths), Pearson on the rest",
      extras: {
        nKept: s.nKept,
        outlierRows: s.outliers,
        adjustedT: s.adjustedT,
        adjustedCritical05: s.adjustedCritical,
        significantAt05: s.significantAt05,
      },
    };
  }
  require(estimator === "bend", `estimator '${estimator}' is not available for kind 'association'`);
  const b = percentageBendCorrelation(x, d.y);
  return {
    estimate: b.r,
    se: null,
    statistic: b.t,
    df: b.df,
    p: b.p,
    ciLow: null,
    ciHigh: null,
    r: b.r,
    method: "percentage-bend correlation (beta = 0.2)",
    extras: {},
  };
}

/**
 * The statistic a generic permutation test rearranges for estimators without
 * a linear kernel, with the scheme it needs. Each is centred at 0 under the
 * null hypothesis so the two-sided test compares |T*| with |T|. A
 * rearrangement on which the statistic does not exist (for example a robust
 * scale of 0) counts as at least as extreme as the observed one (+Infinity),
 * which can only make the p-value larger.
 */
export function permutationStatistic(d: RegionData): {
  scheme: "sign-flip" | "labels";
  groupSizes?: [number, number];
  /** "labels" with two groups: the participant (row of the region) each slot of `order` stands for */
  slots?: Int32Array;
  statistic: (order: Int32Array, signs: Float64Array) => number;
  name: string;
} {
  const { kind, estimator, y } = d;
  const n = y.length;
  if (kind === "one-sample") {
    if (estimator === "rank") {
      const nonZero: number[] = [];
      for (let i = 0; i < n; i++) if (y[i] !== 0) nonZero.push(i);
      const abs = Float64Array.from(nonZero, (i) => Math.abs(y[i]));
      const ranks = rankOf(abs);
      const m = nonZero.length;
      return {
        scheme: "sign-flip",
        name: "signed-rank V − n(n+1)/4",
        statistic: (_order, signs) => {
          let v = 0;
          for (let k = 0; k < m; k++) if (y[nonZero[k]] * signs[nonZero[k]] > 0) v += ranks[k];
          return v - (m * (m + 1)) / 4;
        },
      };
    }
    const psi = estimator as RobustPsi;
    const ones = new Float64Array(n).fill(1);
    return {
      scheme: "sign-flip",
      name: "robust location t",
      statistic: (_order, signs) => {
        const z = new Float64Array(n);
        for (let i = 0; i < n; i++) z[i] = y[i] * signs[i];
        try {
          return robustLinearModel(ones, n, 1, z, { psi }).t[0];
        } catch (e) {
          if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
          throw e;
        }
      },
    };
  }
  if (kind === "two-group") {
    const ind = d.x as Float64Array;
    const first: number[] = [];
    const second: number[] = [];
    for (let i = 0; i < n; i++) (ind[i] === 1 ? first : second).push(i);
    const units = first.concat(second); // identity order: first group, then second
    const n1 = first.length;
    const values = Float64Array.from(units, (i) => y[i]);
    const pick = (order: Int32Array): [Float64Array, Float64Array] => {
      const a = new Float64Array(n1);
      const b = new Float64Array(n - n1);
      for (let k = 0; k < n; k++) {
        if (k < n1) a[k] = values[order[k]];
        else b[k - n1] = values[order[k]];
      }
      return [a, b];
    };
    if (estimator === "welch") {
      return {
        scheme: "labels",
        groupSizes: [n1, n - n1],
        slots: Int32Array.from(units),
        name: "Welch t",
        statistic: (order) => {
          const [a, b] = pick(order);
          try {
            return welchTTest(a, b).t;
          } catch (e) {
            if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
            throw e;
          }
        },
      };
    }
    if (estimator === "rank") {
      const ranks = rankOf(values);
      return {
        scheme: "labels",
        groupSizes: [n1, n - n1],
        slots: Int32Array.from(units),
        name: "Mann–Whitney U − n1·n2/2",
        statistic: (order) => {
          let w = 0;
          for (let k = 0; k < n1; k++) w += ranks[order[k]];
          return w - (n1 * (n1 + 1)) / 2 - (n1 * (n - n1)) / 2;
        },
      };
    }
    const psi = estimator as RobustPsi;
    return {
      scheme: "labels",
      groupSizes: [n1, n - n1],
      slots: Int32Array.from(units),
      name: "robust t of the group difference",
      statistic: (order) => {
        const x = new Float64Array(n * 2);
        const z = new Float64Array(n);
        for (let k = 0; k < n; k++) {
          x[k * 2] = 1;
          x[k * 2 + 1] = k < n1 ? 1 : 0;
          z[k] = values[order[k]];
        }
        try {
          return robustLinearModel(x, n, 2, z, { psi }).t[1];
        } catch (e) {
          if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
          throw e;
        }
      },
    };
  }
  // association: rearrange the contrast values against the predictor
  const x = d.x as Float64Array;
  const permuted = (order: Int32Array): Float64Array => {
    const z = new Float64Array(n);
    for (let k = 0; k < n; k++) z[k] = y[order[k]];
    return z;
  };
  const guard = (f: () => number): number => {
    try {
      return f();
    } catch (e) {
      if (e instanceof StatsError) return Number.POSITIVE_INFINITY;
      throw e;
    }
  };
  if (estimator === "rank") {
    const rx = rankOf(x);
    const ry = rankOf(y);
    return {
      scheme: "labels",
      name: "Spearman rho",
      statistic: (order) =>
        pearsonR(
          rx,
          Float64Array.from(order, (k) => ry[k]),
        ) ?? Number.POSITIVE_INFINITY,
    };
  }
  if (estimator === "skipped") {
    return {
      scheme: "labels",
      name: "skipped correlation r",
      statistic: (order) => guard(() => skippedCorrelation(x, permuted(order)).r),
    };
  }
  if (estimator === "bend") {
    return {
      scheme: "labels",
      name: "percentage-bend r",
      statistic: (order) => guard(() => percentageBendCorrelation(x, permuted(order)).r),
    };
  }
  const psi = estimator as RobustPsi;
  const design = d.design;
  return {
    scheme: "labels",
    name: "robust t of the slope",
    statistic: (order) =>
      guard(
        () => robustLinearModel(design.x, design.n, design.p, permuted(order), { psi }).t[d.tested],
      ),
  };
}

/**
 * The estimate on a bootstrap resample (participants drawn with
 * replacement); NaN where the estimate does not exist on that resample (the
 * bootstrap leaves such resamples out and counts them).
 */
export function bootstrapStatistic(d: RegionData): (indices: Int32Array) => number {
  const { kind, estimator, y, design } = d;
  const p = design.p;
  const rowsOf = (indices: Int32Array) => {
    const m = indices.length;
    const x = new Float64Array(m * p);
    const z = new Float64Array(m);
    for (let k = 0; k < m; k++) {
      const i = indices[k];
      z[k] = y[i];
      for (let j = 0; j < p; j++) x[k * p + j] = design.x[i * p + j];
    }
    return { x, z, m };
  };
  const guard = (f: () => number): number => {
    try {
      const v = f();
      return Number.isFinite(v) ? v : Number.NaN;
    } catch (e) {
      if (e instanceof StatsError) return Number.NaN;
      throw e;
    }
  };
  if (kind === "one-sample" && estimator === "rank") {
    return (indices) => walshMedian(sortedCopy(Float64Array.from(indices, (i) => y[i])));
  }
  if (kind === "two-group" && estimator === "rank") {
    const ind = d.x as Float64Array;
    return (indices) => {
      const a: number[] = [];
      const b: number[] = [];
      for (const i of indices) (ind[i] === 1 ? a : b).push(y[i]);
      if (a.length === 0 || b.length === 0) return Number.NaN;
      return differenceMedian(sortedCopy(a), sortedCopy(b));
    };
  }
  if (
    kind === "association" &&
    (estimator === "rank" || estimator === "skipped" || estimator === "bend")
  ) {
    const x = d.x as Float64Array;
    return (indices) =>
      guard(() => {
        const xs = Float64Array.from(indices, (i) => x[i]);
        const ys = Float64Array.from(indices, (i) => y[i]);
        if (estimator === "rank") return pearsonR(rankOf(xs), rankOf(ys)) ?? Number.NaN;
        if (estimator === "skipped") return skippedCorrelation(xs, ys).r;
        return percentageBendCorrelation(xs, ys).r;
      });
  }
  if (estimator === "huber" || estimator === "bisquare") {
    return (indices) =>
      guard(() => {
        const { x, z, m } = rowsOf(indices);
        return robustLinearModel(x, m, p, z, { psi: estimator }).coefficients[d.tested];
      });
  }
  // ols and welch: the least-squares coefficient (for two groups without covariates, the difference of means)
  return (indices) =>
    guard(() => {
      const { x, z, m } = rowsOf(indices);
      if (m <= p) return Number.NaN;
      return solveLinearModel(qrDecompose(x, m, p, undefined, { thin: false }), z).coefficients[
        d.tested
      ];
    });
}

/** Percentile-bootstrap two-sided p-value of H0: θ = 0, 2·min(A, 1 − A) with A = share of θ* below 0 (ties one half) (Wilcox 2012, §4.4.4 style). */
export function bootstrapP(distribution: Float64Array): number {
  let below = 0;
  for (const v of distribution) below += v < 0 ? 1 : v === 0 ? 0.5 : 0;
  const a = below / distribution.length;
  return Math.min(1, 2 * Math.min(a, 1 - a));
}
