import { describe, expect, it } from "vitest";
import { crossValidatedPrediction } from "../../../../server/stats/prediction/cross-validate";
import { createRng, normalDraw } from "../../../../server/stats/rng";
import { inventData } from "./reference-ridge";

describe("permutation test of the cross-validated scores", () => {
  it("gives roughly uniform p-values on null data (30 seeded data sets)", () => {
    const pValues: number[] = [];
    const pR2: number[] = [];
    for (let s = 0; s < 30; s++) {
      const rng = createRng(1000 + s);
      const n = 30;
      const X = Array.from({ length: 5 }, () =>
        Float64Array.from({ length: n }, () => normalDraw(rng)),
      );
      const y = Float64Array.from({ length: n }, () => normalDraw(rng));
      const result = crossValidatedPrediction(
        {
          participants: Array.from({ length: n }, (_, i) => `P${i}`),
          X,
          regions: X.map((_, j) => `R${j}`),
          y,
          covariates: [],
        },
        {
          folds: 5,
          repeats: 1,
          seed: s,
          inference: "permutation",
          resamples: 49,
          learningCurve: false,
        },
      );
      pValues.push(result.permutation?.pR ?? Number.NaN);
      pR2.push(result.permutation?.pR2 ?? Number.NaN);
    }
    for (const ps of [pValues, pR2]) {
      // Share below 0.05: expected 1.5 of 30 under the null; at most 5 allows for chance
      // (binomial(30, 0.05): P(X ≥ 6) ≈ 0.003; binomial tail, value from memory).
      expect(ps.filter((p) => p < 0.05).length).toBeLessThanOrEqual(5);
      // Kolmogorov–Smirnov distance to the uniform: 0.29 is the 1 % critical value for
      // n = 30 (Massey 1951, JASA 46:68–78, Table 1; value from memory).
      const sorted = [...ps].sort((a, b) => a - b);
      let d = 0;
      sorted.forEach((p, i) => {
        d = Math.max(d, Math.abs((i + 1) / 30 - p), Math.abs(p - i / 30));
      });
      expect(d).toBeLessThan(0.29);
    }
  });

  it("puts a strong planted signal at the floor 1/(m + 1), for r and for r2", () => {
    const data = inventData(3, 50, 6, { signal: 1, noise: 0.3, covariates: 1 });
    const result = crossValidatedPrediction(data, {
      folds: 5,
      repeats: 2,
      seed: 12,
      inference: "permutation",
      resamples: 99,
      learningCurve: false,
    });
    // (b + 1)/(m + 1) with b = 0 (Phipson & Smyth 2010): 1/100.
    expect(result.permutation?.pR).toBe(1 / 100);
    expect(result.permutation?.pR2).toBe(1 / 100);
    expect(result.r).toBeGreaterThan(0.9);
  });
});
