/**
 * Spearman's p without ties in its three ranges — exact (n ≤ 9), the
 * Edgeworth series of Best & Roberts 1975 (AS 89, 10 ≤ n ≤ 1290), the
 * t approximation beyond — each checked against the exact null distribution
 * of S = Σd², computed here by a dynamic programme over the positions
 * filled so far (independent of the engine's enumeration), and against
 * published values.
 */
import { describe, expect, it } from "vitest";
import { correlationP } from "../../../server/stats/correlation";
import {
  SPEARMAN_EDGEWORTH_MAX_N,
  SPEARMAN_EXACT_MAX_N,
  spearmanCorrelation,
  spearmanEdgeworthUpperTail,
  spearmanTwoSidedP,
} from "../../../server/stats/spearman";

/**
 * Exact counts of S = Σ(i − π(i))² over all n! permutations π of 0…n−1:
 * the distribution of T = Σ i·π(i) built position by position over the set
 * of values already used (2^n sets), then S = 2Σi² − 2T.
 */
function exactCounts(n: number): Float64Array {
  const tMax = ((n - 1) * n * (2 * n - 1)) / 6;
  let layer = new Map<number, Float64Array>([[0, Float64Array.of(1, ...new Array(tMax).fill(0))]]);
  for (let k = 0; k < n; k++) {
    const next = new Map<number, Float64Array>();
    for (const [used, dist] of layer) {
      for (let v = 0; v < n; v++) {
        if (used & (1 << v)) continue;
        const key = used | (1 << v);
        let out = next.get(key);
        if (!out) {
          out = new Float64Array(tMax + 1);
          next.set(key, out);
        }
        const add = k * v;
        for (let t = 0; t + add <= tMax; t++) out[t + add] += dist[t];
      }
    }
    layer = next;
  }
  const t = layer.get((1 << n) - 1) as Float64Array;
  const s = new Float64Array((n * n * n - n) / 3 + 1);
  for (let k = 0; k <= tMax; k++) s[2 * tMax - 2 * k] += t[k];
  return s;
}

/** Exact two-sided p for every even s (index s/2): twice the smaller tail, capped at 1. */
function exactTwoSided(n: number): number[] {
  const counts = exactCounts(n);
  const total = counts.reduce((a, b) => a + b, 0);
  const out: number[] = [];
  for (let s = 0; s < counts.length; s += 2) {
    let lower = 0;
    let upper = 0;
    for (let v = 0; v < counts.length; v++) {
      if (v <= s) lower += counts[v];
      if (v >= s) upper += counts[v];
    }
    out.push(Math.min(1, (2 * Math.min(lower, upper)) / total));
  }
  return out;
}

const sMax = (n: number) => (n * n * n - n) / 3;

describe("Spearman's p: the exact range (n ≤ 9)", () => {
  it("equals the exact two-sided p at every S for n = 3…9", () => {
    expect(SPEARMAN_EXACT_MAX_N).toBe(9);
    for (let n = 3; n <= 9; n++) {
      const exact = exactTwoSided(n);
      exact.forEach((p, k) => {
        const got = spearmanTwoSidedP(n, 2 * k);
        expect(got.method).toBe("exact");
        expect(got.p).toBeCloseTo(p, 14); // (exact enumeration by the dynamic programme above)
      });
    }
  });

  it("reproduces the documented example of Hollander & Wolfe's data", () => {
    const x = [44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1];
    const y = [2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8];
    const s = spearmanCorrelation(x, y);
    expect(s.s).toBe(48); // (R cor.test documentation example, data of Hollander & Wolfe 1973; value from memory)
    expect(s.r).toBeCloseTo(0.6, 12); // (same example; value from memory)
    expect(s.p / 2).toBeCloseTo(0.0484, 4); // (same example, one-sided p = 0.0484; value from memory)
    expect(s.pMethod).toBe("exact");
  });
});

describe("Spearman's p: the Edgeworth range (10 ≤ n ≤ 1290)", () => {
  it("matches the published AS 89 value and the exact value beside it (n = 10, S = 36)", () => {
    // P(S ≤ 36) at n = 10 is P(S ≥ 330 − 36) by symmetry.
    expect(spearmanEdgeworthUpperTail(10, sMax(10) - 36)).toBeCloseTo(0.005825634, 9); // (pspearman package documentation for R: AS 89 value 0.005825634)
    const counts = exactCounts(10);
    let lower = 0;
    for (let s = 0; s <= 36; s++) lower += counts[s];
    expect(lower / 3628800).toBeCloseTo(0.005265377, 9); // (same documentation: exact value 0.005265377; also exact enumeration above)
    const two = spearmanTwoSidedP(10, 36);
    expect(two.method).toBe("edgeworth");
    expect(two.p).toBeCloseTo(2 * 0.005825634, 9); // (twice the smaller tail)
  });

  it("is close to the exact p for n = 10…13, and closer than the t approximation", () => {
    // Largest relative error over every S with exact p ≥ 0.001, measured here: the bound for each n.
    const bounds: Record<number, number> = { 10: 0.24, 11: 0.15, 12: 0.092, 13: 0.057 };
    for (let n = 10; n <= 13; n++) {
      const exact = exactTwoSided(n);
      let worstEdgeworth = 0;
      let worstT = 0;
      exact.forEach((p, k) => {
        if (p < 0.001) return;
        const got = spearmanTwoSidedP(n, 2 * k);
        expect(got.method).toBe("edgeworth");
        worstEdgeworth = Math.max(worstEdgeworth, Math.abs(got.p - p) / p);
        const t = correlationP(1 - (4 * k) / sMax(n), n - 2);
        worstT = Math.max(worstT, Math.abs(t - p) / p);
      });
      expect(worstEdgeworth).toBeLessThan(bounds[n]); // (exact enumeration by the dynamic programme above)
      expect(worstT).toBeGreaterThan(2 * worstEdgeworth);
    }
  });

  it("agrees with a handbook table of critical values at the 5 % and 1 % levels", () => {
    // Two-sided critical values of r_s (Zar 2010, Appendix Table B.20; value from memory),
    // confirmed by exact enumeration: the exact p at r_s is ≤ α, and at the next smaller r_s it is > α.
    const table: [n: number, alpha: number, r: number][] = [
      [10, 0.05, 0.648],
      [11, 0.05, 0.618],
      [12, 0.05, 0.587],
      [13, 0.05, 0.56],
      [10, 0.01, 0.794],
      [12, 0.01, 0.727],
      [13, 0.01, 0.703],
    ];
    for (const [n, alpha, r] of table) {
      const exact = exactTwoSided(n);
      const k = Math.round(((1 - r) * sMax(n)) / 4); // S = (1 − r)(n³ − n)/6 = 2k
      expect(exact[k]).toBeLessThanOrEqual(alpha);
      expect(exact[k + 1]).toBeGreaterThan(alpha);
      // The Edgeworth p at the critical value lies within a quarter of α of it.
      expect(Math.abs(spearmanTwoSidedP(n, 2 * k).p - exact[k])).toBeLessThan(alpha / 4);
    }
  });

  it("is symmetric in the sign of ρ, and 1 at ρ = 0", () => {
    for (const n of [10, 57, 400, 1290]) {
      const max = sMax(n);
      for (const s of [0, 2, Math.round(max / 8) * 2, Math.round(max / 5) * 2]) {
        expect(spearmanTwoSidedP(n, s).p).toBe(spearmanTwoSidedP(n, max - s).p); // (exact algebra: S is symmetric about its mean)
      }
    }
    expect(spearmanTwoSidedP(12, sMax(12) / 2).p).toBe(1); // ((n³ − n)/6 = 286 is even at n = 12)
  });
});

describe("Spearman's p: the t approximation (n > 1290) and ties", () => {
  it("switches at n = 1291 to the t approximation on n − 2 df", () => {
    expect(SPEARMAN_EDGEWORTH_MAX_N).toBe(1290);
    const n = 1291;
    const s = Math.round((0.95 * sMax(n)) / 4) * 2; // ρ ≈ 0.05
    const r = 1 - (2 * s) / sMax(n);
    const got = spearmanTwoSidedP(n, s);
    expect(got.method).toBe("t");
    expect(got.p).toBeCloseTo(correlationP(r, n - 2), 14); // (Zar 2010 eq. 19.38)
    // Near the boundary the Edgeworth series and the t approximation are close (both tend to the normal).
    const edge = spearmanTwoSidedP(1290, Math.round((0.95 * sMax(1290)) / 4) * 2);
    expect(edge.method).toBe("edgeworth");
    expect(Math.abs(edge.p - got.p) / got.p).toBeLessThan(0.01);
  });

  it("keeps the t approximation whenever there are ties, even for small n", () => {
    const x = [1, 2, 2, 4, 5, 6, 7, 8, 9, 10, 11, 12];
    const y = [3, 1, 2, 5, 4, 8, 6, 10, 7, 9, 12, 11];
    const s = spearmanCorrelation(x, y);
    expect(s.pMethod).toBe("t");
    expect(s.p).toBeCloseTo(correlationP(s.r, 10), 14); // (Zar 2010 eq. 19.38)
  });

  it("without ties spearmanCorrelation uses the range of its n", () => {
    const y = [3, 1, 2, 5, 4, 8, 6, 10, 7, 9];
    const s = spearmanCorrelation([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], y);
    expect(s.pMethod).toBe("edgeworth");
    expect(s.exact).toBe(false);
    expect(s.p).toBe(spearmanTwoSidedP(10, s.s).p);
  });
});
