/**
 * Independent reference computations for the resampling tests: a naive
 * least-squares refit by the normal equations (Gauss–Jordan inversion of
 * X′X, textbook formulas), exhaustive enumerations of sign patterns,
 * subsets and permutations, and a seeded normal generator for simulated data.
 * Nothing here shares code with the engine's kernel.
 */

/** Inverts a small symmetric positive-definite matrix (array of rows) by Gauss–Jordan elimination with partial pivoting. */
export function invert(a: number[][]): number[][] {
  const k = a.length;
  const m = a.map((row, i) => [...row, ...Array.from({ length: k }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < k; c++) {
    let piv = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(m[r][c]) > Math.abs(m[piv][c])) piv = r;
    [m[c], m[piv]] = [m[piv], m[c]];
    const d = m[c][c];
    for (let j = 0; j < 2 * k; j++) m[c][j] /= d;
    for (let r = 0; r < k; r++) {
      if (r === c) continue;
      const f = m[r][c];
      for (let j = 0; j < 2 * k; j++) m[r][j] -= f * m[c][j];
    }
  }
  return m.map((row) => row.slice(k));
}

/** Ordinary least squares by the normal equations: coefficients, residuals and the t of every coefficient. */
export function naiveOls(
  x: number[][],
  y: readonly number[],
): { beta: number[]; residuals: number[]; fitted: number[]; t: number[] } {
  const n = x.length;
  const p = x[0].length;
  const xtx = Array.from({ length: p }, (_, a) =>
    Array.from({ length: p }, (_, b) => x.reduce((s, row) => s + row[a] * row[b], 0)),
  );
  const xty = Array.from({ length: p }, (_, a) => x.reduce((s, row, i) => s + row[a] * y[i], 0));
  const inv = invert(xtx);
  const beta = inv.map((row) => row.reduce((s, v, b) => s + v * xty[b], 0));
  const fitted = x.map((row) => row.reduce((s, v, b) => s + v * beta[b], 0));
  const residuals = y.map((v, i) => v - fitted[i]);
  const sigma2 = residuals.reduce((s, v) => s + v * v, 0) / (n - p);
  const t = beta.map((b, j) => b / Math.sqrt(sigma2 * inv[j][j]));
  return { beta, residuals, fitted, t };
}

/** Every permutation of 0..n−1 (Heap's algorithm; n! of them). */
export function allPermutations(n: number): number[][] {
  const out: number[][] = [];
  const a = Array.from({ length: n }, (_, i) => i);
  const c = new Array(n).fill(0);
  out.push([...a]);
  let i = 0;
  while (i < n) {
    if (c[i] < i) {
      const j = i % 2 === 0 ? 0 : c[i];
      [a[j], a[i]] = [a[i], a[j]];
      out.push([...a]);
      c[i]++;
      i = 0;
    } else {
      c[i] = 0;
      i++;
    }
  }
  return out;
}

/** Every k-subset of 0..n−1 (by bit masks). */
export function allSubsets(n: number, k: number): number[][] {
  const out: number[][] = [];
  for (let mask = 0; mask < 1 << n; mask++) {
    const s: number[] = [];
    for (let i = 0; i < n; i++) if (mask & (1 << i)) s.push(i);
    if (s.length === k) out.push(s);
  }
  return out;
}

/** Every ±1 vector of length n (2^n of them). */
export function allSignVectors(n: number): number[][] {
  return Array.from({ length: 1 << n }, (_, mask) =>
    Array.from({ length: n }, (_, i) => (mask & (1 << i) ? -1 : 1)),
  );
}

/** Share of `values` whose absolute value reaches |observed| (relative tolerance 1e-9 for ties). */
export function twoSidedShare(values: readonly number[], observed: number): number {
  const thr = Math.abs(observed) * (1 - 1e-9);
  return values.filter((v) => Math.abs(v) >= thr).length / values.length;
}

export function mean(a: readonly number[]): number {
  return a.reduce((s, v) => s + v, 0) / a.length;
}

/** Pooled-variance two-sample t (Student 1908; textbook formula). */
export function pooledT(a: readonly number[], b: readonly number[]): number {
  const ma = mean(a);
  const mb = mean(b);
  const ss = a.reduce((s, v) => s + (v - ma) ** 2, 0) + b.reduce((s, v) => s + (v - mb) ** 2, 0);
  const sp2 = ss / (a.length + b.length - 2);
  return (ma - mb) / Math.sqrt(sp2 * (1 / a.length + 1 / b.length));
}

/** Welch's two-sample t (Welch 1947; textbook formula). */
export function welchT(a: readonly number[], b: readonly number[]): number {
  const ma = mean(a);
  const mb = mean(b);
  const va = a.reduce((s, v) => s + (v - ma) ** 2, 0) / (a.length - 1);
  const vb = b.reduce((s, v) => s + (v - mb) ** 2, 0) / (b.length - 1);
  return (ma - mb) / Math.sqrt(va / a.length + vb / b.length);
}

/** One-sample t of the mean against zero (textbook formula). */
export function oneSampleT(a: readonly number[]): number {
  const m = mean(a);
  const v = a.reduce((s, x) => s + (x - m) ** 2, 0) / (a.length - 1);
  return m / Math.sqrt(v / a.length);
}
