import { createRequire } from "node:module";
import { describe, expect, it } from "vitest";
import { StatsError } from "../../../server/stats/errors";
import {
  fCdf,
  fQuantile,
  fUpper,
  logGamma,
  noncentralTCdf,
  normalCdf,
  normalQuantile,
  regularizedBeta,
  studentTCdf,
  studentTQuantile,
  studentTTwoSided,
  studentTUpper,
} from "../../../server/stats/measurement-distributions";

/** An independent implementation to compare against: jstat's Poisson-weighted incomplete-beta series (third-party library). */
const jStat = createRequire(import.meta.url)("jstat") as {
  noncentralt: { cdf(t: number, df: number, ncp: number): number };
};

describe("logGamma", () => {
  it("equals log((n − 1)!) at the integers", () => {
    let logFactorial = 0;
    for (let n = 1; n <= 30; n++) {
      // (exact algebra: Γ(n) = (n − 1)!)
      expect(logGamma(n)).toBeCloseTo(logFactorial, 12);
      logFactorial += Math.log(n);
    }
  });

  it("equals log √π at one half and follows Γ(x + 1) = xΓ(x)", () => {
    expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 14); // (exact algebra: Γ(½) = √π)
    expect(logGamma(1000.5) - logGamma(999.5)).toBeCloseTo(Math.log(999.5), 10); // (exact algebra)
  });
});

describe("normal distribution", () => {
  it("gives the tabled percentage points", () => {
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963985, 9); // (Abramowitz & Stegun 1964, Table 26.5)
    expect(normalQuantile(0.8)).toBeCloseTo(0.841621234, 9); // (Abramowitz & Stegun 1964, Table 26.5)
    expect(normalQuantile(0.025)).toBeCloseTo(-1.959963985, 9); // (exact algebra: symmetry)
  });

  it("is symmetric, exact at zero and round-trips with its quantile", () => {
    expect(normalCdf(0)).toBe(0.5); // (exact algebra)
    for (const z of [-8, -3.1, -0.4, 0.7, 2.2, 5]) {
      expect(normalCdf(z) + normalCdf(-z)).toBeCloseTo(1, 14); // (exact algebra: symmetry)
      expect(normalQuantile(normalCdf(z))).toBeCloseTo(z, 9); // (exact algebra: inverse)
    }
  });

  it("keeps relative precision in the far tail", () => {
    // (value from memory: Φ(−10) = 7.619853024e-24)
    expect(normalCdf(-10) / 7.619853024e-24).toBeCloseTo(1, 8);
  });

  it("refuses probabilities outside (0, 1)", () => {
    expect(() => normalQuantile(1)).toThrow(StatsError);
    expect(() => normalQuantile(0)).toThrow("normalQuantile requires 0 < p < 1 (got 0)");
  });
});

describe("Student t distribution", () => {
  it("matches the Cauchy distribution at one degree of freedom", () => {
    for (const t of [-20, -1, 0.3, 4]) {
      expect(studentTCdf(t, 1)).toBeCloseTo(0.5 + Math.atan(t) / Math.PI, 13); // (exact algebra)
    }
    expect(studentTQuantile(0.975, 1)).toBeCloseTo(Math.tan(0.475 * Math.PI), 9); // (exact algebra)
  });

  it("matches the closed form at two degrees of freedom", () => {
    for (const t of [-5, -0.5, 1.2, 9]) {
      expect(studentTCdf(t, 2)).toBeCloseTo(0.5 + t / (2 * Math.sqrt(2 + t * t)), 13); // (exact algebra)
    }
    for (const p of [0.01, 0.3, 0.9, 0.999]) {
      expect(studentTQuantile(p, 2)).toBeCloseTo((2 * p - 1) / Math.sqrt(2 * p * (1 - p)), 9); // (exact algebra)
    }
  });

  it("gives the tabled critical value for 12 degrees of freedom", () => {
    expect(studentTQuantile(0.975, 12)).toBeCloseTo(2.179, 3); // (Student t table, e.g. Zar 2010, Table B.3)
    expect(studentTTwoSided(studentTQuantile(0.975, 12), 12)).toBeCloseTo(0.05, 12); // (exact algebra: inverse)
  });

  it("keeps the upper tail precise where 1 − cdf would cancel", () => {
    // (exact algebra: Cauchy upper tail = atan(1/t)/π)
    expect(studentTUpper(1e8, 1) / (Math.atan(1e-8) / Math.PI)).toBeCloseTo(1, 9);
  });
});

describe("F distribution", () => {
  it("matches the closed form for two numerator degrees of freedom", () => {
    for (const [x, d2] of [
      [0.5, 7],
      [3, 15],
      [10, 2.5],
    ]) {
      expect(fCdf(x, 2, d2)).toBeCloseTo(1 - (1 + (2 * x) / d2) ** (-d2 / 2), 13); // (exact algebra)
    }
  });

  it("relates to Student's t as F(1, ν) = t²", () => {
    for (const [t, df] of [
      [2.5, 9],
      [0.7, 30],
    ]) {
      expect(fUpper(t * t, 1, df)).toBeCloseTo(studentTTwoSided(t, df), 13); // (exact algebra)
    }
  });

  it("gives the tabled 97.5% point of F(5, 15)", () => {
    expect(fQuantile(0.975, 5, 15)).toBeCloseTo(3.58, 2); // (F table, e.g. Zar 2010, Table B.4)
    expect(fCdf(fQuantile(0.3, 4.5, 11), 4.5, 11)).toBeCloseTo(0.3, 12); // (exact algebra: inverse)
  });

  it("rejects non-positive degrees of freedom", () => {
    expect(() => fCdf(1, 0, 3)).toThrow("fCdf requires positive finite degrees of freedom (got 0)");
    expect(() => regularizedBeta(1.5, 1, 1)).toThrow(StatsError);
  });
});

describe("noncentral t distribution", () => {
  it("equals Φ(−δ) at zero", () => {
    for (const [df, ncp] of [
      [3, 1.5],
      [40, -2],
    ]) {
      expect(noncentralTCdf(0, df, ncp)).toBeCloseTo(normalCdf(-ncp), 15); // (exact algebra)
    }
  });

  it("reduces to the central t when δ = 0", () => {
    for (const [t, df] of [
      [1.3, 4],
      [-2.2, 25],
      [12.7, 1],
    ]) {
      expect(noncentralTCdf(t, df, 0)).toBeCloseTo(studentTCdf(t, df), 10); // (exact algebra)
    }
  });

  it("agrees with an independent series implementation", () => {
    const cases: [number, number, number][] = [
      [2, 10, 1],
      [1.96, 100, 2.8],
      [2, 2, 3],
      [-1, 5, 0.5],
      [12.7, 1, 2],
      [1.97, 784, 2.8],
      [3, 30, -1],
      [2.05, 50, 4.5],
    ];
    for (const [t, df, ncp] of cases) {
      // (jstat 1.9.6 noncentral t series, Lenth 1989 AS 243 form; independent third-party code, accurate to about 1e-9)
      expect(noncentralTCdf(t, df, ncp)).toBeCloseTo(jStat.noncentralt.cdf(t, df, ncp), 8);
    }
  });

  it("approaches the normal distribution N(δ, 1) for very many degrees of freedom", () => {
    // (exact limit: T → Z + δ as ν → ∞; at ν = 10^6 the difference is of order 1/ν)
    expect(noncentralTCdf(2.5, 1e6, 1.8)).toBeCloseTo(normalCdf(2.5 - 1.8), 5);
  });
});
