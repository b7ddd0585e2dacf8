import { describe, expect, it } from "vitest";
import { crossValidatedPrediction } from "../../../../server/stats/prediction/cross-validate";
import {
  inventData,
  ols,
  predictDirect,
  relClose,
  ridgeDirect,
  rows,
  solve,
} from "./reference-ridge";

const loo = {
  folds: "leave-one-out" as const,
  seed: 1,
  inference: "none" as const,
  learningCurve: false,
};

/** Pearson r, prediction R² and MAE written from their definitions (issue 16's formulas). */
function scores(o: number[], p: number[]) {
  const n = o.length;
  const mo = o.reduce((s, v) => s + v, 0) / n;
  const mp = p.reduce((s, v) => s + v, 0) / n;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  let sse = 0;
  let sae = 0;
  for (let i = 0; i < n; i++) {
    sxy += (o[i] - mo) * (p[i] - mp);
    sxx += (o[i] - mo) ** 2;
    syy += (p[i] - mp) ** 2;
    sse += (o[i] - p[i]) ** 2;
    sae += Math.abs(o[i] - p[i]);
  }
  return { r: sxy / Math.sqrt(sxx * syy), r2: 1 - sse / sxx, mae: sae / n };
}

describe("leave-one-out prediction with a fixed λ, no confounds", () => {
  for (const [n, p] of [
    [25, 6],
    [12, 30],
  ]) {
    it(`matches a direct normal-equations fit per held-out row (n=${n}, p=${p})`, () => {
      const data = inventData(11 + p, n, p);
      const lambda = 2.5;
      const result = crossValidatedPrediction(data, { ...loo, lambda });
      const observed: number[] = [];
      const predicted: number[] = [];
      for (let i = 0; i < n; i++) {
        const train = [...Array(n).keys()].filter((k) => k !== i);
        const fit = ridgeDirect(
          rows(data.X, train),
          train.map((k) => data.y[k]),
          lambda,
        );
        const expected = predictDirect(fit, rows(data.X, [i])[0]);
        // Expected value: independent normal-equations ridge (Hastie et al. 2009, eq. 3.44).
        expect(relClose(result.participants[i].predicted, expected, 1e-10)).toBe(true);
        expect(result.participants[i].observed).toBe(data.y[i]);
        observed.push(data.y[i]);
        predicted.push(expected);
      }
      const s = scores(observed, predicted);
      expect(relClose(result.r ?? Number.NaN, s.r, 1e-10)).toBe(true);
      expect(relClose(result.r2 ?? Number.NaN, s.r2, 1e-10)).toBe(true);
      expect(relClose(result.mae, s.mae, 1e-10)).toBe(true);
      expect(result.lambdas.every((l) => l.lambda === lambda)).toBe(true);
    });

    it(`satisfies the closed-form identity e_i/(1 − H_ii) without scaling (n=${n}, p=${p})`, () => {
      // The identity y_i − ŷ_(−i) = e_i/(1 − H_ii) holds for a linear smoother fitted with
      // the same penalty on the same design in every fold (Hastie et al. 2009, §7.10, eq.
      // 7.52). Scaling each region by its training SD changes the design from fold to fold,
      // so the identity is checked with `standardize: false` (columns only centred, which
      // the unpenalized intercept absorbs exactly): H = 11ᵀ/n + X_c(X_cᵀX_c + λI)⁻¹X_cᵀ.
      const data = inventData(23 + p, n, p);
      const lambda = 0.75;
      const result = crossValidatedPrediction(data, { ...loo, lambda, standardize: false });
      const x = rows(data.X, [...Array(n).keys()]);
      const mean = data.X.map((col) => col.reduce((s, v) => s + v, 0) / n);
      const xc = x.map((row) => row.map((v, j) => v - mean[j]));
      const a = Array.from({ length: p }, (_, i) =>
        Array.from(
          { length: p },
          (_, j) => xc.reduce((s, row) => s + row[i] * row[j], 0) + (i === j ? lambda : 0),
        ),
      );
      const full = ridgeDirect(x, [...data.y], lambda, false);
      for (let i = 0; i < n; i++) {
        const ainvx = solve(a, xc[i]);
        const hii = 1 / n + xc[i].reduce((s, v, j) => s + v * ainvx[j], 0);
        const e = data.y[i] - predictDirect(full, x[i]);
        const expected = data.y[i] - e / (1 - hii);
        expect(relClose(result.participants[i].predicted, expected, 1e-10)).toBe(true);
      }
    });
  }
});

describe("leave-one-out prediction with a fixed λ and covariates as confounds", () => {
  it("matches a direct implementation: OLS confound residuals on the training rows, then ridge", () => {
    const n = 24;
    const p = 5;
    const data = inventData(5, n, p, { covariates: 2 });
    const lambda = 1.3;
    const result = crossValidatedPrediction(
      { ...data, covariateNames: ["age", "motion"] },
      { ...loo, lambda },
    );
    const observed: number[] = [];
    const predicted: number[] = [];
    for (let i = 0; i < n; i++) {
      const train = [...Array(n).keys()].filter((k) => k !== i);
      const design = (k: number) => [1, ...data.covariates.map((c) => c[k])];
      const d = train.map(design);
      const resid = (values: Float64Array) => {
        const beta = ols(
          d,
          train.map((k) => values[k]),
        );
        const at = (k: number) => values[k] - design(k).reduce((s, v, c) => s + v * beta[c], 0);
        return { train: train.map(at), held: at(i) };
      };
      const regions = data.X.map(resid);
      const trait = resid(data.y);
      const x = train.map((_, r) => regions.map((reg) => reg.train[r]));
      const fit = ridgeDirect(x, trait.train, lambda);
      const expected = predictDirect(
        fit,
        regions.map((reg) => reg.held),
      );
      // Expected values: Snoek et al. 2019 confound regression + normal-equations ridge.
      expect(relClose(result.participants[i].predicted, expected, 1e-10)).toBe(true);
      expect(relClose(result.participants[i].observed, trait.held, 1e-10)).toBe(true);
      observed.push(trait.held);
      predicted.push(expected);
    }
    const s = scores(observed, predicted);
    expect(relClose(result.r ?? Number.NaN, s.r, 1e-10)).toBe(true);
    expect(relClose(result.r2 ?? Number.NaN, s.r2, 1e-10)).toBe(true);
    expect(relClose(result.mae, s.mae, 1e-10)).toBe(true);
  });
});
