/**
 * Robust linear regression by M-estimation with iteratively reweighted least
 * squares (Huber 1964, 1973; Beaton & Tukey 1974), following the documented
 * defaults of MASS::rlm in the general-purpose statistics environment R
 * (Venables & Ripley 2002, "Modern Applied Statistics with S", §6.5):
 *
 * - ψ functions: Huber with k = 1.345, weight min(1, k/|u|); Tukey bisquare
 *   with c = 4.685, weight (1 − min(1, |u|/c)²)².
 * - Start: least squares (rlm's default). For the bisquare, whose objective
 *   has several local minima, the default start here is the converged Huber
 *   fit (`start: "huber"`), which is what
 *   `rlm(..., psi = psi.bisquare, init = <Huber rlm fit>)` computes;
 *   `start: "ls"` reproduces rlm's own default.
 * - Each iteration: scale s = median(|r|)/0.6745 (the MAD about zero,
 *   1/0.6745 ≈ 1.4826) of the current residuals, weights w = ψ(r/s)/(r/s),
 *   weighted least squares, new residuals.
 * - Stopping rule (rlm's `acc` with `test.vec = "resid"`): stop when
 *   √(Σ(r_old − r_new)² / max(1e-20, Σ r_old²)) ≤ acc = 1e-4, at most 20
 *   iterations (reported as not converged otherwise). The reported scale is
 *   the one used in the last iteration. A scale of zero stops the iteration
 *   (more than half the residuals are exactly zero).
 * - Standard errors: rlm's summary formula (Huber 1981, §7.6, with his
 *   correction factor κ): σ̂ = √(Σ(ψ(r_i/s)·s)²/(n − p)) · κ/m,
 *   m = mean ψ′(r_i/s), κ = 1 + p·var(ψ′)/(n·m²), and
 *   se_j = σ̂·√[(XᵀX)⁻¹]_jj. t = b_j/se_j; rlm prints no p-value, the p
 *   given here is from Student t on n − p df (common practice).
 *
 * Cost O(iterations · n·p²).
 */
import { median } from "./descriptive";
import { studentTQuantile, studentTTwoSidedP } from "./distributions";
import { StatsError, require } from "./errors";
import { qrDecompose, solveLinearModel, unscaledCovariance } from "./linear-model";

export type RobustPsi = "huber" | "bisquare";

export const HUBER_K = 1.345;
export const BISQUARE_C = 4.685;

export interface RobustFit {
  psi: RobustPsi;
  n: number;
  p: number;
  df: number;
  columnNames: readonly string[];
  coefficients: Float64Array;
  se: Float64Array;
  t: Float64Array;
  pValues: Float64Array;
  residuals: Float64Array;
  /** Final IRLS weights ψ(u)/u, in [0, 1]. */
  weights: Float64Array;
  scale: number;
  iterations: number;
  converged: boolean;
  /** The relative residual change at each iteration (the stopping quantity). */
  changes: number[];
}

function weightOf(psi: RobustPsi, u: number, tuning: number): number {
  if (psi === "huber") {
    const a = Math.abs(u);
    return a <= tuning ? 1 : tuning / a;
  }
  const a = Math.min(1, Math.abs(u / tuning));
  const b = 1 - a * a;
  return b * b;
}

function derivativeOf(psi: RobustPsi, u: number, tuning: number): number {
  if (psi === "huber") return Math.abs(u) <= tuning ? 1 : 0;
  const t = (u / tuning) * (u / tuning);
  return t < 1 ? (1 - t) * (1 - 5 * t) : 0;
}

function weightedFit(
  x: ArrayLike<number>,
  n: number,
  p: number,
  y: ArrayLike<number>,
  w: Float64Array | null,
  names: readonly string[],
) {
  const xs = new Float64Array(n * p);
  const ys = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const sw = w ? Math.sqrt(w[i]) : 1;
    ys[i] = y[i] * sw;
    for (let j = 0; j < p; j++) xs[i * p + j] = x[i * p + j] * sw;
  }
  const fit = solveLinearModel(qrDecompose(xs, n, p, names, { thin: false }), ys);
  const residuals = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let f = 0;
    for (let j = 0; j < p; j++) f += x[i * p + j] * fit.coefficients[j];
    residuals[i] = y[i] - f;
  }
  return { coefficients: fit.coefficients, residuals };
}

function madAboutZero(r: Float64Array): number {
  const a = new Float64Array(r.length);
  for (let i = 0; i < r.length; i++) a[i] = Math.abs(r[i]);
  return median(a) / 0.6745;
}

/**
 * M-estimation of y on the row-major n×p design x. Throws StatsError for
 * n ≤ p, non-finite values, a rank-deficient design, or when no residual lies
 * inside the ψ function's central region (the standard error is undefined).
 */
export function robustLinearModel(
  x: ArrayLike<number>,
  n: number,
  p: number,
  y: ArrayLike<number>,
  options: {
    psi: RobustPsi;
    tuning?: number;
    start?: "ls" | "huber";
    maxIterations?: number;
    acc?: number;
    level?: number;
    columnNames?: readonly string[];
  },
): RobustFit {
  const { psi, maxIterations = 20, acc = 1e-4 } = options;
  const tuning = options.tuning ?? (psi === "huber" ? HUBER_K : BISQUARE_C);
  const start = options.start ?? (psi === "bisquare" ? "huber" : "ls");
  const names = options.columnNames ?? Array.from({ length: p }, (_, j) => `column ${j + 1}`);
  require(n > p, "robustLinearModel requires more participants than coefficients");
  require(tuning > 0, "robustLinearModel requires a positive tuning constant");
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i]))
      throw new StatsError(`robustLinearModel requires finite responses (row ${i + 1})`);
  }
  let coefficients: Float64Array;
  let residuals: Float64Array;
  if (start === "huber" && psi !== "huber") {
    const h = robustLinearModel(x, n, p, y, {
      psi: "huber",
      maxIterations,
      acc,
      columnNames: names,
    });
    coefficients = h.coefficients;
    residuals = h.residuals;
  } else {
    ({ coefficients, residuals } = weightedFit(x, n, p, y, null, names));
  }
  let scale = madAboutZero(residuals);
  const weights = new Float64Array(n).fill(1);
  const changes: number[] = [];
  let converged = false;
  let iterations = 0;
  for (let iter = 1; iter <= maxIterations; iter++) {
    iterations = iter;
    const old = residuals;
    scale = madAboutZero(old);
    if (scale === 0) {
      converged = true;
      break;
    }
    for (let i = 0; i < n; i++) weights[i] = weightOf(psi, old[i] / scale, tuning);
    ({ coefficients, residuals } = weightedFit(x, n, p, y, weights, names));
    let num = 0;
    let den = 0;
    for (let i = 0; i < n; i++) {
      const d = old[i] - residuals[i];
      num += d * d;
      den += old[i] * old[i];
    }
    const change = Math.sqrt(num / Math.max(1e-20, den));
    changes.push(change);
    if (change <= acc) {
      converged = true;
      break;
    }
  }
  require(scale >
    0, "robustLinearModel requires residuals that are not mostly zero (the robust scale is 0)");
  // Standard errors (rlm summary, method "XtX").
  const df = n - p;
  let sumPsi2 = 0;
  let meanD = 0;
  const deriv = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = residuals[i] / scale;
    const w = weightOf(psi, u, tuning);
    sumPsi2 += residuals[i] * w * (residuals[i] * w);
    deriv[i] = derivativeOf(psi, u, tuning);
    meanD += deriv[i];
  }
  meanD /= n;
  require(meanD >
    0, "robustLinearModel requires residuals inside the central region of the ψ function");
  let varD = 0;
  for (let i = 0; i < n; i++) varD += (deriv[i] - meanD) * (deriv[i] - meanD);
  varD /= n - 1;
  const kappa = 1 + (p * varD) / (n * meanD * meanD);
  const stddev = Math.sqrt(sumPsi2 / df) * (kappa / meanD);
  const cov = unscaledCovariance(qrDecompose(x, n, p, names, { thin: false }));
  const se = new Float64Array(p);
  const t = new Float64Array(p);
  const pValues = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    se[j] = stddev * Math.sqrt(cov[j * p + j]);
    require(se[j] > 0, "robustLinearModel requires a positive standard error");
    t[j] = coefficients[j] / se[j];
    pValues[j] = studentTTwoSidedP(t[j], df);
  }
  for (let i = 0; i < n; i++) weights[i] = weightOf(psi, residuals[i] / scale, tuning);
  return {
    psi,
    n,
    p,
    df,
    columnNames: names,
    coefficients,
    se,
    t,
    pValues,
    residuals,
    weights,
    scale,
    iterations,
    converged,
    changes,
  };
}

/** Two-sided Student-t interval for coefficient j of a robust fit (n − p df). */
export function robustCoefficientInterval(
  fit: RobustFit,
  j: number,
  level = 0.95,
): { low: number; high: number } {
  const q = studentTQuantile(0.5 + level / 2, fit.df);
  return { low: fit.coefficients[j] - q * fit.se[j], high: fit.coefficients[j] + q * fit.se[j] };
}
