import { describe, expect, it } from "vitest";
import { symmetricEigen } from "../../../../server/stats/prediction/symmetric-eigen";
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
});
