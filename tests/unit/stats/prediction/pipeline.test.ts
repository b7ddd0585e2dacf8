import { describe, expect, it } from "vitest";
import { residualize } from "../../../../server/stats/prediction/confounds";
import {
  chooseLambda,
  defaultLambdaGrid,
  fitFold,
  innerMeanSquaredErrors,
  type PredictionData,
  prepareFold,
} from "../../../../server/stats/prediction/fold-pipeline";
import { crossValidationSplits } from "../../../../server/stats/prediction/folds";
import { createRng } from "../../../../server/stats/rng";
import { inventData, ols, predictDirect, relClose, ridgeDirect, rows } from "./reference-ridge";

function asData(d: ReturnType<typeof inventData>): PredictionData {
  return {
    n: d.y.length,
    x: d.X,
    regions: d.regions,
    covariates: d.covariates,
    covariateNames: d.covariates.map((_, c) => `c${c + 1}`),
  };
}

describe("no training step sees held-out rows", () => {
  it("leaves the fold's confound fit, scaling, λ choice and ridge weights unchanged when a held-out value is extreme", () => {
    const d = inventData(77, 30, 6, { covariates: 2 });
    const split = crossValidationSplits({ n: 30, folds: 5, repeats: 1, rng: createRng(4) })[2];
    const planted = split.held[0];
    const fitWith = (data: ReturnType<typeof inventData>) => {
      const fold = prepareFold(asData(data), split.train, split.held, {
        standardize: true,
        rng: createRng(8),
      });
      const fit = fitFold(fold, data.y, { weights: true });
      const confound = fold.outer.confounds;
      if (!confound) throw new Error("expected a confound fit");
      const beta = residualize(
        confound,
        data.y,
        new Float64Array(split.train.length),
        new Float64Array(split.held.length),
      );
      return { fit, beta, mse: innerMeanSquaredErrors(fold, data.y) };
    };
    const before = fitWith(d);
    const extreme = {
      ...d,
      X: d.X.map((x) => {
        const c = Float64Array.from(x);
        c[planted] = 1e6;
        return c;
      }),
      y: Float64Array.from(d.y),
      covariates: d.covariates.map((x) => {
        const c = Float64Array.from(x);
        c[planted] = -1e5;
        return c;
      }),
    };
    extreme.y[planted] = 1e7;
    const after = fitWith(extreme);
    // Expected: identical training quantities (the definition of leakage-free CV;
    // Poldrack, Huckins & Varoquaux 2020).
    expect([...after.fit.weights!]).toEqual([...before.fit.weights!]);
    expect([...after.beta]).toEqual([...before.beta]);
    expect(after.fit.lambda).toBe(before.fit.lambda);
    expect([...after.mse]).toEqual([...before.mse]);
    // Other held-out rows' predictions are unchanged; the planted row's is not.
    for (let i = 1; i < split.held.length; i++)
      expect(after.fit.predicted[i]).toBe(before.fit.predicted[i]);
    expect(after.fit.predicted[0]).not.toBe(before.fit.predicted[0]);
  });
});

describe("inner λ choice", () => {
  for (const [n, p, covariates] of [
    [40, 6, 0],
    [30, 45, 1],
  ]) {
    it(`picks the grid value with the smallest brute-force inner MSE (n=${n}, p=${p}, covariates=${covariates})`, () => {
      const d = inventData(90 + p, n, p, { covariates, signal: 0.3, noise: 2 });
      const split = crossValidationSplits({ n, folds: 5, repeats: 1, rng: createRng(2) })[0];
      const grid = defaultLambdaGrid(split.train.length);
      const fold = prepareFold(asData(d), split.train, split.held, {
        standardize: true,
        rng: createRng(3),
      });
      const engineMse = innerMeanSquaredErrors(fold, d.y);
      // Brute force: per inner split, confounds by OLS and ridge by normal equations,
      // refitted for every λ (Hastie et al. 2009, §7.10 and eq. 3.44).
      const brute = grid.map((lambda) => {
        let sse = 0;
        let count = 0;
        for (const stage of fold.inner) {
          const train = [...stage.train];
          const held = [...stage.held];
          const design = (k: number) => [1, ...d.covariates.map((c) => c[k])];
          const resid = (values: Float64Array) => {
            if (covariates === 0)
              return { train: train.map((k) => values[k]), held: held.map((k) => values[k]) };
            const beta = ols(
              train.map(design),
              train.map((k) => values[k]),
            );
            const at = (k: number) => values[k] - design(k).reduce((s, v, c) => s + v * beta[c], 0);
            return { train: train.map(at), held: held.map(at) };
          };
          const regions = d.X.map(resid);
          const trait = resid(d.y);
          const fit = ridgeDirect(
            train.map((_, r) => regions.map((g) => g.train[r])),
            trait.train,
            lambda,
          );
          held.forEach((_, h) => {
            const e =
              trait.held[h] -
              predictDirect(
                fit,
                regions.map((g) => g.held[h]),
              );
            sse += e * e;
            count++;
          });
        }
        return sse / count;
      });
      grid.forEach((_, l) => {
        expect(relClose(engineMse[l], brute[l], 1e-9)).toBe(true);
      });
      let best = 0;
      for (let l = 1; l < grid.length; l++) if (brute[l] < brute[best]) best = l;
      expect(chooseLambda(fold, d.y)).toBe(grid[best]);
      // A non-trivial choice: the minimum is not simply the end of the grid
      // (so a rule that always takes the largest λ would fail here).
      if (p < n) expect(best).toBeLessThan(grid.length - 1);
      // The fold's prediction at that λ matches the direct fit on all training rows.
      const full = ridgeDirect(
        rows(d.X, [...split.train]),
        [...split.train].map((k) => d.y[k]),
        grid[best],
      );
      if (covariates === 0) {
        const fit = fitFold(fold, d.y);
        split.held.forEach((k, h) => {
          expect(relClose(fit.predicted[h], predictDirect(full, rows(d.X, [k])[0]), 1e-9)).toBe(
            true,
          );
        });
      }
    });
  }
});
