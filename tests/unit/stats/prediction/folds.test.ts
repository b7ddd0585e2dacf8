import { describe, expect, it } from "vitest";
import { StatsError } from "../../../../server/stats/errors";
import { crossValidatedPrediction } from "../../../../server/stats/prediction/cross-validate";
import { crossValidationSplits } from "../../../../server/stats/prediction/folds";
import { createRng } from "../../../../server/stats/rng";
import { inventData } from "./reference-ridge";

describe("crossValidationSplits", () => {
  it("partitions every repeat: each unit held out exactly once, train = complement", () => {
    // Definition of k-fold cross-validation (Hastie et al. 2009, §7.10.1).
    const splits = crossValidationSplits({ n: 23, folds: 4, repeats: 3, rng: createRng(3) });
    expect(splits).toHaveLength(12);
    for (let repeat = 0; repeat < 3; repeat++) {
      const held = splits.filter((s) => s.repeat === repeat).flatMap((s) => [...s.held]);
      expect(held.sort((a, b) => a - b)).toEqual([...Array(23).keys()]);
      for (const s of splits.filter((x) => x.repeat === repeat)) {
        expect(s.held.length).toBeGreaterThanOrEqual(5);
        expect(s.held.length).toBeLessThanOrEqual(6);
        expect(s.train.length + s.held.length).toBe(23);
        for (const i of s.held) expect(s.train.includes(i)).toBe(false);
      }
    }
    // Different repeats are different partitions (a fresh shuffle each; common practice, no source).
    const first = JSON.stringify(splits.slice(0, 4).map((s) => [...s.held]));
    const second = JSON.stringify(splits.slice(4, 8).map((s) => [...s.held]));
    expect(first).not.toBe(second);
  });

  it("keeps each group's share in every fold within one of the exact share", () => {
    // Stratified k-fold: each fold holds n_g/k of group g up to rounding (Kohavi 1995, §3).
    const group: (string | null)[] = [
      ...Array(23).fill("A"),
      ...Array(11).fill("B"),
      ...Array(6).fill(null),
    ];
    // Interleave so that order alone would not stratify.
    const mixed = group.map((_, i) => group[(i * 7) % group.length]);
    const k = 5;
    const splits = crossValidationSplits({
      n: 40,
      folds: k,
      repeats: 4,
      group: mixed,
      rng: createRng(9),
    });
    for (const label of ["A", "B", null]) {
      const total = mixed.filter((g) => g === label).length;
      for (const s of splits) {
        const count = [...s.held].filter((i) => mixed[i] === label).length;
        expect(Math.abs(count - total / k)).toBeLessThan(1);
      }
    }
  });

  it("gives n single-unit folds for leave-one-out", () => {
    const splits = crossValidationSplits({
      n: 5,
      folds: "leave-one-out",
      repeats: 1,
      rng: createRng(1),
    });
    expect(splits.map((s) => [...s.held])).toEqual([[0], [1], [2], [3], [4]]);
  });

  it("refuses bad fold counts and too small groups with messages naming the option", () => {
    const rng = createRng(1);
    expect(() => crossValidationSplits({ n: 10, folds: 1, repeats: 1, rng })).toThrow(
      "folds must be at least 2 and at most the number of participants",
    );
    expect(() => crossValidationSplits({ n: 10, folds: 11, repeats: 1, rng })).toThrow(
      "folds must be at least 2 and at most the number of participants",
    );
    expect(() => crossValidationSplits({ n: 10, folds: "leave-one-out", repeats: 2, rng })).toThrow(
      "repeats must be 1 for leave-one-out",
    );
    const group = [...Array(8).fill("A"), "B", "B"];
    expect(() => crossValidationSplits({ n: 10, folds: 3, repeats: 1, group, rng })).toThrow(
      "folds stratified by group require at least 3 participants per group (group 'B' has 2)",
    );
  });
});

describe("crossValidatedPrediction with seeded k-fold splits", () => {
  const data = inventData(41, 36, 8, { covariates: 1 });
  const options = {
    folds: 4,
    repeats: 3,
    inference: "permutation" as const,
    resamples: 19,
    learningCurve: true,
  };

  it("is byte-identical for a seed and different for another seed", () => {
    // Determinism for a seed is the product's reproducibility rule (common practice, no source).
    const a = JSON.stringify(crossValidatedPrediction(data, { ...options, seed: 5 }));
    const b = JSON.stringify(crossValidatedPrediction(data, { ...options, seed: 5 }));
    const c = JSON.stringify(crossValidatedPrediction(data, { ...options, seed: 6 }));
    expect(a).toBe(b);
    expect(a).not.toBe(c);
  });

  it("reports per-repeat scores, their mean and spread, one λ per fold and a learning curve", () => {
    const result = crossValidatedPrediction(data, { ...options, seed: 5 });
    expect(result.perRepeat).toHaveLength(3);
    const meanR = result.perRepeat.reduce((s, x) => s + (x.r ?? 0), 0) / 3;
    expect(result.r).toBeCloseTo(meanR, 14);
    expect(result.lambdas).toHaveLength(12);
    expect(result.regions).toHaveLength(8);
    for (const region of result.regions) {
      expect(region.signConsistency).toBeGreaterThanOrEqual(0);
      expect(region.signConsistency).toBeLessThanOrEqual(1);
    }
    expect(result.learningCurve?.map((p) => p.fraction)).toEqual([0.2, 0.4, 0.6, 0.8, 1]);
    expect(result.learningCurve?.[4].r).toBe(result.r);
    expect(result.permutation?.resamples).toBe(19);
    // p = count/(m + 1) takes values k/20 (Phipson & Smyth 2010).
    expect(((result.permutation?.pR ?? 0) * 20) % 1).toBeCloseTo(0, 10);
  });

  it("refuses bad options with messages naming them", () => {
    const base = { seed: 1, inference: "none" as const, learningCurve: false };
    const expectError = (fn: () => unknown, message: string) => {
      expect(fn).toThrow(StatsError);
      expect(fn).toThrow(message);
    };
    expectError(
      () => crossValidatedPrediction(data, { ...base, folds: 1 }),
      "folds must be at least 2 and at most the number of participants",
    );
    expectError(
      () => crossValidatedPrediction(data, { ...base, folds: 37 }),
      "folds must be at least 2 and at most the number of participants",
    );
    expectError(
      () => crossValidatedPrediction({ ...data, y: new Float64Array(36).fill(2) }, base),
      "the trait is constant",
    );
    expectError(
      () => crossValidatedPrediction(data, { ...base, lambda: 0 }),
      "lambda must be a positive number",
    );
    expectError(
      () => crossValidatedPrediction(data, { ...base, lambdaGrid: [] }),
      "lambdaGrid must hold at least one value",
    );
    const group = [...Array(33).fill("A"), "B", "B", "B"];
    expectError(
      () => crossValidatedPrediction({ ...data, group }, { ...base, folds: 4 }),
      "folds stratified by group require at least 4 participants per group (group 'B' has 3)",
    );
    const X = data.X.map((x) => Float64Array.from(x));
    X[2][7] = Number.NaN;
    expectError(
      () => crossValidatedPrediction({ ...data, X }, base),
      "region 'R3' has a missing or non-finite value for participant 'P008'",
    );
    expectError(
      () =>
        crossValidatedPrediction(
          {
            ...data,
            covariates: [
              data.covariates[0],
              Float64Array.from(data.covariates[0], (v) => 2 * v + 1),
            ],
            covariateNames: ["age", "age in half-years"],
          },
          base,
        ),
      "covariate 'age in half-years' is constant or a linear combination of the other covariates in a training fold",
    );
    const flat = data.X.map((x) => Float64Array.from(x));
    flat[1].fill(4);
    expectError(
      () => crossValidatedPrediction({ ...data, X: flat }, base),
      "region 'R2' is constant in a training fold",
    );
    expectError(
      () =>
        crossValidatedPrediction(
          {
            ...data,
            participants: data.participants.slice(0, 6),
            y: data.y.subarray(0, 6),
            X: data.X.map((x) => x.subarray(0, 6)),
            covariates: data.covariates.map((c) => c.subarray(0, 6)),
          },
          { ...base, folds: 2 },
        ),
      "prediction requires at least",
    );
  });
});
