/**
 * The weighted least-squares step of the random-effects weighted linear
 * model (meta-regression.ts): for weights 1/(v_i + τ²) at one τ², the
 * coefficients, (X'WX)⁻¹ by Cholesky factorisation, the weighted residual
 * sum of squares and the traces of P = W − WX(X'WX)⁻¹X'W that the
 * DerSimonian–Laird and REML estimators of τ² use.
 */

/** A weighted least-squares fit at one τ², with the traces the τ² estimators need. */
export interface WeightedFit {
  beta: Float64Array;
  /** (X'WX)⁻¹, p × p row-major. */
  inverse: Float64Array;
  /** Weighted residual sum of squares Σ w_i (y_i − x_i'β)². */
  rss: number;
  /** tr(P) with P = W − WX(X'WX)⁻¹X'W. */
  traceP: number;
  /** tr(PP). */
  tracePP: number;
  /** y'PPy = Σ (w_i e_i)². */
  yPPy: number;
}

/**
 * Inverts a symmetric positive-definite p × p matrix (row-major) by Cholesky
 * factorisation. Returns null when the matrix is not positive definite to
 * working precision (rank-deficient design).
 */
function invertSpd(a: Float64Array, p: number): Float64Array | null {
  const l = new Float64Array(p * p);
  let maxDiag = 0;
  for (let i = 0; i < p; i++) maxDiag = Math.max(maxDiag, a[i * p + i]);
  for (let j = 0; j < p; j++) {
    let sum = a[j * p + j];
    for (let k = 0; k < j; k++) sum -= l[j * p + k] * l[j * p + k];
    if (!(sum > 1e-12 * maxDiag)) return null;
    const ljj = Math.sqrt(sum);
    l[j * p + j] = ljj;
    for (let i = j + 1; i < p; i++) {
      let s = a[i * p + j];
      for (let k = 0; k < j; k++) s -= l[i * p + k] * l[j * p + k];
      l[i * p + j] = s / ljj;
    }
  }
  // Inverse of L (lower triangular), then A⁻¹ = L⁻ᵀ L⁻¹.
  const li = new Float64Array(p * p);
  for (let j = 0; j < p; j++) {
    li[j * p + j] = 1 / l[j * p + j];
    for (let i = j + 1; i < p; i++) {
      let s = 0;
      for (let k = j; k < i; k++) s -= l[i * p + k] * li[k * p + j];
      li[i * p + j] = s / l[i * p + i];
    }
  }
  const inv = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < p; k++) s += li[k * p + i] * li[k * p + j];
      inv[i * p + j] = s;
      inv[j * p + i] = s;
    }
  }
  return inv;
}

/**
 * Weighted least squares with weights w_i = 1/(v_i + τ²), plus the traces the
 * τ² estimators need. x is n × p row-major. Cost O(n p²).
 */
export function weightedFit(
  y: Float64Array,
  v: Float64Array,
  x: Float64Array,
  n: number,
  p: number,
  tau2: number,
): WeightedFit | null {
  const a = new Float64Array(p * p);
  const b = new Float64Array(p * p);
  const xwy = new Float64Array(p);
  const w = new Float64Array(n);
  let sumW = 0;
  let sumW2 = 0;
  for (let i = 0; i < n; i++) {
    const wi = 1 / (v[i] + tau2);
    w[i] = wi;
    sumW += wi;
    sumW2 += wi * wi;
    const row = i * p;
    for (let r = 0; r < p; r++) {
      const xr = x[row + r];
      xwy[r] += wi * xr * y[i];
      for (let c = 0; c <= r; c++) {
        const prod = xr * x[row + c];
        a[r * p + c] += wi * prod;
        b[r * p + c] += wi * wi * prod;
      }
    }
  }
  for (let r = 0; r < p; r++) {
    for (let c = 0; c < r; c++) {
      a[c * p + r] = a[r * p + c];
      b[c * p + r] = b[r * p + c];
    }
  }
  const inverse = invertSpd(a, p);
  if (inverse === null) return null;
  const beta = new Float64Array(p);
  for (let r = 0; r < p; r++) {
    let s = 0;
    for (let c = 0; c < p; c++) s += inverse[r * p + c] * xwy[c];
    beta[r] = s;
  }
  let rss = 0;
  let yPPy = 0;
  let sumW2H = 0;
  let sumW3H = 0;
  for (let i = 0; i < n; i++) {
    const row = i * p;
    let fitted = 0;
    let h = 0;
    for (let r = 0; r < p; r++) {
      fitted += x[row + r] * beta[r];
      let s = 0;
      for (let c = 0; c < p; c++) s += inverse[r * p + c] * x[row + c];
      h += x[row + r] * s;
    }
    const e = y[i] - fitted;
    const wi = w[i];
    rss += wi * e * e;
    yPPy += wi * wi * e * e;
    sumW2H += wi * wi * h;
    sumW3H += wi * wi * wi * h;
  }
  // tr((A⁻¹B)²) for the last term of tr(PP).
  const m = new Float64Array(p * p);
  for (let r = 0; r < p; r++) {
    for (let c = 0; c < p; c++) {
      let s = 0;
      for (let k = 0; k < p; k++) s += inverse[r * p + k] * b[k * p + c];
      m[r * p + c] = s;
    }
  }
  let traceM2 = 0;
  for (let r = 0; r < p; r++) for (let c = 0; c < p; c++) traceM2 += m[r * p + c] * m[c * p + r];
  return {
    beta,
    inverse,
    rss,
    traceP: sumW - sumW2H,
    tracePP: sumW2 - 2 * sumW3H + traceM2,
    yPPy,
  };
}
