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
 * Each weighted least-squares step is Householder QR (Golub & Van Loan 2013,
 * Algorithm 5.2.1) with the arithmetic of qrDecompose + solveLinearModel
 * (linear-model.ts), done in a reusable workspace without forming what the
 * iteration does not use (thin Q, hat values, per-step standard errors and
 * p-values); the unweighted decomposition of the start serves the standard
 * errors. Same numbers, bit for bit, as decomposing and solving afresh at
 * every step (tested against that). robustCoefficientByNormalEquations runs
 * the same iteration with normal-equation steps, for callers fitting many
 * designs of one size (agreeing to rounding, not bit for bit; see there).
 *
 * Cost O(iterations · n·p²).
 */
import { median, selectInPlace } from "./descriptive";
import { studentTQuantile, studentTTwoSidedP } from "./distributions";
import { StatsError, require } from "./errors";
import { applyQt, householderColumns, invertUpper, multiplyUpper } from "./linear-model";

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

export interface RobustOptions {
  psi: RobustPsi;
  tuning?: number;
  start?: "ls" | "huber";
  maxIterations?: number;
  acc?: number;
  level?: number;
  columnNames?: readonly string[];
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

/**
 * The standard deviation of the M-estimate's sandwich covariance (rlm
 * summary, method "XtX"): √(Σψ(r)² / df) · κ / mean ψ′, with Huber's
 * correction κ = 1 + p·var(ψ′)/(n·mean(ψ′)²), over the first n residuals.
 * `deriv` is scratch of n.
 */
function sandwichScale(
  residuals: ArrayLike<number>,
  n: number,
  scale: number,
  psi: RobustPsi,
  tuning: number,
  p: number,
  df: number,
  deriv: Float64Array,
): number {
  let sumPsi2 = 0;
  let meanD = 0;
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
  return Math.sqrt(sumPsi2 / df) * (kappa / meanD);
}

/**
 * Scratch space of robust fits of one size (n participants, p
 * coefficients): the IRLS loop writes into it and allocates nothing, so a
 * caller fitting many responses or designs of the same size (the null draws
 * of a specification curve) makes it once with `robustWorkspace(n, p)`.
 */
export interface RobustWorkspace {
  readonly n: number;
  readonly p: number;
  /** Weighted design, column-major n×p, overwritten by the Householder vectors. */
  readonly a: Float64Array;
  readonly colNorm: Float64Array;
  readonly beta: Float64Array;
  readonly r: Float64Array;
  readonly rInverse: Float64Array;
  /** R⁻¹ of the unweighted design, for the standard errors. */
  readonly rInverseX: Float64Array;
  readonly z: Float64Array;
  readonly coefficients: Float64Array;
  readonly residualsA: Float64Array;
  readonly residualsB: Float64Array;
  readonly scratch: Float64Array;
  readonly weights: Float64Array;
  readonly se: Float64Array;
  /** XᵀX and Xᵀy (upper triangle, row-major p×p), their Cholesky factor and its inverse. */
  readonly gram: Float64Array;
  readonly gramY: Float64Array;
  readonly gramFactor: Float64Array;
  readonly gramFactorInverse: Float64Array;
  /** XᵀWX, XᵀWy and the Cholesky factor of XᵀWX of the current step. */
  readonly step: Float64Array;
  readonly stepY: Float64Array;
  readonly stepFactor: Float64Array;
  /** The down-weighted rows of the current step and 1 − w of each. */
  readonly downRows: Int32Array;
  readonly downShare: Float64Array;
}

export function robustWorkspace(n: number, p: number): RobustWorkspace {
  return {
    n,
    p,
    a: new Float64Array(n * p),
    colNorm: new Float64Array(p),
    beta: new Float64Array(p),
    r: new Float64Array(p * p),
    rInverse: new Float64Array(p * p),
    rInverseX: new Float64Array(p * p),
    z: new Float64Array(n),
    coefficients: new Float64Array(p),
    residualsA: new Float64Array(n),
    residualsB: new Float64Array(n),
    scratch: new Float64Array(n),
    weights: new Float64Array(n),
    se: new Float64Array(p),
    gram: new Float64Array(p * p),
    gramY: new Float64Array(p),
    gramFactor: new Float64Array(p * p),
    gramFactorInverse: new Float64Array(p * p),
    step: new Float64Array(p * p),
    stepY: new Float64Array(p),
    stepFactor: new Float64Array(p * p),
    downRows: new Int32Array(n),
    downShare: new Float64Array(n),
  };
}

/**
 * Weighted least squares of y on the row-major n×p design x with weights w
 * (null: all 1): Householder QR of √w·x and the solve of √w·y, with the same
 * arithmetic, in the same order, as qrDecompose followed by
 * solveLinearModel, so the coefficients are the same to the last bit.
 * Writes the coefficients to ws.coefficients, R⁻¹ to ws.rInverse and the
 * residuals y − x·b (unweighted) to `out`. Throws StatsError naming a
 * collinear column, as qrDecompose.
 */
function weightedSolve(
  ws: RobustWorkspace,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  w: Float64Array | null,
  names: readonly string[],
  out: Float64Array,
): void {
  const { n, p, a, colNorm, beta, r, rInverse, z, coefficients } = ws;
  colNorm.fill(0);
  if (w === null) {
    for (let i = 0; i < n; i++) {
      z[i] = y[i];
      for (let j = 0; j < p; j++) {
        const value = x[i * p + j];
        if (!Number.isFinite(value))
          throw new StatsError(`qrDecompose requires finite values (row ${i + 1}, ${names[j]})`);
        a[j * n + i] = value;
        colNorm[j] += value * value;
      }
    }
  } else {
    // Weights lie in [0, 1] and x, y were found finite at the start: every product is finite.
    for (let i = 0; i < n; i++) {
      const sw = Math.sqrt(w[i]);
      z[i] = y[i] * sw;
      for (let j = 0; j < p; j++) {
        const value = x[i * p + j] * sw;
        a[j * n + i] = value;
        colNorm[j] += value * value;
      }
    }
  }
  householderColumns(a, n, p, colNorm, names, beta, r);
  invertUpper(r, p, rInverse);
  // z ← Qᵀ(√w·y)
  applyQt(a, beta, n, p, z);
  multiplyUpper(rInverse, z, p, coefficients);
  for (let i = 0; i < n; i++) {
    let f = 0;
    for (let j = 0; j < p; j++) f += x[i * p + j] * coefficients[j];
    out[i] = y[i] - f;
  }
}

/**
 * median(|r|)/0.6745 — the same order statistics as descriptive.ts's
 * median, found in `scratch`. With `near` (the last step's median of |r|),
 * one pass keeps only the values within 5 % of it and counts those below,
 * and the middle order statistics are selected among the kept few when
 * they lie there (else among all): the same values either way.
 */
export function madAboutZero(r: Float64Array, scratch: Float64Array, near = 0): number {
  const n = r.length;
  const h = n >> 1;
  const even = n % 2 === 0;
  if (near > 0) {
    const lo = near * 0.95;
    const hi = near * 1.05;
    let below = 0;
    let kept = 0;
    let nan = false;
    for (let i = 0; i < n; i++) {
      const v = Math.abs(r[i]);
      if (v < lo) below++;
      else if (v <= hi) scratch[kept++] = v;
      else if (Number.isNaN(v)) nan = true;
    }
    // Order statistic h (and h − 1 for even n) among the kept values?
    const k = h - below;
    if (!nan && k >= (even ? 1 : 0) && k < kept) {
      const band = scratch.subarray(0, kept);
      const upper = selectInPlace(band, k);
      if (!even) return upper / 0.6745;
      let lower = band[0];
      for (let i = 1; i < k; i++) if (band[i] > lower) lower = band[i];
      return (0.5 * (lower + upper)) / 0.6745;
    }
  }
  let nan = false;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(r[i]);
    if (Number.isNaN(v)) nan = true;
    scratch[i] = v;
  }
  if (nan) return median(scratch) / 0.6745;
  const upper = selectInPlace(scratch, h);
  if (!even) return upper / 0.6745;
  let lower = scratch[0];
  for (let i = 1; i < h; i++) if (scratch[i] > lower) lower = scratch[i];
  return (0.5 * (lower + upper)) / 0.6745;
}

interface CoreFit {
  /** The final residuals: one of the workspace's residual arrays. */
  residuals: Float64Array;
  scale: number;
  iterations: number;
  converged: boolean;
  changes: number[];
  df: number;
}

/**
 * The fit in the workspace: IRLS, then the standard errors of every
 * coefficient into ws.se (the checks of robustLinearModel included).
 */
function fitCore(
  ws: RobustWorkspace,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  psi: RobustPsi,
  tuning: number,
  start: "ls" | "huber",
  maxIterations: number,
  acc: number,
  names: readonly string[],
): CoreFit {
  const { n, p } = ws;
  require(n > p, "robustLinearModel requires more participants than coefficients");
  require(tuning > 0, "robustLinearModel requires a positive tuning constant");
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i]))
      throw new StatsError(`robustLinearModel requires finite responses (row ${i + 1})`);
  }
  require(p >= 1 && n >= p, "qrDecompose requires at least as many rows as columns");
  require(x.length === n * p, "qrDecompose requires a design of n·p entries");
  let residuals: Float64Array;
  if (start === "huber" && psi !== "huber") {
    // The converged Huber fit (its own checks included) is the start.
    residuals = fitCore(ws, x, y, "huber", HUBER_K, "ls", maxIterations, acc, names).residuals;
  } else {
    residuals = ws.residualsA;
    weightedSolve(ws, x, y, null, names, residuals);
    ws.rInverseX.set(ws.rInverse);
  }
  let spare = residuals === ws.residualsA ? ws.residualsB : ws.residualsA;
  const weights = ws.weights;
  let scale = maxIterations >= 1 ? 0 : madAboutZero(residuals, ws.scratch);
  const changes: number[] = [];
  let converged = false;
  let iterations = 0;
  for (let iter = 1; iter <= maxIterations; iter++) {
    iterations = iter;
    const old = residuals;
    scale = madAboutZero(old, ws.scratch, scale * 0.6745);
    if (scale === 0) {
      converged = true;
      break;
    }
    for (let i = 0; i < n; i++) weights[i] = weightOf(psi, old[i] / scale, tuning);
    weightedSolve(ws, x, y, weights, names, spare);
    residuals = spare;
    spare = old;
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
  const stddev = sandwichScale(residuals, n, scale, psi, tuning, p, df, ws.scratch);
  // (XᵀX)⁻¹ = R⁻¹R⁻ᵀ of the unweighted design: its diagonal, as unscaledCovariance sums it.
  const rInv = ws.rInverseX;
  for (let j = 0; j < p; j++) {
    let c = 0;
    for (let k = j; k < p; k++) c += rInv[j * p + k] * rInv[j * p + k];
    ws.se[j] = stddev * Math.sqrt(c);
    require(ws.se[j] > 0, "robustLinearModel requires a positive standard error");
  }
  return { residuals, scale, iterations, converged, changes, df };
}

function settings(p: number, options: RobustOptions) {
  const { psi, maxIterations = 20, acc = 1e-4 } = options;
  const tuning = options.tuning ?? (psi === "huber" ? HUBER_K : BISQUARE_C);
  const start = options.start ?? (psi === "bisquare" ? "huber" : "ls");
  const names = options.columnNames ?? Array.from({ length: p }, (_, j) => `column ${j + 1}`);
  return { psi, maxIterations, acc, tuning, start, names };
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
  options: RobustOptions,
): RobustFit {
  const { psi, maxIterations, acc, tuning, start, names } = settings(p, options);
  require(n > p, "robustLinearModel requires more participants than coefficients");
  const ws = robustWorkspace(n, p);
  const core = fitCore(ws, x, y, psi, tuning, start, maxIterations, acc, names);
  const { residuals, scale, df } = core;
  const coefficients = Float64Array.from(ws.coefficients);
  const se = Float64Array.from(ws.se);
  const t = new Float64Array(p);
  const pValues = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    t[j] = coefficients[j] / se[j];
    pValues[j] = studentTTwoSidedP(t[j], df);
  }
  const weights = new Float64Array(n);
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
    residuals: Float64Array.from(residuals),
    weights,
    scale,
    iterations: core.iterations,
    converged: core.converged,
    changes: core.changes,
  };
}

/**
 * Coefficient j alone of the M-estimation robustLinearModel makes — the
 * same estimate, standard error, t and p, to the last bit — fitted in a
 * caller's workspace of the design's size (robustWorkspace(n, p)), for
 * callers that fit many designs or responses of one size and need one
 * coefficient: nothing is allocated per iteration, and only that
 * coefficient's p-value is computed. Same errors as robustLinearModel.
 */
export function robustCoefficient(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  j: number,
  workspace: RobustWorkspace,
  options: RobustOptions,
): { estimate: number; se: number; t: number; p: number; iterations: number } {
  const p = workspace.p;
  require(j >= 0 && j < p, "robustCoefficient requires a coefficient of the design");
  const { psi, maxIterations, acc, tuning, start, names } = settings(p, options);
  const core = fitCore(workspace, x, y, psi, tuning, start, maxIterations, acc, names);
  const estimate = workspace.coefficients[j];
  const se = workspace.se[j];
  const t = estimate / se;
  return { estimate, se, t, p: studentTTwoSidedP(t, core.df), iterations: core.iterations };
}

/**
 * Cholesky factor L (lower, row-major p×p) of the symmetric matrix whose
 * upper triangle is `g`: g = LLᵀ. Returns false when a pivot falls below
 * 1e-8 of its diagonal entry — a column within about 1e-4 rad of the span
 * of the columns before it, where normal equations lose the digits a
 * Householder QR keeps (the caller then uses the QR).
 */
function cholesky(g: Float64Array, p: number, l: Float64Array): boolean {
  for (let k = 0; k < p; k++) {
    let d = g[k * p + k];
    for (let m = 0; m < k; m++) d -= l[k * p + m] * l[k * p + m];
    if (!(d > 1e-8 * g[k * p + k])) return false;
    const root = Math.sqrt(d);
    l[k * p + k] = root;
    for (let i = k + 1; i < p; i++) {
      let s = g[k * p + i];
      for (let m = 0; m < k; m++) s -= l[i * p + m] * l[k * p + m];
      l[i * p + k] = s / root;
    }
  }
  return true;
}

/** b solving LLᵀb = rhs, written to `out`. */
function choleskySolve(l: Float64Array, p: number, rhs: Float64Array, out: Float64Array): void {
  for (let i = 0; i < p; i++) {
    let s = rhs[i];
    for (let m = 0; m < i; m++) s -= l[i * p + m] * out[m];
    out[i] = s / l[i * p + i];
  }
  for (let i = p - 1; i >= 0; i--) {
    let s = out[i];
    for (let m = i + 1; m < p; m++) s -= l[m * p + i] * out[m];
    out[i] = s / l[i * p + i];
  }
}

/**
 * The IRLS of fitCore with each weighted least-squares step solved by the
 * normal equations: XᵀWX = XᵀX − Σ (1 − wᵢ)·xᵢxᵢᵀ over the down-weighted
 * rows only (wᵢ < 1; with Huber's ψ about a fifth of normal data), and
 * XᵀWy likewise, then Cholesky. Cost per step O(m·p² + n·p) with m the
 * down-weighted rows, against O(n·p²) for a QR of √W·X. Returns null when
 * a Cholesky pivot signals near-collinearity (the caller falls back to the
 * QR); the checks of fitCore otherwise.
 */
function gramCore(
  ws: RobustWorkspace,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  psi: RobustPsi,
  tuning: number,
  start: "ls" | "huber",
  maxIterations: number,
  acc: number,
): { residuals: Float64Array; scale: number; iterations: number; df: number } | null {
  const { n, p, gram, gramY, step, stepY, stepFactor, downRows, downShare, coefficients } = ws;
  let residuals: Float64Array;
  if (start === "huber" && psi !== "huber") {
    const h = gramCore(ws, x, y, "huber", HUBER_K, "ls", maxIterations, acc);
    // A zero scale makes robustLinearModel's Huber start fail: the QR path says so.
    if (h === null || !(h.scale > 0)) return null;
    residuals = h.residuals;
  } else {
    gram.fill(0);
    gramY.fill(0);
    for (let i = 0; i < n; i++) {
      const o = i * p;
      const yi = y[i];
      for (let a = 0; a < p; a++) {
        const xa = x[o + a];
        gramY[a] += xa * yi;
        for (let b = a; b < p; b++) gram[a * p + b] += xa * x[o + b];
      }
    }
    for (let k = 0; k < p * p; k++) if (!Number.isFinite(gram[k])) return null;
    if (!cholesky(gram, p, ws.gramFactor)) return null;
    choleskySolve(ws.gramFactor, p, gramY, coefficients);
    residuals = ws.residualsA;
    for (let i = 0; i < n; i++) {
      let f = 0;
      for (let a = 0; a < p; a++) f += x[i * p + a] * coefficients[a];
      residuals[i] = y[i] - f;
    }
  }
  let spare = residuals === ws.residualsA ? ws.residualsB : ws.residualsA;
  let scale = maxIterations >= 1 ? 0 : madAboutZero(residuals, ws.scratch);
  let iterations = 0;
  for (let iter = 1; iter <= maxIterations; iter++) {
    iterations = iter;
    const old = residuals;
    scale = madAboutZero(old, ws.scratch, scale * 0.6745);
    if (scale === 0) break;
    let m = 0;
    for (let i = 0; i < n; i++) {
      const w = weightOf(psi, old[i] / scale, tuning);
      if (w < 1) {
        downRows[m] = i;
        downShare[m] = 1 - w;
        m++;
      }
    }
    step.set(gram);
    stepY.set(gramY);
    for (let k = 0; k < m; k++) {
      const o = downRows[k] * p;
      const share = downShare[k];
      const yi = y[downRows[k]] * share;
      for (let a = 0; a < p; a++) {
        const xa = x[o + a];
        stepY[a] -= xa * yi;
        const sa = xa * share;
        for (let b = a; b < p; b++) step[a * p + b] -= sa * x[o + b];
      }
    }
    if (!cholesky(step, p, stepFactor)) return null;
    choleskySolve(stepFactor, p, stepY, coefficients);
    let num = 0;
    let den = 0;
    for (let i = 0; i < n; i++) {
      let f = 0;
      for (let a = 0; a < p; a++) f += x[i * p + a] * coefficients[a];
      const r = y[i] - f;
      spare[i] = r;
      const d = old[i] - r;
      num += d * d;
      den += old[i] * old[i];
    }
    residuals = spare;
    spare = old;
    if (Math.sqrt(num / Math.max(1e-20, den)) <= acc) break;
  }
  return { residuals, scale, iterations, df: n - p };
}

/**
 * Coefficient j of the M-estimation of robustLinearModel — the same start,
 * scale, weights, stopping rule and standard error — with every weighted
 * least-squares step solved by the normal equations, formed from XᵀX by
 * taking out the down-weighted rows' share (see gramCore), for callers
 * that fit many designs of one size (the null draws of a specification
 * curve). Not the same arithmetic as the Householder QR: on designs that
 * are not nearly collinear each step agrees with it to about 1e-12
 * relative, so the converged estimate agrees with robustLinearModel's to
 * that when both stop at the same step, and to the stopping tolerance when
 * a change lands on it; a nearly collinear design (a Cholesky pivot below
 * 1e-8 of its diagonal) is fitted by robustCoefficient instead, with its
 * numbers and errors. Tested against robustLinearModel.
 */
export function robustCoefficientByNormalEquations(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  j: number,
  workspace: RobustWorkspace,
  options: RobustOptions,
): { estimate: number; se: number; t: number; p: number; iterations: number } {
  const { n, p } = workspace;
  require(j >= 0 && j < p, "robustCoefficient requires a coefficient of the design");
  const { psi, maxIterations, acc, tuning, start } = settings(p, options);
  require(n > p, "robustLinearModel requires more participants than coefficients");
  require(tuning > 0, "robustLinearModel requires a positive tuning constant");
  require(x.length === n * p, "qrDecompose requires a design of n·p entries");
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i]))
      throw new StatsError(`robustLinearModel requires finite responses (row ${i + 1})`);
  }
  const core = gramCore(workspace, x, y, psi, tuning, start, maxIterations, acc);
  if (core === null || !(core.scale > 0)) {
    return robustCoefficient(x, y, j, workspace, options);
  }
  const { residuals, scale, df } = core;
  const stddev = sandwichScale(residuals, n, scale, psi, tuning, p, df, workspace.scratch);
  // [(XᵀX)⁻¹]_jj = Σ_k (L⁻¹)_kj² for XᵀX = LLᵀ.
  const l = workspace.gramFactor;
  const li = workspace.gramFactorInverse;
  for (let c = 0; c < p; c++) {
    li[c * p + c] = 1 / l[c * p + c];
    for (let i = c + 1; i < p; i++) {
      let s = 0;
      for (let m = c; m < i; m++) s += l[i * p + m] * li[m * p + c];
      li[i * p + c] = -s / l[i * p + i];
    }
  }
  let c = 0;
  for (let k = j; k < p; k++) c += li[k * p + j] * li[k * p + j];
  const se = stddev * Math.sqrt(c);
  require(se > 0, "robustLinearModel requires a positive standard error");
  const estimate = workspace.coefficients[j];
  const t = estimate / se;
  return { estimate, se, t, p: studentTTwoSidedP(t, df), iterations: core.iterations };
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
