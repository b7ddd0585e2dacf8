import { describe, expect, it } from "vitest";
import { ridgeFactors, ridgeSolveColumns } from "../../../../server/stats/prediction/ridge";
import {
  householderTridiagonal,
  symmetricEigen,
} from "../../../../server/stats/prediction/symmetric-eigen";
import { createRng, normalDraw } from "../../../../server/stats/rng";

describe("symmetricEigen", () => {
  it("gives the closed-form eigenvalues of the second-difference matrix", () => {
    // tridiag(−1, 2, −1) of order m has eigenvalues 2 − 2cos(kπ/(m+1)), k = 1..m
    // (Strang 2007, Computational Science and Engineering, §1.5).
    const m = 12;
    const a = new Float64Array(m * m);
    for (let i = 0; i < m; i++) {
      a[i * m + i] = 2;
      if (i > 0) a[i * m + i - 1] = -1;
      if (i < m - 1) a[i * m + i + 1] = -1;
    }
    const { values } = symmetricEigen(a, m);
    for (let k = 1; k <= m; k++) {
      expect(values[k - 1]).toBeCloseTo(2 - 2 * Math.cos((k * Math.PI) / (m + 1)), 12);
    }
  });

  it("reconstructs a random symmetric matrix with orthonormal vectors", () => {
    // A V = V Λ and VᵀV = I (definition of the eigendecomposition; no source needed).
    const rng = createRng(7);
    for (const m of [1, 2, 5, 40]) {
      const a = new Float64Array(m * m);
      for (let i = 0; i < m; i++)
        for (let j = 0; j <= i; j++) a[i * m + j] = a[j * m + i] = normalDraw(rng);
      const { values, vectors } = symmetricEigen(a, m);
      for (let k = 1; k < m; k++) expect(values[k]).toBeGreaterThanOrEqual(values[k - 1]);
      for (let k = 0; k < m; k++) {
        for (let i = 0; i < m; i++) {
          let av = 0;
          for (let j = 0; j < m; j++) av += a[i * m + j] * vectors[k * m + j];
          expect(av).toBeCloseTo(values[k] * vectors[k * m + i], 10);
        }
        for (let l = 0; l < m; l++) {
          let dot = 0;
          for (let j = 0; j < m; j++) dot += vectors[k * m + j] * vectors[l * m + j];
          expect(dot).toBeCloseTo(k === l ? 1 : 0, 12);
        }
      }
    }
  });

  it("handles a rank-deficient Gram matrix (zero eigenvalues)", () => {
    // XXᵀ of a 6×2 matrix has rank 2: four eigenvalues 0 (linear algebra, no source needed).
    const x = [1, 2, 3, 4, 5, 6, -1, 0, 2, 1, 0, 3];
    const m = 6;
    const a = new Float64Array(m * m);
    for (let i = 0; i < m; i++)
      for (let j = 0; j < m; j++) a[i * m + j] = x[i * 2] * x[j * 2] + x[i * 2 + 1] * x[j * 2 + 1];
    const { values } = symmetricEigen(a, m);
    for (let k = 0; k < 4; k++) expect(Math.abs(values[k])).toBeLessThan(1e-12);
    // Trace = sum of eigenvalues = Σ x² = 91 + 15 = 106 (arithmetic).
    expect(values[4] + values[5]).toBeCloseTo(106, 10);
  });

  it("recovers a known spectrum, with tied and nearly tied eigenvalues, to 1e-12 relative", () => {
    // A = H Λ H with the Householder reflector H = I − 2uuᵀ/uᵀu (orthogonal and
    // symmetric) has eigenvalues Λ and eigenvectors the columns of H (Golub &
    // Van Loan 2013, Matrix Computations, 4th ed., §5.1.2 and §8.1).
    const m = 150;
    const rng = createRng(21);
    const u = Float64Array.from({ length: m }, () => normalDraw(rng));
    let uu = 0;
    for (const x of u) uu += x * x;
    const spectrum = Float64Array.from({ length: m }, (_, i) => 1 + i * 0.5);
    spectrum[10] = spectrum[11] = spectrum[12] = 7; // exact triple tie
    spectrum[40] = 30 + 1e-9; // near tie with spectrum[41]
    spectrum[41] = 30;
    spectrum[0] = 0; // singular, as a duplicated region makes a Gram matrix
    const h = (i: number, j: number) => (i === j ? 1 : 0) - (2 * u[i] * u[j]) / uu;
    const a = new Float64Array(m * m);
    for (let i = 0; i < m; i++)
      for (let j = 0; j < m; j++) {
        let s = 0;
        for (let k = 0; k < m; k++) s += h(i, k) * spectrum[k] * h(k, j);
        a[i * m + j] = s;
      }
    for (let i = 0; i < m; i++) for (let j = 0; j < i; j++) a[i * m + j] = a[j * m + i];
    const norm = Math.max(...spectrum);
    const { values, vectors } = symmetricEigen(a, m);
    const sorted = Float64Array.from(spectrum).sort();
    for (let k = 0; k < m; k++)
      expect(Math.abs(values[k] - sorted[k])).toBeLessThan(1e-12 * norm * 10);
    let residual = 0;
    let orthogonality = 0;
    for (let k = 0; k < m; k++) {
      for (let i = 0; i < m; i++) {
        let av = 0;
        for (let j = 0; j < m; j++) av += a[i * m + j] * vectors[k * m + j];
        residual = Math.max(residual, Math.abs(av - values[k] * vectors[k * m + i]));
      }
      for (let l = 0; l <= k; l++) {
        let dot = 0;
        for (let j = 0; j < m; j++) dot += vectors[k * m + j] * vectors[l * m + j];
        orthogonality = Math.max(orthogonality, Math.abs(dot - (k === l ? 1 : 0)));
      }
    }
    expect(residual / norm).toBeLessThan(1e-12);
    expect(orthogonality).toBeLessThan(1e-12);
  });

  it("reduces to tridiagonal form A = QTQᵀ with Q orthogonal, and solves T + λI", () => {
    // Householder tridiagonalization (Golub & Van Loan 2013, Algorithm 8.3.1) and the
    // LDLᵀ solve of a positive definite tridiagonal system (§4.3.6): checked by the
    // definitions, QᵀQ = I, QTQᵀ = A and (T + λI)s = g.
    const rng = createRng(23);
    for (const m of [1, 2, 3, 17, 64]) {
      const x = Array.from({ length: m + 3 }, () =>
        Array.from({ length: m }, () => normalDraw(rng)),
      );
      const a = new Float64Array(m * m);
      for (let i = 0; i < m; i++)
        for (let j = 0; j < m; j++) for (const row of x) a[i * m + j] += row[i] * row[j];
      const { diag, off, q } = householderTridiagonal(a, m);
      const t = (i: number, j: number) =>
        i === j ? diag[i] : j === i + 1 ? off[i] : i === j + 1 ? off[j] : 0;
      let norm = 0;
      for (const v of a) norm = Math.max(norm, Math.abs(v));
      for (let i = 0; i < m; i++)
        for (let j = 0; j < m; j++) {
          let qtq = 0;
          let back = 0;
          for (let k = 0; k < m; k++) {
            qtq += q[k * m + i] * q[k * m + j];
            for (let l = Math.max(0, k - 1); l <= Math.min(m - 1, k + 1); l++)
              back += q[i * m + k] * t(k, l) * q[j * m + l];
          }
          expect(Math.abs(qtq - (i === j ? 1 : 0))).toBeLessThan(1e-13);
          expect(Math.abs(back - a[i * m + j])).toBeLessThan(1e-13 * norm);
        }
      const lambdas = [0.5, 30];
      const factors = ridgeFactors({ r: m, diag, off }, lambdas);
      const g = Float64Array.from({ length: m }, () => normalDraw(rng));
      lambdas.forEach((lambda, l) => {
        const s = new Float64Array(m);
        ridgeSolveColumns(factors, l, g, 1, 0, s, 1, 0, 1);
        for (let i = 0; i < m; i++) {
          let ts = lambda * s[i];
          for (let k = Math.max(0, i - 1); k <= Math.min(m - 1, i + 1); k++) ts += t(i, k) * s[k];
          expect(Math.abs(ts - g[i])).toBeLessThan(1e-12 * (1 + Math.abs(g[i])));
        }
      });
    }
  });
});
