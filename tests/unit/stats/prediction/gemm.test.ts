import { describe, expect, it } from "vitest";
import { gemm, rowMajor, transposed } from "../../../../server/stats/prediction/gemm";
import { createRng, normalDraw } from "../../../../server/stats/rng";

/** The textbook triple loop C[i][j] = Σ_l A[i][l]·B[l][j] (definition of the product; no source needed). */
function naive(a: number[][], b: number[][]): number[][] {
  return a.map((row) => b[0].map((_, j) => row.reduce((s, v, l) => s + v * b[l][j], 0)));
}

function random(rows: number, cols: number, rng: ReturnType<typeof createRng>): number[][] {
  return Array.from({ length: rows }, () => Array.from({ length: cols }, () => normalDraw(rng)));
}

describe("gemm", () => {
  it("matches the naive product for sizes around the 4×4 kernel and the cache blocks", () => {
    const rng = createRng(11);
    for (const [m, n, k] of [
      [1, 1, 1],
      [3, 5, 7],
      [4, 4, 4],
      [9, 6, 13],
      [70, 261, 300],
      [130, 17, 513],
    ]) {
      const a = random(m, k, rng);
      const b = random(k, n, rng);
      const expected = naive(a, b);
      const c = new Float64Array(m * n);
      gemm(
        m,
        n,
        k,
        rowMajor(Float64Array.from(a.flat()), k),
        rowMajor(Float64Array.from(b.flat()), n),
        c,
        n,
      );
      for (let i = 0; i < m; i++)
        for (let j = 0; j < n; j++) {
          const scale = Math.sqrt(k);
          expect(Math.abs(c[i * n + j] - expected[i][j])).toBeLessThan(1e-13 * scale * 10);
        }
    }
  });

  it("reads transposed operands through strides, accumulates, and writes into a sub-block", () => {
    const rng = createRng(12);
    const m = 11;
    const n = 9;
    const k = 21;
    const a = random(m, k, rng);
    const b = random(k, n, rng);
    const expected = naive(a, b);
    // Aᵀ stored k×m row-major, Bᵀ stored n×k row-major.
    const at = Float64Array.from({ length: k * m }, (_, x) => a[x % m][Math.floor(x / m)]);
    const bt = Float64Array.from({ length: n * k }, (_, x) => b[x % k][Math.floor(x / k)]);
    const ldc = n + 3;
    const c = new Float64Array((m + 1) * ldc).fill(1);
    gemm(m, n, k, transposed(at, m), transposed(bt, k), c, ldc, {
      accumulate: true,
      cOffset: ldc + 2,
    });
    for (let i = 0; i < m + 1; i++)
      for (let j = 0; j < ldc; j++) {
        const inside = i >= 1 && j >= 2 && j < 2 + n;
        const want = inside ? 1 + expected[i - 1][j - 2] : 1;
        expect(c[i * ldc + j]).toBeCloseTo(want, 12);
      }
  });
});

describe("gemm of a symmetric product", () => {
  it("computes the upper triangle of XᵀX as the full product does", () => {
    // XᵀX is symmetric (definition; no source needed): only its upper triangle is formed.
    const rng = createRng(13);
    for (const [rows, cols] of [
      [5, 3],
      [40, 70],
      [300, 133],
    ]) {
      const x = Float64Array.from({ length: rows * cols }, () => normalDraw(rng));
      const full = new Float64Array(cols * cols);
      gemm(cols, cols, rows, transposed(x, cols), rowMajor(x, cols), full, cols);
      const upper = new Float64Array(cols * cols);
      gemm(cols, cols, rows, transposed(x, cols), rowMajor(x, cols), upper, cols, { upper: true });
      for (let i = 0; i < cols; i++)
        for (let j = i; j < cols; j++) expect(upper[i * cols + j]).toBe(full[i * cols + j]);
    }
  });
});
