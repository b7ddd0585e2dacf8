import { describe, expect, it } from "vitest";
import {
  crossValidatedPrediction,
  mergePrediction,
  planPrediction,
  predictionSplit,
  predictionSplitCount,
} from "../../../../server/stats/prediction/cross-validate";
import { fitFoldBlock } from "../../../../server/stats/prediction/block-fit";
import { fitFold, prepareFold } from "../../../../server/stats/prediction/fold-pipeline";
import { crossValidationSplits } from "../../../../server/stats/prediction/folds";
import { CURVE_FRACTIONS } from "../../../../server/stats/prediction/plan";
import { ScoreSums } from "../../../../server/stats/prediction/scores";
import { fitSingle } from "../../../../server/stats/prediction/single-fit";
import { createRng } from "../../../../server/stats/rng";
import { inventData } from "./reference-ridge";

const options = {
  folds: 4,
  repeats: 2,
  seed: 13,
  inference: "permutation" as const,
  resamples: 40,
  learningCurve: true,
};

describe("prediction split into plan, splits and merge", () => {
  it("gives the single loop's block whatever order the partials are computed and merged in", () => {
    // Merging is a sum in split order, so any arrival order must give the same block
    // (common practice, no source).
    const data = inventData(31, 48, 7, { covariates: 1, signal: 0.8 });
    const whole = crossValidatedPrediction(data, options);
    const plan = structuredClone(planPrediction(data, options));
    const count = predictionSplitCount(plan);
    expect(count).toBe(8);
    const order = [5, 2, 7, 0, 3, 6, 1, 4];
    // Partials cross thread and process boundaries as structured clones.
    const partials = order.map((s) => structuredClone(predictionSplit(plan, data, s)));
    expect(mergePrediction(plan, data, partials)).toEqual(whole);
    expect(mergePrediction(plan, data, [...partials].reverse())).toEqual(whole);
  });

  it("refuses a missing or repeated split", () => {
    const data = inventData(32, 24, 3);
    const plan = planPrediction(data, { ...options, learningCurve: false, resamples: 5 });
    const partials = [0, 1, 2, 3, 4, 5, 6, 7].map((s) => predictionSplit(plan, data, s));
    expect(() => mergePrediction(plan, data, partials.slice(1))).toThrow(/split 0 is missing/);
    expect(() => mergePrediction(plan, data, [...partials, partials[3]])).toThrow(
      /split 3 was given twice/,
    );
    expect(() => predictionSplit(plan, data, 8)).toThrow(/split 8 is not in the plan/);
    const shorter = inventData(32, 23, 3);
    expect(() => predictionSplit(plan, shorter, 0)).toThrow(
      /given 23 participants × 3 regions for a plan of 24 × 3/,
    );
  });

  it("fits a block of traits exactly as one trait at a time", () => {
    // Each column of a matrix product is computed alone, so a trait's λ and predictions
    // cannot depend on the block (common practice, no source).
    const data = inventData(33, 40, 9, { covariates: 2 });
    const split = crossValidationSplits({ n: 40, folds: 5, repeats: 1, rng: createRng(2) })[1];
    const fold = prepareFold(
      {
        n: 40,
        x: data.X,
        regions: data.regions,
        covariates: data.covariates,
        covariateNames: ["a", "b"],
      },
      split.train,
      split.held,
      { standardize: true, rng: createRng(3) },
    );
    const rng = createRng(4);
    const traits = new Float64Array(5 * 40);
    for (let b = 0; b < 5; b++) {
      const order = Int32Array.from({ length: 40 }, (_, i) => i);
      if (b > 0) rng.shuffle(order);
      for (let i = 0; i < 40; i++) traits[b * 40 + i] = data.y[order[i]];
    }
    const block = fitFoldBlock(fold, traits, 40, 5);
    for (let b = 0; b < 5; b++) {
      const alone = fitFoldBlock(fold, traits.slice(b * 40, b * 40 + 40), 40, 1);
      expect(block.lambdas[b]).toBe(alone.lambdas[0]);
      const reference = fitFold(fold, traits.slice(b * 40, b * 40 + 40));
      expect(block.lambdas[b]).toBe(reference.lambda);
      for (let i = 0; i < split.held.length; i++) {
        expect(block.predicted[i * 5 + b]).toBe(alone.predicted[i]);
        expect(block.predicted[i * 5 + b]).toBeCloseTo(reference.predicted[i], 11);
        expect(block.observed[i * 5 + b]).toBe(reference.observed[i]);
      }
    }
  });

  it("keeps the single loop's draws when a learning-curve subsample has a constant region", () => {
    // The loop drew each split's inner partition after preparing it, and a curve
    // subsample's inner partition only when its own stage could be prepared; the
    // plan must draw the same streams in the same order. Reference: that loop,
    // written here from prepareFold with generators (common practice, no source).
    const data = inventData(34, 40, 4, { signal: 1 });
    // A region non-zero for 10 participants only: some 20 % subsamples miss them all.
    data.X[2] = Float64Array.from({ length: 40 }, (_, i) => (i % 4 === 0 ? 1 + i : 0));
    const opts = {
      folds: 4,
      repeats: 2,
      seed: 21,
      inference: "none" as const,
      learningCurve: true,
    };
    const block = crossValidatedPrediction(data, opts);
    const pipelineData = {
      n: 40,
      x: data.X,
      regions: data.regions,
      covariates: [],
      covariateNames: [],
    };
    const splitRng = createRng(21);
    const curveRng = createRng(22);
    const splits = crossValidationSplits({ n: 40, folds: 4, repeats: 2, rng: splitRng });
    const sums = CURVE_FRACTIONS.map(() => [new ScoreSums(), new ScoreSums()]);
    const failed = CURVE_FRACTIONS.map(() => false);
    splits.forEach((split, s) => {
      const fold = prepareFold(pipelineData, split.train, split.held, {
        standardize: true,
        rng: splitRng,
      });
      expect(block.lambdas[s].lambda).toBe(fitFold(fold, data.y).lambda);
      CURVE_FRACTIONS.forEach((fraction, f) => {
        const rows = Math.round(fraction * split.train.length);
        const order = Int32Array.from(split.train);
        curveRng.shuffle(order);
        if (rows < 4) {
          failed[f] = true;
          return;
        }
        try {
          const sub = prepareFold(pipelineData, order.slice(0, rows).sort(), split.held, {
            standardize: true,
            rng: curveRng,
          });
          const fit = fitFold(sub, data.y);
          for (let i = 0; i < fit.observed.length; i++)
            sums[f][split.repeat].add(fit.observed[i], fit.predicted[i]);
        } catch {
          failed[f] = true;
        }
      });
    });
    expect(failed.some((x) => x)).toBe(true);
    const curve = block.learningCurve ?? [];
    CURVE_FRACTIONS.forEach((_, f) => {
      if (failed[f]) expect(curve[f].r).toBeNull();
      else {
        const expected = (sums[f][0].scores().r ?? 0) / 2 + (sums[f][1].scores().r ?? 0) / 2;
        expect(curve[f].r).toBeCloseTo(expected, 11);
      }
    });
    expect(failed.every((x) => x)).toBe(false);
  });

  it("fits one trait through reflectors as the prepared fold does (primal and dual, confounds, fixed λ)", () => {
    // Same ridge estimate, (XᵀX + λI)⁻¹Xᵀy = Xᵀ(XXᵀ + λI)⁻¹y (Hastie, Tibshirani &
    // Friedman 2009, §3.4.1 and §18.3.5), computed by two routes.
    for (const [seed, n, p, covariates, lambda] of [
      [41, 60, 8, 0, null],
      [42, 30, 45, 2, null],
      [43, 40, 12, 1, 2.5],
    ] as const) {
      const data = inventData(seed, n, p, { covariates });
      const pipelineData = {
        n,
        x: data.X,
        regions: data.regions,
        covariates: data.covariates,
        covariateNames: data.covariates.map((_, c) => `c${c}`),
      };
      const split = crossValidationSplits({ n, folds: 4, repeats: 1, rng: createRng(seed) })[1];
      const rng = createRng(seed + 1);
      const fold = prepareFold(pipelineData, split.train, split.held, {
        standardize: true,
        rng,
        ...(lambda === null ? {} : { lambda }),
      });
      const reference = fitFold(fold, data.y);
      const single = fitSingle(pipelineData, split.train, split.held, data.y, {
        standardize: true,
        lambda,
        lambdaGrid: null,
        innerSplits:
          lambda === null
            ? fold.inner.map((stage, f) => ({
                repeat: 0,
                fold: f,
                train: stage.train.map((u) => split.train.indexOf(u)),
                held: stage.held.map((u) => split.train.indexOf(u)),
              }))
            : null,
      });
      expect(single.lambda).toBe(reference.lambda);
      for (let i = 0; i < split.held.length; i++) {
        expect(single.observed[i]).toBeCloseTo(reference.observed[i], 12);
        expect(Math.abs(single.predicted[i] - reference.predicted[i])).toBeLessThan(
          1e-10 * Math.max(1, Math.abs(reference.predicted[i])),
        );
      }
    }
  });
});
