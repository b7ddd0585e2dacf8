import { describe, expect, it } from "vitest";
import { bootstrapInterval } from "../../../server/stats/bootstrap";
import { normalCdf, normalQuantile } from "../../../server/stats/distributions";
import { StatsError } from "../../../server/stats/errors";
import { createRng } from "../../../server/stats/rng";
import { mean } from "./resampling-reference";

const meanOf = (x: readonly number[]) => (indices: Int32Array) => {
  let s = 0;
  for (const i of indices) s += x[i];
  return s / indices.length;
};

/** Type-7 quantile of sorted values (Hyndman & Fan 1996), written out independently. */
function quantile7(sorted: number[], q: number): number {
  if (q <= 0) return sorted[0];
  if (q >= 1) return sorted[sorted.length - 1];
  const h = (sorted.length - 1) * q;
  const lo = Math.floor(h);
  return sorted[lo] + (h - lo) * ((sorted[Math.min(lo + 1, sorted.length - 1)] ?? 0) - sorted[lo]);
}

describe("bootstrapInterval against the ideal bootstrap of a mean", () => {
  // The ideal bootstrap distribution of the mean of x: all 4^4 = 256 equally
  // likely index tuples (exact enumeration).
  const x = [1, 2, 4, 9];
  const ideal = new Map<number, number>();
  for (let a = 0; a < 256; a++) {
    let s = 0;
    for (let k = a, i = 0; i < 4; i++, k = Math.floor(k / 4)) s += x[k % 4];
    ideal.set(s / 4, (ideal.get(s / 4) ?? 0) + 1 / 256);
  }
  const atoms = [...ideal.keys()].sort((a, b) => a - b);
  const idealCdf = (v: number) =>
    atoms.filter((a) => a <= v).reduce((s, a) => s + (ideal.get(a) ?? 0), 0);

  const result = bootstrapInterval({
    n: 4,
    statistic: meanOf(x),
    resamples: 20000,
    rng: createRng(2024),
    method: "percentile",
  });

  it("draws replicates from the ideal distribution (Kolmogorov distance within the DKW bound)", () => {
    expect(result.distribution.length).toBe(20000);
    expect(result.discarded).toBe(0);
    const sorted = Array.from(result.distribution).sort((a, b) => a - b);
    let worst = 0;
    for (const a of atoms) {
      const empirical = sorted.filter((v) => v <= a).length / sorted.length;
      worst = Math.max(worst, Math.abs(empirical - idealCdf(a)));
    }
    // P(distance > 0.015) ≤ 2·exp(−2·20000·0.015²) ≈ 2.5e-4 (Dvoretzky–Kiefer–Wolfowitz inequality, Massart 1990)
    expect(worst).toBeLessThan(0.015);
  });

  it("puts the 95% percentile limits on the ideal bootstrap quantiles (exact enumeration)", () => {
    // The 2.5% quantile of the ideal distribution is the atom 1.5 and the 97.5%
    // quantile is 7.25, each with more than 0.005 of probability on both sides
    // of the cut (exact enumeration; 5 Monte Carlo standard deviations at B = 20,000).
    expect(idealCdf(1.25)).toBeLessThan(0.025 - 0.005);
    expect(idealCdf(1.5)).toBeGreaterThan(0.025 + 0.005);
    expect(idealCdf(7)).toBeLessThan(0.975 - 0.005);
    expect(idealCdf(7.25)).toBeGreaterThan(0.975 + 0.005);
    expect(result.ciLow).toBe(1.5); // (exact enumeration)
    expect(result.ciHigh).toBe(7.25); // (exact enumeration)
    expect(result.estimate).toBe(4); // mean of x (exact algebra)
  });

  it("estimates the ideal bootstrap standard error of the mean, √Σ(x − x̄)² / n", () => {
    const m = mean(x);
    const idealSe = Math.sqrt(x.reduce((s, v) => s + (v - m) ** 2, 0)) / 4; // (Efron & Tibshirani 1993, ch. 5–6: for the mean the ideal bootstrap se is the plug-in σ̂/√n; exact algebra)
    expect(Math.abs(result.se / idealSe - 1)).toBeLessThan(0.03); // Monte Carlo error ≈ 0.5% at B = 20,000
  });
});

describe("bootstrapInterval BCa algebra", () => {
  const x = [0.8, 1.1, 1.3, 1.9, 2.2, 2.4, 3.1, 3.9, 5.6, 9.8, 14.5, 0.5];
  const n = x.length;
  const result = bootstrapInterval({
    n,
    statistic: meanOf(x),
    resamples: 4000,
    rng: createRng(77),
    method: "bca",
    level: 0.9,
  });

  it("uses the jackknife acceleration of the mean, Σ(x − x̄)³ / (6·[Σ(x − x̄)²]^{3/2})", () => {
    // For the mean, θ̄ − θ₍ᵢ₎ = (xᵢ − x̄)/(n − 1), so â reduces to this closed form
    // (Efron & Tibshirani 1993, eq. 14.15; exact algebra).
    const m = mean(x);
    const s2 = x.reduce((s, v) => s + (v - m) ** 2, 0);
    const s3 = x.reduce((s, v) => s + (v - m) ** 3, 0);
    expect(result.acceleration).toBeCloseTo(s3 / (6 * s2 ** 1.5), 12);
    expect(result.acceleration).toBeGreaterThan(0); // right-skewed data
  });

  it("takes ẑ0 from the share of replicates below the estimate and reads the adjusted quantiles", () => {
    const sorted = Array.from(result.distribution).sort((a, b) => a - b);
    const below = sorted.filter((v) => v < result.estimate).length;
    const ties = sorted.filter((v) => v === result.estimate).length;
    const z0 = normalQuantile((below + ties / 2) / sorted.length); // (Efron & Tibshirani 1993, eq. 14.14)
    expect(result.biasCorrection).toBeCloseTo(z0, 12);
    const a = result.acceleration ?? Number.NaN;
    const level = (z: number) => normalCdf(z0 + (z0 + z) / (1 - a * (z0 + z))); // (Efron & Tibshirani 1993, eq. 14.10)
    expect(result.ciLow).toBeCloseTo(quantile7(sorted, level(normalQuantile(0.05))), 12);
    expect(result.ciHigh).toBeCloseTo(quantile7(sorted, level(normalQuantile(0.95))), 12);
    // Right skew moves the BCa interval to the right of the percentile interval
    // (Efron & Tibshirani 1993, §14.3; common practice, no source for the size).
    const percentile = bootstrapInterval({
      n,
      statistic: meanOf(x),
      resamples: 4000,
      rng: createRng(77),
      method: "percentile",
      level: 0.9,
    });
    expect(Array.from(percentile.distribution)).toEqual(Array.from(result.distribution));
    expect(percentile.ciLow).toBeCloseTo(quantile7(sorted, 0.05), 12); // (Hyndman & Fan 1996, definition 7)
    expect(percentile.ciHigh).toBeCloseTo(quantile7(sorted, 0.95), 12);
    expect(result.ciHigh).toBeGreaterThan(percentile.ciHigh);
    expect(result.ciLow).toBeGreaterThan(percentile.ciLow);
  });
});

describe("bootstrapInterval on the law-school correlation", () => {
  // LSAT and GPA of 15 law schools (Efron & Tibshirani 1993, Table 3.1; values from memory).
  const lsat = [576, 635, 558, 578, 666, 580, 555, 661, 651, 605, 653, 575, 545, 572, 594];
  const gpa = [
    3.39, 3.3, 2.81, 3.03, 3.44, 3.07, 3.0, 3.43, 3.36, 3.13, 3.12, 2.74, 2.76, 2.88, 2.96,
  ];
  const correlation = (indices: Int32Array) => {
    const k = indices.length;
    let mx = 0;
    let my = 0;
    for (const i of indices) {
      mx += lsat[i] / k;
      my += gpa[i] / k;
    }
    let sxy = 0;
    let sxx = 0;
    let syy = 0;
    for (const i of indices) {
      sxy += (lsat[i] - mx) * (gpa[i] - my);
      sxx += (lsat[i] - mx) ** 2;
      syy += (gpa[i] - my) ** 2;
    }
    return sxy / Math.sqrt(sxx * syy);
  };

  it("gives r = .776 and a bootstrap standard error near .13", () => {
    const result = bootstrapInterval({
      n: 15,
      statistic: correlation,
      resamples: 3200,
      rng: createRng(3200),
      method: "bca",
    });
    expect(result.estimate).toBeCloseTo(0.776, 3); // (Efron & Tibshirani 1993, ch. 3; value from memory)
    // se ≈ .132 with B = 3200 (Efron & Tibshirani 1993, Table 6.1; value from memory); Monte Carlo and memory tolerance ±.02
    expect(Math.abs(result.se - 0.132)).toBeLessThan(0.02);
    expect(result.ciLow).toBeLessThan(result.estimate);
    expect(result.ciHigh).toBeGreaterThan(result.estimate);
    expect(result.ciHigh).toBeLessThan(1);
  });
});

describe("bootstrapInterval non-finite replicates and preconditions", () => {
  const x = Array.from({ length: 20 }, (_, i) => (i * 7) % 11);

  it("leaves out non-finite replicates and counts them", () => {
    // The statistic is undefined whenever the first two draws coincide (probability 1/20).
    const statistic = (indices: Int32Array) =>
      indices[0] === indices[1] ? Number.POSITIVE_INFINITY : meanOf(x)(indices);
    const result = bootstrapInterval({
      n: 20,
      statistic,
      resamples: 2000,
      rng: createRng(8),
      method: "bca",
    });
    expect(result.discarded).toBeGreaterThan(50); // ≈ 100 expected (binomial 2000 × 1/20)
    expect(result.discarded).toBeLessThan(160);
    expect(result.distribution.length).toBe(2000 - result.discarded);
    expect(result.distribution.every(Number.isFinite)).toBe(true);
  });

  it("refuses when more than 10% of replicates are not finite", () => {
    const y = x.slice(0, 5);
    const statistic = (indices: Int32Array) =>
      indices[0] === indices[1] ? Number.NaN : meanOf(y)(indices);
    expect(() =>
      bootstrapInterval({
        n: 5,
        statistic,
        resamples: 1000,
        rng: createRng(8),
        method: "percentile",
      }),
    ).toThrow(/finite statistic on at least 90% of resamples/);
  });

  it("rejects bad input with a StatsError naming the field", () => {
    const ok = {
      n: 5,
      statistic: meanOf([1, 2, 3, 4, 5]),
      resamples: 100,
      rng: createRng(1),
      method: "percentile" as const,
    };
    expect(() => bootstrapInterval({ ...ok, n: 1 })).toThrow(/at least 2 units/);
    expect(() => bootstrapInterval({ ...ok, n: 2, method: "bca" })).toThrow(/at least 3 units/);
    expect(() => bootstrapInterval({ ...ok, resamples: 1 })).toThrow(
      /resamples to be an integer of at least 2/,
    );
    expect(() => bootstrapInterval({ ...ok, level: 1 })).toThrow(/0 < level < 1/);
    expect(() => bootstrapInterval({ ...ok, statistic: () => Number.NaN })).toThrow(
      /finite estimate/,
    );
    expect(() =>
      bootstrapInterval({
        ...ok,
        method: "bca",
        statistic: (ix) => (ix.length === 4 && ix[0] === 1 ? Number.NaN : 1 + ix.length),
      }),
    ).toThrow(StatsError);
    // A constant statistic has no spread for BCa's bias correction.
    expect(() => bootstrapInterval({ ...ok, method: "bca", statistic: () => 3 })).not.toThrow();
  });
});
