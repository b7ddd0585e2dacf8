/**
 * One region of a fit: the parametric estimate for every (kind, estimator)
 * pair. The statistic a permutation test rearranges is in
 * permutation-statistic.ts, the one a bootstrap resamples in
 * bootstrap-statistic.ts, and what they all receive in region-data.ts. The
 * fit's estimate stage (fit/estimate.ts) chooses participants, builds the
 * design and calls these; each function is pure.
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
import { fisherInterval } from "./correlation";
import { mean, sampleSd } from "./descriptive";
import { studentTTwoSidedP } from "./distributions";
import {
  effectSizesFromT,
  noncentralityInterval,
  standardizedMeanDifference,
  cohensDOneSample,
} from "./effect-size";
import { StatsError, require } from "./errors";
import {
  type LinearModelFit,
  type QrDecomposition,
  coefficientInterval,
  qrDecompose,
  solveLinearModel,
} from "./linear-model";
import { mannWhitneyU } from "./mann-whitney";
import { averageRanks } from "./ranks";
import type { RegionData, RegionEstimate } from "./region-data";
import { percentageBendCorrelation, skippedCorrelation } from "./robust-correlation";
import { type RobustPsi, robustCoefficientInterval, robustLinearModel } from "./robust-regression";
import { type SpearmanPMethod, spearmanCorrelation } from "./spearman";
import { welchTTest } from "./two-sample-t";
import { wilcoxonSignedRank } from "./wilcoxon-signed-rank";

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

/** A least-squares fit of a region's design, with the decomposition it came from. */
export type OlsFit = LinearModelFit & { qr: QrDecomposition };

/**
 * Least-squares fit of the region's design (decomposition shared through
 * `qr` when given). A decomposition made here is made without the thin Q
 * and the hat values: the fit reads only the reflectors and R⁻¹, and those
 * two were about two thirds of its time at 20,000 participants; the
 * diagnostics, which read them, pass their own `qr`.
 */
export function olsFit(d: RegionData, qr?: QrDecomposition): OlsFit {
  const { design } = d;
  require(design.n >
    design.p, `too few participants (n = ${design.n}) for a model with ${design.p} coefficients`);
  const q = qr ?? qrDecompose(design.x, design.n, design.p, design.columnNames, { thin: false });
  return { ...solveLinearModel(q, d.y), qr: q };
}

function olsEstimate(d: RegionData, qr?: QrDecomposition, leastSquares?: OlsFit): RegionEstimate {
  const fit = leastSquares ?? olsFit(d, qr);
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
/** The design of a partial Spearman correlation: every numeric column (not the intercept, not dummies) replaced by its mid-ranks; row-major n × p. */
export function rankedDesign(design: RegionData["design"]): Float64Array {
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
  return x;
}

function partialSpearman(d: RegionData): RegionEstimate {
  const { design } = d;
  const p = design.p;
  const x = rankedDesign(design);
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
 * first) or a method's preconditions fail. `leastSquares`: the region's
 * `olsFit`, already made (least squares then reads it instead of solving
 * again).
 */
export function estimateRegion(
  d: RegionData,
  qr?: QrDecomposition,
  leastSquares?: OlsFit,
): RegionEstimate {
  const { kind, estimator } = d;
  if (estimator === "ols") return olsEstimate(d, qr, leastSquares);
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
