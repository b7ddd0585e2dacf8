import { describe, expect, it } from "vitest";
import { crossValidatedPrediction } from "../../../../server/stats/prediction/cross-validate";
import { minimumTrainingRows } from "../../../../server/stats/prediction/fold-pipeline";
import { inventData } from "./reference-ridge";

const options = {
  folds: 5,
  repeats: 3,
  seed: 4,
  inference: "none" as const,
  learningCurve: true,
};

describe("learning curve", () => {
  it("subsamples 20/40/60/80 % of each fold's training rows and ends at the model's own scores", () => {
    const data = inventData(8, 50, 6, { signal: 1, noise: 0.5 });
    const result = crossValidatedPrediction(data, options);
    const curve = result.learningCurve ?? [];
    // 5 folds of 50: 40 training rows each; round(f·40) rows (issue 16's definition).
    expect(curve.map((p) => p.trainingRows)).toEqual([8, 16, 24, 32, 40]);
    expect(curve[4].r).toBe(result.r);
    expect(curve[4].r2).toBe(result.r2);
    expect(curve[4].rSpread).toBe(result.spread.r);
    for (const point of curve) {
      expect(point.r).not.toBeNull();
      expect(point.rSpread).not.toBeNull();
    }
    // A strong planted signal is learned better from all rows than from a fifth of them
    // (common practice, no source).
    expect(curve[4].r2 ?? 0).toBeGreaterThan(curve[0].r2 ?? 0);
  });

  it("marks a training size too small for the pipeline as unavailable instead of failing", () => {
    const data = inventData(9, 20, 4, { signal: 1 });
    // 16 training rows per fold: 20 % is 3 rows, below the 4 an inner 5-fold λ choice
    // needs (3 rows left for each inner training set; common practice, no source).
    expect(minimumTrainingRows(0, true)).toBe(4);
    const result = crossValidatedPrediction(data, options);
    const curve = result.learningCurve ?? [];
    expect(curve[0]).toMatchObject({
      fraction: 0.2,
      trainingRows: 3,
      r: null,
      r2: null,
      rSpread: null,
    });
    expect(curve[1].r).not.toBeNull();
  });

  it("is absent when not asked for", () => {
    const data = inventData(9, 20, 4);
    expect(
      crossValidatedPrediction(data, { ...options, learningCurve: false }).learningCurve,
    ).toBeNull();
  });
});
