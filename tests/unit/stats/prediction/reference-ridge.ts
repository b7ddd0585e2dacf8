/**
 * Independent implementations for the prediction tests, written straight from
 * the formulas (Hastie, Tibshirani & Friedman 2009, The Elements of
 * Statistical Learning, 2nd ed., §3.4.1 eq. 3.44 and §7.10): ordinary least
 * squares and ridge by normal equations solved with Gaussian elimination with
 * partial pivoting (no QR, no eigendecomposition, nothing from the engine).
 */
import { createRng, normalDraw } from "../../../../server/stats/rng";

/** Solves A x = b (A n×n as rows) by Gaussian elimination with partial pivoting. */
export function solve(a: number[][], b: number[]): number[] {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i]]);
  for (let c = 0; c < n; c++) {
    let pivot = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r][c]) > Math.abs(m[pivot][c])) pivot = r;
    [m[c], m[pivot]] = [m[pivot], m[c]];
    for (let r = c + 1; r < n; r++) {
      const f = m[r][c] / m[c][c];
      for (let k = c; k <= n; k++) m[r][k] -= f * m[c][k];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r][n];
    for (let k = r + 1; k < n; k++) s -= m[r][k] * x[k];
    x[r] = s / m[r][r];
  }
  return x;
}

/** OLS coefficients of v on the design rows d (normal equations DᵀD β = Dᵀv). */
export function ols(d: number[][], v: number[]): number[] {
  const q = d[0].length;
  const a = Array.from({ length: q }, (_, i) =>
    Array.from({ length: q }, (_, j) => d.reduce((s, row) => s + row[i] * row[j], 0)),
  );
  const b = Array.from({ length: q }, (_, i) => d.reduce((s, row, r) => s + row[i] * v[r], 0));
  return solve(a, b);
}

export interface DirectFit {
  mean: number[];
  sd: number[];
  intercept: number;
  weights: number[];
}

/**
 * Ridge with an unpenalized intercept on rows x (n×p) and y: columns centred
 * (and scaled by the SD, n − 1, when `standardize`), b = (XᵀX + λI)⁻¹Xᵀ(y − ȳ),
 * b₀ = ȳ on the scaled columns.
 */
export function ridgeDirect(
  x: number[][],
  y: number[],
  lambda: number,
  standardize = true,
): DirectFit {
  const n = x.length;
  const p = x[0].length;
  const mean = Array.from({ length: p }, (_, j) => x.reduce((s, row) => s + row[j], 0) / n);
  const sd = Array.from({ length: p }, (_, j) =>
    standardize ? Math.sqrt(x.reduce((s, row) => s + (row[j] - mean[j]) ** 2, 0) / (n - 1)) : 1,
  );
  const xs = x.map((row) => row.map((v, j) => (v - mean[j]) / sd[j]));
  const ybar = y.reduce((s, v) => s + v, 0) / n;
  const a = Array.from({ length: p }, (_, i) =>
    Array.from(
      { length: p },
      (_, j) => xs.reduce((s, row) => s + row[i] * row[j], 0) + (i === j ? lambda : 0),
    ),
  );
  const b = Array.from({ length: p }, (_, i) =>
    xs.reduce((s, row, r) => s + row[i] * (y[r] - ybar), 0),
  );
  return { mean, sd, intercept: ybar, weights: solve(a, b) };
}

export function predictDirect(fit: DirectFit, row: number[]): number {
  return row.reduce(
    (s, v, j) => s + ((v - fit.mean[j]) / fit.sd[j]) * fit.weights[j],
    fit.intercept,
  );
}

/** Invented data: n participants, p regions, trait = Σ signal_j·x_j + noise, optional covariates. */
export function inventData(
  seed: number,
  n: number,
  p: number,
  options: { signal?: number; covariates?: number; noise?: number } = {},
): {
  participants: string[];
  X: Float64Array[];
  regions: string[];
  y: Float64Array;
  covariates: Float64Array[];
} {
  const rng = createRng(seed);
  const c = options.covariates ?? 0;
  const covariates = Array.from({ length: c }, () =>
    Float64Array.from({ length: n }, () => normalDraw(rng)),
  );
  const X = Array.from({ length: p }, (_, j) =>
    Float64Array.from(
      { length: n },
      (_, i) => 10 + (j + 1) * normalDraw(rng) + covariates.reduce((s, cv) => s + 0.5 * cv[i], 0),
    ),
  );
  const signal = options.signal ?? 0.5;
  const y = Float64Array.from({ length: n }, (_, i) => {
    let v = 3 + (options.noise ?? 1) * normalDraw(rng);
    for (let j = 0; j < Math.min(p, 3); j++) v += (signal * (X[j][i] - 10)) / (j + 1);
    for (const cv of covariates) v += 0.7 * cv[i];
    return v;
  });
  return {
    participants: Array.from({ length: n }, (_, i) => `P${String(i + 1).padStart(3, "0")}`),
    X,
    regions: Array.from({ length: p }, (_, j) => `R${j + 1}`),
    y,
    covariates,
  };
}

/** Rows of the data (participants × regions). */
export function rows(X: readonly Float64Array[], units: readonly number[]): number[][] {
  return units.map((i) => X.map((col) => col[i]));
}

/** |a − b| ≤ tol·max(|b|, floor): relative, with a floor for values near 0. */
export function relClose(a: number, b: number, tol: number, floor = 1): boolean {
  return Math.abs(a - b) <= tol * Math.max(Math.abs(b), floor);
}
