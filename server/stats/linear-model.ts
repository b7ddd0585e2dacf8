/**
 * Ordinary least squares by Householder QR (Golub & Van Loan 2013,
 * "Matrix Computations", Algorithm 5.2.1 and §5.3): coefficients, standard
 * errors, t statistics on n − p df, residuals, fitted values, hat values and
 * (XᵀX)⁻¹.
 *
 * The design X is row-major n×p (an intercept column, if wanted, is part of
 * X). A column is declared collinear when, after removing its projection on
 * the earlier columns, less than 1e-7 of its norm remains (the tolerance of
 * the LINPACK-style QR a general-purpose statistics environment uses), and a
 * StatsError names the column. Cost O(n·p²) for the decomposition, O(n·p)
 * per response once decomposed.
 */
import { studentTQuantile, studentTTwoSidedP } from "./distributions";
import { StatsError, require } from "./errors";

export interface QrDecomposition {
  n: number;
  p: number;
  columnNames: readonly string[];
  /** Householder vectors, column-major n×p (below and on the diagonal). */
  readonly v: Float64Array;
  /** 2/(vᵀv) for each reflector (0 when the column needed no reflection). */
  readonly beta: Float64Array;
  /** Upper-triangular R, row-major p×p. */
  readonly r: Float64Array;
  /** R⁻¹, row-major p×p (upper triangular). */
  readonly rInverse: Float64Array;
  /** Diagonal of the hat matrix H = X(XᵀX)⁻¹Xᵀ. */
  readonly hat: Float64Array;
  /** Thin Q, column-major n×p. */
  readonly q: Float64Array;
}

/**
 * Householder QR of the row-major n×p design `x`. Requires n ≥ p ≥ 1 and
 * finite entries; throws StatsError naming a collinear column. With
 * `{ thin: false }` the thin Q and the hat values are not formed (both are
 * then empty arrays): enough for solving, as iteratively reweighted fits do.
 */
export function qrDecompose(
  x: ArrayLike<number>,
  n: number,
  p: number,
  columnNames?: readonly string[],
  options: { thin?: boolean } = {},
): QrDecomposition {
  require(p >= 1 && n >= p, "qrDecompose requires at least as many rows as columns");
  require(x.length === n * p, "qrDecompose requires a design of n·p entries");
  const names = columnNames ?? Array.from({ length: p }, (_, j) => `column ${j + 1}`);
  const a = new Float64Array(n * p); // column-major working copy
  const colNorm = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      const value = x[i * p + j];
      if (!Number.isFinite(value))
        throw new StatsError(`qrDecompose requires finite values (row ${i + 1}, ${names[j]})`);
      a[j * n + i] = value;
      colNorm[j] += value * value;
    }
  }
  const beta = new Float64Array(p);
  const r = new Float64Array(p * p);
  householderColumns(a, n, p, colNorm, names, beta, r);
  // R⁻¹ by back substitution, column by column.
  const rInverse = new Float64Array(p * p);
  invertUpper(r, p, rInverse);
  if (options.thin === false) {
    return {
      n,
      p,
      columnNames: names,
      v: a,
      beta,
      r,
      rInverse,
      hat: new Float64Array(0),
      q: new Float64Array(0),
    };
  }
  // Thin Q: apply H_0 … H_{p−1} to the first p unit vectors (in reverse order).
  const q = new Float64Array(n * p);
  for (let j = 0; j < p; j++) q[j * n + j] = 1;
  for (let k = p - 1; k >= 0; k--) {
    const off = k * n;
    if (beta[k] === 0) continue;
    for (let j = 0; j < p; j++) {
      const oj = j * n;
      let s = 0;
      for (let i = k; i < n; i++) s += a[off + i] * q[oj + i];
      s *= beta[k];
      if (s !== 0) for (let i = k; i < n; i++) q[oj + i] -= s * a[off + i];
    }
  }
  const hat = new Float64Array(n);
  for (let j = 0; j < p; j++) {
    const oj = j * n;
    for (let i = 0; i < n; i++) hat[i] += q[oj + i] * q[oj + i];
  }
  for (let i = 0; i < n; i++) if (hat[i] > 1) hat[i] = 1;
  return { n, p, columnNames: names, v: a, beta, r, rInverse, hat, q };
}

export interface LinearModelFit {
  n: number;
  p: number;
  df: number;
  columnNames: readonly string[];
  coefficients: Float64Array;
  /** Standard errors; null entries only when df = 0 (exact fit with n = p). */
  se: (number | null)[];
  t: (number | null)[];
  pValues: (number | null)[];
  residuals: Float64Array;
  fitted: Float64Array;
  rss: number;
  /** Residual standard error √(RSS/df); null when df = 0. */
  sigma: number | null;
}

/**
 * Least-squares fit of y on a decomposed design. Cost O(n·p).
 * Throws StatsError for a response of the wrong length or with non-finite values.
 */
export function solveLinearModel(qr: QrDecomposition, y: ArrayLike<number>): LinearModelFit {
  const { n, p, v, beta, rInverse } = qr;
  require(y.length === n, "solveLinearModel requires one response per design row");
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i]))
      throw new StatsError(`solveLinearModel requires finite responses (row ${i + 1})`);
    z[i] = y[i];
  }
  // z ← Qᵀy
  applyQt(v, beta, n, p, z);
  const coefficients = new Float64Array(p);
  multiplyUpper(rInverse, z, p, coefficients);
  let rss = 0;
  for (let i = p; i < n; i++) rss += z[i] * z[i];
  // residuals = Q·[0; z_{p…n−1}]
  const residuals = new Float64Array(n);
  for (let i = p; i < n; i++) residuals[i] = z[i];
  for (let k = p - 1; k >= 0; k--) {
    if (beta[k] === 0) continue;
    const off = k * n;
    let s = 0;
    for (let i = k; i < n; i++) s += v[off + i] * residuals[i];
    s *= beta[k];
    for (let i = k; i < n; i++) residuals[i] -= s * v[off + i];
  }
  const fitted = new Float64Array(n);
  for (let i = 0; i < n; i++) fitted[i] = y[i] - residuals[i];
  const df = n - p;
  const sigma = df > 0 ? Math.sqrt(rss / df) : null;
  const se: (number | null)[] = [];
  const t: (number | null)[] = [];
  const pValues: (number | null)[] = [];
  for (let j = 0; j < p; j++) {
    if (sigma === null) {
      se.push(null);
      t.push(null);
      pValues.push(null);
      continue;
    }
    let s = 0;
    for (let k = j; k < p; k++) s += rInverse[j * p + k] * rInverse[j * p + k];
    const sej = sigma * Math.sqrt(s);
    se.push(sej);
    if (sej > 0) {
      const tj = coefficients[j] / sej;
      t.push(tj);
      pValues.push(studentTTwoSidedP(tj, df));
    } else {
      t.push(null);
      pValues.push(null);
    }
  }
  return {
    n,
    p,
    df,
    columnNames: qr.columnNames,
    coefficients,
    se,
    t,
    pValues,
    residuals,
    fitted,
    rss,
    sigma,
  };
}

/** Decompose and solve in one call (`options` as for qrDecompose). Cost O(n·p²). */
export function fitLinearModel(
  x: ArrayLike<number>,
  n: number,
  p: number,
  y: ArrayLike<number>,
  columnNames?: readonly string[],
  options: { thin?: boolean } = {},
): LinearModelFit & { qr: QrDecomposition } {
  const qr = qrDecompose(x, n, p, columnNames, options);
  return { ...solveLinearModel(qr, y), qr };
}

/** (XᵀX)⁻¹ = R⁻¹R⁻ᵀ, row-major p×p. Cost O(p³). */
export function unscaledCovariance(qr: QrDecomposition): Float64Array {
  const { p, rInverse } = qr;
  const c = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = i; j < p; j++) {
      let s = 0;
      for (let k = j; k < p; k++) s += rInverse[i * p + k] * rInverse[j * p + k];
      c[i * p + j] = s;
      c[j * p + i] = s;
    }
  }
  return c;
}

/** Two-sided confidence interval for coefficient j of a fit. Returns nulls when df = 0. */
export function coefficientInterval(
  fit: LinearModelFit,
  j: number,
  level = 0.95,
): { low: number | null; high: number | null } {
  const se = fit.se[j];
  if (se === null || fit.df <= 0) return { low: null, high: null };
  const q = studentTQuantile(0.5 + level / 2, fit.df);
  return { low: fit.coefficients[j] - q * se, high: fit.coefficients[j] + q * se };
}

/**
 * Householder QR of the column-major n × p matrix `a` in place: each
 * column k below the diagonal becomes its reflector v (with β_k = 2/vᵀv in
 * `beta`), `r` (p × p, row-major) receives R. `colNorm` holds each
 * column's squared norm before the reduction; a column whose remaining norm
 * falls under 1e-7 of it is a linear combination of those before it, and
 * the error names it from `names`. Cost O(n·p²).
 */
export function householderColumns(
  a: Float64Array,
  n: number,
  p: number,
  colNorm: ArrayLike<number>,
  names: readonly string[],
  beta: Float64Array,
  r: Float64Array,
): void {
  for (let k = 0; k < p; k++) {
    const off = k * n;
    let norm2 = 0;
    for (let i = k; i < n; i++) norm2 += a[off + i] * a[off + i];
    const norm = Math.sqrt(norm2);
    if (!(norm > 1e-7 * Math.sqrt(colNorm[k])) || colNorm[k] === 0) {
      throw new StatsError(
        colNorm[k] === 0
          ? `the design is rank deficient: column '${names[k]}' is all zero`
          : `the design is rank deficient: column '${names[k]}' is a linear combination of the columns before it`,
      );
    }
    const alpha = a[off + k] > 0 ? -norm : norm;
    a[off + k] -= alpha; // v = x − alpha·e1, stored in place
    const vtv = norm2 - 2 * alpha * (a[off + k] + alpha) + alpha * alpha;
    // vtv = (x_k − α)² + Σ_{i>k} x_i² = norm2 − 2α·x_k + α²
    beta[k] = vtv > 0 ? 2 / vtv : 0;
    r[k * p + k] = alpha;
    for (let j = k + 1; j < p; j++) {
      const oj = j * n;
      let s = 0;
      for (let i = k; i < n; i++) s += a[off + i] * a[oj + i];
      s *= beta[k];
      for (let i = k; i < n; i++) a[oj + i] -= s * a[off + i];
      r[k * p + j] = a[oj + k];
    }
  }
}

/** R⁻¹ of the p × p upper-triangular `r` (row-major) into `out`, by back substitution column by column. O(p³). */
export function invertUpper(r: ArrayLike<number>, p: number, out: Float64Array): void {
  for (let j = 0; j < p; j++) {
    out[j * p + j] = 1 / r[j * p + j];
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let k = i + 1; k <= j; k++) s += r[i * p + k] * out[k * p + j];
      out[i * p + j] = -s / r[i * p + i];
    }
  }
}

/** z ← Qᵀz for the reflectors of householderColumns (column-major `v`, `beta`), in place. O(n·p). */
export function applyQt(
  v: ArrayLike<number>,
  beta: ArrayLike<number>,
  n: number,
  p: number,
  z: Float64Array,
): void {
  for (let k = 0; k < p; k++) {
    if (beta[k] === 0) continue;
    const off = k * n;
    let s = 0;
    for (let i = k; i < n; i++) s += v[off + i] * z[i];
    s *= beta[k];
    for (let i = k; i < n; i++) z[i] -= s * v[off + i];
  }
}

/** out ← U·z for the p × p upper-triangular U (row-major), over z's first p entries: the coefficients R⁻¹(Qᵀy)₁…ₚ. O(p²). */
export function multiplyUpper(
  u: ArrayLike<number>,
  z: ArrayLike<number>,
  p: number,
  out: Float64Array,
): void {
  for (let i = 0; i < p; i++) {
    let s = 0;
    for (let k = i; k < p; k++) s += u[i * p + k] * z[k];
    out[i] = s;
  }
}
