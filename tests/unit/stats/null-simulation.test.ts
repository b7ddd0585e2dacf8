/**
 * Seeded null simulations: under the null hypothesis a 5% permutation test
 * rejects in 5% of datasets, and max-T keeps the family-wise error rate over
 * regions at 5%. Each rate is checked against the two-sided 99% band of the
 * binomial distribution (exact binomial quantiles, computed here). With
 * m = 199 random rearrangements, p = (b + 1)/200 ≤ .05 exactly when the
 * observed statistic ranks among the top 10 of 200, which has probability
 * 10/200 = .05 when the rearrangements are exchangeable (Phipson & Smyth 2010).
 */
import { describe, expect, it } from "vitest";
import { genericPermutationTest } from "../../../server/stats/generic-permutation";
import { linearPermutationTest } from "../../../server/stats/permutation";
import { createRng, normalDraw, type Rng } from "../../../server/stats/rng";

const DATASETS = 400;
const REGIONS = 8;
const RESAMPLES = 199;

/** Two-sided 99% band of Binomial(trials, prob): [0.5% quantile, 99.5% quantile] (exact binomial sums). */
function binomialBand(trials: number, prob: number): [number, number] {
  let cdf = 0;
  let pmf = (1 - prob) ** trials;
  let lo = -1;
  for (let k = 0; k <= trials; k++) {
    if (k > 0) pmf *= ((trials - k + 1) / k) * (prob / (1 - prob));
    cdf += pmf;
    if (lo < 0 && cdf >= 0.005) lo = k;
    if (cdf >= 0.995) return [lo, k];
  }
  return [lo, trials];
}

interface Tally {
  tests: number;
  rejections: number;
  familyRejections: number;
  uncorrectedFamilyRejections: number;
}

function simulate(
  make: (rng: Rng) => { design: Float64Array; p: number; tested: number; y: Float64Array[] },
  scheme: "sign-flip" | "freedman-lane",
  n: number,
): Tally {
  const rng = createRng(20240601);
  const tally: Tally = {
    tests: 0,
    rejections: 0,
    familyRejections: 0,
    uncorrectedFamilyRejections: 0,
  };
  for (let d = 0; d < DATASETS; d++) {
    const { design, p, tested, y } = make(rng);
    const result = linearPermutationTest({
      design,
      n,
      p,
      tested,
      y,
      scheme,
      resamples: RESAMPLES,
      rng,
      maxT: true,
    });
    expect(result.exact).toBe(false);
    let any = false;
    for (let r = 0; r < REGIONS; r++) {
      tally.tests++;
      if (result.p[r] <= 0.05) {
        tally.rejections++;
        any = true;
      }
    }
    if (any) tally.uncorrectedFamilyRejections++;
    if (Array.from(result.pMaxT ?? []).some((v) => v <= 0.05)) tally.familyRejections++;
  }
  return tally;
}

function expectNominal(tally: Tally): void {
  const [lo, hi] = binomialBand(tally.tests, 0.05); // (exact binomial quantiles)
  expect(tally.rejections).toBeGreaterThanOrEqual(lo);
  expect(tally.rejections).toBeLessThanOrEqual(hi);
  const [flo, fhi] = binomialBand(DATASETS, 0.05); // (exact binomial quantiles)
  expect(tally.familyRejections).toBeGreaterThanOrEqual(flo);
  expect(tally.familyRejections).toBeLessThanOrEqual(fhi);
  // Without max-T, 8 independent regions reject somewhere in about
  // 1 − 0.95^8 ≈ 34% of datasets (exact algebra), far outside the 5% band.
  expect(tally.uncorrectedFamilyRejections).toBeGreaterThan(fhi);
}

describe("null simulation of permutation inference (400 seeded datasets, 8 regions, 199 rearrangements)", () => {
  it("Freedman–Lane with a strong nuisance covariate correlated with the predictor", () => {
    const n = 20;
    const tally = simulate(
      (rng) => {
        const rows: number[] = [];
        const z: number[] = [];
        for (let i = 0; i < n; i++) {
          const zi = normalDraw(rng);
          z.push(zi);
          rows.push(1, zi, 0.7 * zi + normalDraw(rng));
        }
        const y = Array.from({ length: REGIONS }, () =>
          Float64Array.from(z, (zi) => 2 * zi + normalDraw(rng)),
        );
        return { design: Float64Array.from(rows), p: 3, tested: 2, y };
      },
      "freedman-lane",
      n,
    );
    expectNominal(tally);
  });

  it("sign flipping for a one-sample test with heavy-tailed symmetric errors", () => {
    const n = 12;
    const tally = simulate(
      (rng) => {
        // Laplace errors: symmetric, heavier tails than the normal.
        const laplace = () => {
          const u = rng.next() - 0.5;
          return -Math.sign(u) * Math.log(1 - 2 * Math.abs(u) || Number.MIN_VALUE);
        };
        const y = Array.from({ length: REGIONS }, () => Float64Array.from({ length: n }, laplace));
        return { design: new Float64Array(n).fill(1), p: 1, tested: 0, y };
      },
      "sign-flip",
      n,
    );
    expectNominal(tally);
  });

  it("label permutation for two groups of 7 and 13 without covariates", () => {
    const n = 20;
    const group = Array.from({ length: n }, (_, i) => (i % 3 === 0 ? 1 : 0));
    expect(group.filter((g) => g === 1).length).toBe(7);
    const tally = simulate(
      (rng) => {
        const y = Array.from({ length: REGIONS }, () =>
          Float64Array.from({ length: n }, () => normalDraw(rng) ** 3),
        );
        return { design: Float64Array.from(group.flatMap((g) => [1, g])), p: 2, tested: 1, y };
      },
      "freedman-lane",
      n,
    );
    expectNominal(tally);
  });

  it("generic label permutation of a difference in medians, groups of 6 and 10", () => {
    const rng = createRng(77);
    const median = (a: number[]) => {
      const s = [...a].sort((u, v) => u - v);
      const h = s.length >> 1;
      return s.length % 2 ? s[h] : (s[h - 1] + s[h]) / 2;
    };
    let rejections = 0;
    for (let d = 0; d < DATASETS; d++) {
      const y = Array.from({ length: 16 }, () => Math.exp(normalDraw(rng)));
      const result = genericPermutationTest({
        n: 16,
        scheme: "labels",
        groupSizes: [6, 10],
        statistic: (order) =>
          median(Array.from(order.subarray(0, 6), (i) => y[i])) -
          median(Array.from(order.subarray(6), (i) => y[i])),
        resamples: RESAMPLES,
        rng,
      });
      if (result.p <= 0.05) rejections++;
    }
    const [lo, hi] = binomialBand(DATASETS, 0.05); // (exact binomial quantiles)
    expect(rejections).toBeGreaterThanOrEqual(lo);
    expect(rejections).toBeLessThanOrEqual(hi);
  });
});
