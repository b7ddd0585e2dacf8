/**
 * Weighting by first-level standard errors: a random-effects (mixed-effects)
 * weighted linear model per region, as in meta-regression.
 *
 * Each participant's contrast value y_i is itself an estimate with a
 * first-level standard error se_i. The model is
 *
 *   y_i = x_i'β + u_i + e_i,   u_i ~ N(0, τ²),   e_i ~ N(0, se_i²),
 *
 * so participant i gets weight w_i = 1 / (se_i² + τ²): τ² is the variance of
 * true differences between participants that the design does not explain
 * (residual heterogeneity), se_i² their measurement noise. The weighted
 * least-squares fit at a given τ² is in weighted-least-squares.ts.
 */
import { StatsError } from "./errors";
import { normalCdf, normalQuantile, studentTQuantile, studentTTwoSidedP } from "./distributions";
import { findRoot } from "./roots";
import { type WeightedFit, weightedFit } from "./weighted-least-squares";

export type Tau2Method = "dl" | "reml";
export type SmallSampleAdjustment = "none" | "knapp-hartung";

export interface WeightedLinearModelInput {
  /** Contrast value per participant (n values). */
  y: ArrayLike<number>;
  /** First-level standard error per participant (n values, each finite and > 0). */
  se: ArrayLike<number>;
  /** Design matrix, n rows × p columns including the intercept column. */
  X: ArrayLike<ArrayLike<number>>;
  /** Column of X whose coefficient is reported as the estimate. */
  tested: number;
  tau2Method: Tau2Method;
  smallSample: SmallSampleAdjustment;
  /** Confidence level of the interval, default 0.95. */
  level?: number;
  /** Optional participant ids, used only to name a participant in error messages. */
  participants?: readonly string[];
}

export interface WeightedLinearModelResult {
  /** Coefficient of the tested column. */
  estimate: number;
  se: number;
  /** z (smallSample "none") or t (Knapp–Hartung) statistic. */
  statistic: number;
  /** n − p with Knapp–Hartung, otherwise null (normal reference). */
  df: number | null;
  /** Two-sided p-value. */
  p: number;
  ciLow: number;
  ciHigh: number;
  /** Residual between-participant variance τ² (truncated at 0). */
  tau2: number;
  /** Standard error of τ²: REML from the expected information; DL from the variance of the Q statistic. */
  tau2Se: number | null;
  /** Residual I² as a fraction in [0, 1] (Higgins & Thompson 2002, typical within-participant variance). */
  i2: number;
  /** Share of residual variance that is measurement noise: mean(se²) / (mean(se²) + τ²). */
  noiseShare: number;
  /** Share of residual variance that is true between-participant difference: τ² / (mean(se²) + τ²). */
  trueShare: number;
  /** All p coefficients, in the column order of X. */
  coefficients: number[];
}

/** REML iteration limits: Fisher scoring steps before switching to Brent's method, bracket expansions, tolerance. */
const REML_FISHER_STEPS = 10;
const REML_MAX_ITERATIONS = 200;
const REML_TOLERANCE = 1e-10;

function who(i: number, participants: readonly string[] | undefined): string {
  const id = participants?.[i];
  return id !== undefined ? `participant ${id} (row ${i + 1})` : `row ${i + 1}`;
}

/**
 * Random-effects weighted linear model (mixed-effects meta-regression) with
 * weights 1/(se_i² + τ²), for one region.
 *
 * - τ² by DerSimonian–Laird, the method of moments generalised to
 *   meta-regression (DerSimonian & Laird 1986, Controlled Clinical Trials
 *   7:177–188; Raudenbush 2009, in The Handbook of Research Synthesis and
 *   Meta-Analysis, 2nd ed., ch. 16): τ² = max(0, (Q_E − (n − p)) / tr(P)),
 *   Q_E the residual Q of the fixed-effect fit, P = W − WX(X'WX)⁻¹X'W with
 *   W = diag(1/se²). Its standard error uses Var(Q_E) = 2(n − p) + 4τ²tr(P)
 *   + 2τ⁴tr(PP), exact for a normal quadratic form (Biggerstaff & Tweedie
 *   1997, Statistics in Medicine 16:753–768, for the intercept-only case).
 * - τ² by restricted maximum likelihood, Fisher scoring (Viechtbauer 2005,
 *   Journal of Educational and Behavioral Statistics 30:261–293):
 *   τ² ← τ² + (y'PPy − tr(P)) / tr(PP) with P at the current τ², truncated
 *   at 0, started from the DL value. Convergence rule: stop when the change
 *   in τ² is below 1e-10 · max(mean(se²), τ²) (scale-free), or at τ² = 0
 *   when the score is not positive. If that has not happened after 10
 *   steps (Fisher scoring can creep when the expected information is far
 *   below the observed), the REML score equation y'PPy = tr(P) is solved to
 *   machine precision by Brent's method between the latest values of τ²
 *   with scores of opposite sign (the bracket is widened by doubling if
 *   needed; StatsError after 200 doublings). Standard error √(2 / tr(PP))
 *   from the expected information.
 * - Coefficients by weighted least squares with the final weights; their
 *   covariance (X'WX)⁻¹; z test and normal interval.
 * - Knapp–Hartung adjustment (Knapp & Hartung 2003, Statistics in Medicine
 *   22:2693–2710): covariance multiplied by s² = Σ w_i e_i² / (n − p), t test
 *   and interval on n − p degrees of freedom. s² is NOT truncated at 1 (the
 *   default of the documented general-purpose meta-analysis implementation,
 *   Viechtbauer 2010, Journal of Statistical Software 36(3)), so the
 *   adjusted standard error can be smaller than the unadjusted one when the
 *   residuals are more homogeneous than their standard errors imply.
 * - I² = τ² / (τ² + s̃²) with the typical within-participant variance
 *   s̃² = (n − p) / tr(P) (Higgins & Thompson 2002, Statistics in Medicine
 *   21:1539–1558; residual form for meta-regression). With DL and an
 *   intercept-only model this equals (Q − (n − 1)) / Q.
 * - noiseShare / trueShare split the expected residual variance of a
 *   participant, mean(se²) + τ², into measurement noise and true differences.
 *
 * Cost: O(n p²) per fit; REML repeats it once per iteration (typically < 15).
 *
 * Preconditions: n > p; every y finite; every se finite and > 0; every X row
 * of length p with finite entries and X of full column rank; 0 ≤ tested < p;
 * 0 < level < 1. Throws StatsError naming the row (and participant id when
 * `participants` is given) otherwise.
 */
export function weightedLinearModel(input: WeightedLinearModelInput): WeightedLinearModelResult {
  const { tested, tau2Method, smallSample, participants } = input;
  const level = input.level ?? 0.95;
  const n = input.y.length;
  if (!(level > 0 && level < 1))
    throw new StatsError(
      `weightedLinearModel requires a confidence level between 0 and 1 (got ${level})`,
    );
  if (tau2Method !== "dl" && tau2Method !== "reml")
    throw new StatsError(
      `weightedLinearModel requires tau2Method "dl" or "reml" (got ${String(tau2Method)})`,
    );
  if (smallSample !== "none" && smallSample !== "knapp-hartung") {
    throw new StatsError(
      `weightedLinearModel requires smallSample "none" or "knapp-hartung" (got ${String(smallSample)})`,
    );
  }
  if (input.se.length !== n)
    throw new StatsError(
      `weightedLinearModel requires one standard error per participant (${n} values, ${input.se.length} standard errors)`,
    );
  if (input.X.length !== n)
    throw new StatsError(
      `weightedLinearModel requires one design row per participant (${n} values, ${input.X.length} rows)`,
    );
  if (participants !== undefined && participants.length !== n) {
    throw new StatsError(
      `weightedLinearModel requires one participant id per value (${n} values, ${participants.length} ids)`,
    );
  }
  const p = n > 0 ? input.X[0].length : 0;
  if (p < 1) throw new StatsError("weightedLinearModel requires at least one design column");
  if (!(Number.isInteger(tested) && tested >= 0 && tested < p)) {
    throw new StatsError(
      `weightedLinearModel requires the tested column to be one of the ${p} design columns (got ${tested})`,
    );
  }
  if (n <= p)
    throw new StatsError(
      `weightedLinearModel requires more participants than design columns (${n} participants, ${p} columns)`,
    );

  const y = new Float64Array(n);
  const v = new Float64Array(n);
  const x = new Float64Array(n * p);
  let sumV = 0;
  for (let i = 0; i < n; i++) {
    const yi = input.y[i];
    if (typeof yi !== "number" || !Number.isFinite(yi)) {
      throw new StatsError(
        `weightedLinearModel requires a finite value for every participant (${who(i, participants)} has ${String(yi)})`,
      );
    }
    const si = input.se[i];
    if (typeof si !== "number" || !Number.isFinite(si) || !(si > 0)) {
      throw new StatsError(
        `weightedLinearModel requires a positive standard error for every participant (${who(i, participants)} has ${String(si)})`,
      );
    }
    const row = input.X[i];
    if (row.length !== p)
      throw new StatsError(
        `weightedLinearModel requires ${p} design columns in every row (${who(i, participants)} has ${row.length})`,
      );
    for (let c = 0; c < p; c++) {
      const xc = row[c];
      if (typeof xc !== "number" || !Number.isFinite(xc)) {
        throw new StatsError(
          `weightedLinearModel requires finite design values (${who(i, participants)}, column ${c + 1} has ${String(xc)})`,
        );
      }
      x[i * p + c] = xc;
    }
    y[i] = yi;
    v[i] = si * si;
    sumV += si * si;
  }
  const dfResidual = n - p;

  // Fixed-effect fit (τ² = 0): Q_E, tr(P), tr(PP) for DL, I² and the DL standard error.
  const fixed = weightedFit(y, v, x, n, p, 0);
  if (fixed === null)
    throw new StatsError("weightedLinearModel requires a design matrix of full column rank");
  const tau2Dl = Math.max(0, (fixed.rss - dfResidual) / fixed.traceP);

  let tau2: number;
  let tau2Se: number;
  let final: WeightedFit;
  if (tau2Method === "dl") {
    tau2 = tau2Dl;
    const varQ = 2 * dfResidual + 4 * tau2 * fixed.traceP + 2 * tau2 * tau2 * fixed.tracePP;
    tau2Se = Math.sqrt(varQ) / fixed.traceP;
    const fit = weightedFit(y, v, x, n, p, tau2);
    if (fit === null)
      throw new StatsError("weightedLinearModel requires a design matrix of full column rank");
    final = fit;
  } else {
    // Fisher scoring from the DL value, truncated at 0. Where it has not converged after
    // REML_FISHER_STEPS steps (it can creep when the expected information is far below the
    // observed), the score equation is solved by Brent's method between the most recent
    // values of τ² whose scores have opposite signs.
    const meanV = sumV / n;
    const tolerance = REML_TOLERANCE * meanV;
    const fitAt = (t: number): WeightedFit => {
      const f = weightedFit(y, v, x, n, p, t);
      if (f === null)
        throw new StatsError("weightedLinearModel requires a design matrix of full column rank");
      return f;
    };
    const score = (f: WeightedFit): number => f.yPPy - f.traceP;
    tau2 = tau2Dl;
    let fit = fitAt(tau2);
    let positiveAt = Number.NaN;
    let negativeAt = Number.NaN;
    const note = (t: number, f: WeightedFit): void => {
      const sc = score(f);
      if (sc > 0) positiveAt = t;
      else if (sc < 0) negativeAt = t;
    };
    note(tau2, fit);
    let converged = false;
    for (let iter = 0; iter < REML_FISHER_STEPS; iter++) {
      const step = score(fit) / fit.tracePP;
      if (tau2 === 0 && step <= 0) {
        converged = true;
        break;
      }
      const candidate = Math.max(0, tau2 + step);
      const change = Math.abs(candidate - tau2);
      tau2 = candidate;
      fit = fitAt(tau2);
      note(tau2, fit);
      if (change <= tolerance * Math.max(1, tau2 / meanV)) {
        converged = true;
        break;
      }
    }
    if (!converged) {
      if (Number.isNaN(positiveAt)) {
        // Every score seen was negative: the maximum is at 0 unless the score at 0 is positive.
        const atZero = fitAt(0);
        if (score(atZero) <= 0) {
          tau2 = 0;
          fit = atZero;
          converged = true;
        } else positiveAt = 0;
      }
      if (!converged && Number.isNaN(negativeAt)) {
        let hi = Math.max(2 * positiveAt, positiveAt + meanV);
        for (let guard = 0; score(fitAt(hi)) > 0; guard++) {
          if (guard >= REML_MAX_ITERATIONS)
            throw new StatsError(
              `weightedLinearModel REML estimate of tau2 did not converge in ${REML_MAX_ITERATIONS} iterations`,
            );
          hi *= 2;
        }
        negativeAt = hi;
      }
      if (!converged) {
        tau2 = findRoot(
          (t) => score(fitAt(t)),
          Math.min(positiveAt, negativeAt),
          Math.max(positiveAt, negativeAt),
          "weightedLinearModel REML",
        );
        fit = fitAt(tau2);
      }
    }
    final = fit;
    tau2Se = Math.sqrt(2 / final.tracePP);
  }

  const estimate = final.beta[tested];
  let variance = final.inverse[tested * p + tested];
  let df: number | null = null;
  let statistic: number;
  let pValue: number;
  let half: number;
  if (smallSample === "knapp-hartung") {
    const s2 = final.rss / dfResidual;
    variance *= s2;
    df = dfResidual;
  }
  const se = Math.sqrt(variance);
  if (!(se > 0))
    throw new StatsError(
      "weightedLinearModel requires residual variation for the Knapp-Hartung adjustment (the residuals are all zero)",
    );
  statistic = estimate / se;
  if (df === null) {
    pValue = 2 * normalCdf(-Math.abs(statistic));
    half = normalQuantile(0.5 + level / 2) * se;
  } else {
    pValue = studentTTwoSidedP(statistic, df);
    half = studentTQuantile(0.5 + level / 2, df) * se;
  }

  const typicalV = dfResidual / fixed.traceP;
  const i2 = tau2 / (tau2 + typicalV);
  const meanV = sumV / n;
  const noiseShare = meanV / (meanV + tau2);
  return {
    estimate,
    se,
    statistic,
    df,
    p: pValue,
    ciLow: estimate - half,
    ciHigh: estimate + half,
    tau2,
    tau2Se,
    i2,
    noiseShare,
    trueShare: 1 - noiseShare,
    coefficients: Array.from(final.beta),
  };
}
