/**
 * The distribution functions against exact closed forms, printed tables and
 * round trips. Closed forms are asserted to 1e-12 relative, printed tables to
 * their printed digits.
 */
import { describe, expect, it } from "vitest";
import {
  chiSquareCdf,
  chiSquareQuantile,
  chiSquareUpper,
  fCdf,
  fQuantile,
  fUpper,
  logGamma,
  noncentralTCdf,
  noncentralTUpper,
  normalCdf,
  normalQuantile,
  normalTwoSidedP,
  normalUpper,
  regularizedBeta,
  studentTCdf,
  studentTQuantile,
  studentTTwoSidedP,
  studentTUpper,
} from "../../../../server/stats/distributions";
import { StatsError } from "../../../../server/stats/errors";
import { noncentralTByQuadrature } from "../noncentral-quadrature";
import { expectClose, expectPrinted } from "./tolerance";

describe("log Γ", () => {
  it("equals log((n − 1)!) at the integers and log √π at ½ (exact algebra)", () => {
    let logFactorial = 0;
    for (let n = 1; n <= 30; n++) {
      expect(Math.abs(logGamma(n) - logFactorial)).toBeLessThan(1e-13 * Math.max(1, logFactorial)); // (exact algebra: Γ(n) = (n − 1)!)
      logFactorial += Math.log(n);
    }
    expectClose(logGamma(0.5), 0.5 * Math.log(Math.PI), "logGamma(½)"); // (exact algebra: Γ(½) = √π)
    expectClose(logGamma(1000.5) - logGamma(999.5), Math.log(999.5), "Γ(x + 1) = xΓ(x)"); // (exact algebra)
  });
});

describe("standard normal", () => {
  it("gives the printed values of Abramowitz & Stegun (1964)", () => {
    expectPrinted(normalCdf(-1), 0.158655254, 9, "Φ(−1)"); // (A&S 1964, Table 26.1: P(1) = 0.841344746, so Φ(−1) = 1 − P)
    expectPrinted(normalQuantile(0.975), 1.959963985, 9, "z_0.975"); // (A&S 1964, Table 26.5)
    expectPrinted(normalQuantile(0.8), 0.841621234, 9, "z_0.8"); // (A&S 1964, Table 26.5)
    expectPrinted(normalTwoSidedP(1.959964), 0.05, 6, "P(|Z| ≥ 1.959964)"); // (value from memory: z_0.975 = 1.959964)
    expect(normalCdf(-10) / 7.619853024e-24).toBeCloseTo(1, 9); // (value from memory: Φ(−10) = 7.619853024e-24, 10 digits)
  });

  it("is exact at 0, symmetric, and round-trips with its quantile", () => {
    // (z ≤ 1.5 only on the right: Φ near 1 keeps too few digits of z to give it back)
    expect(normalCdf(0)).toBe(0.5); // (exact algebra)
    for (const z of [-37, -20, -8, -3.1, -0.4, 0.7, 1.5]) {
      expectClose(normalUpper(z), normalCdf(-z), `Φ̄(${z}) = Φ(−${z})`); // (exact algebra: symmetry)
      expectClose(normalQuantile(normalCdf(z)), z, `Φ⁻¹(Φ(${z}))`); // (exact algebra: inverse)
    }
  });

  it("refuses probabilities outside (0, 1)", () => {
    expect(() => normalQuantile(1)).toThrow(StatsError);
    expect(() => normalQuantile(0)).toThrow("normalQuantile requires 0 < p < 1 (got 0)");
  });
});

describe("Student t", () => {
  it("is the Cauchy distribution on 1 df (exact algebra)", () => {
    for (const t of [-1e8, -20, -3, -1, -0.5, 0.2, 0.3, 4, 1e3]) {
      // F₁(t) = ½ + atan(t)/π, written atan(−1/t)/π for t < 0 so that the expected value does not cancel
      const cauchy = t < 0 ? Math.atan(-1 / t) / Math.PI : 0.5 + Math.atan(t) / Math.PI;
      expectClose(studentTCdf(t, 1), cauchy, `F₁(${t})`);
      // upper tail atan(1/t)/π for t > 0, no cancellation
      if (t > 0) expectClose(studentTUpper(t, 1), Math.atan(1 / t) / Math.PI, `S₁(${t})`);
    }
    for (const p of [1e-300, 1e-12, 0.025, 0.3, 0.975])
      expectClose(studentTQuantile(p, 1), -1 / Math.tan(Math.PI * p), `Cauchy quantile ${p}`); // (exact algebra: tan(π(p − ½)) = −cot(πp))
  });

  it("has the closed form on 2 df (exact algebra)", () => {
    // F₂(t) = ½ + t/(2√(2 + t²)); the smaller tail written 1/(r(r + |t|)), r = √(2 + t²), without cancellation
    for (const t of [-1000, -5, -2, -0.5, 0.7, 1.2, 3, 9]) {
      const r = Math.sqrt(2 + t * t);
      const smaller = 1 / (r * (r + Math.abs(t)));
      expectClose(studentTCdf(t, 2), t < 0 ? smaller : 0.5 + t / (2 * r), `F₂(${t})`);
      if (t > 0) expectClose(studentTUpper(t, 2), smaller, `S₂(${t})`);
    }
    // P(|T| ≥ t) = 1 − t/√(2 + t²) = 2/(√(2 + t²)(√(2 + t²) + t)), the second form without cancellation
    for (const t of [0.7, 3, 1000]) {
      const r = Math.sqrt(2 + t * t);
      expectClose(studentTTwoSidedP(t, 2), 2 / (r * (r + t)), `two-sided on 2 df at ${t}`);
    }
    for (const p of [1e-200, 0.01, 0.3, 0.9, 0.999])
      expectClose(studentTQuantile(p, 2), (2 * p - 1) / Math.sqrt(2 * p * (1 - p)), `q₂(${p})`);
  });

  it("gives printed critical values (Zar 2010, Biostatistical Analysis, Table B.3, 3 decimals)", () => {
    expectPrinted(studentTQuantile(0.975, 10), 2.228, 3, "t(0.975, 10)"); // (Zar 2010, Table B.3)
    expectPrinted(studentTQuantile(0.995, 30), 2.75, 3, "t(0.995, 30)"); // (Zar 2010, Table B.3)
    expectPrinted(studentTQuantile(0.975, 12), 2.179, 3, "t(0.975, 12)"); // (Zar 2010, Table B.3)
  });

  it("round-trips quantile(cdf(t)) = t, fractional df included (exact algebra: inverse)", () => {
    // t ≤ 1.7 only on the right: a cdf near 1 keeps too few digits of t to give it back
    for (const df of [1, 2.5, 7.3, 30, 1e3, 1e6])
      for (const t of [-30, -3.5, -0.8, 0.25, 1.7])
        expectClose(studentTQuantile(studentTCdf(t, df), df), t, `q(F(${t}, ${df}))`);
  });

  it("equals the normal distribution for infinite df and refuses non-positive df", () => {
    expect(studentTCdf(1.3, Infinity)).toBe(normalCdf(1.3)); // (exact algebra)
    expect(() => studentTCdf(1, 0)).toThrow(StatsError);
  });
});

describe("F and chi-square", () => {
  it("chi-square on 2 df is exponential with mean 2 (exact algebra)", () => {
    for (const x of [1e-10, 0.3, 2, 40, 1200]) {
      expectClose(chiSquareUpper(x, 2), Math.exp(-x / 2), `S(${x})`);
      expectClose(chiSquareCdf(x, 2), -Math.expm1(-x / 2), `F(${x})`);
    }
    expectClose(chiSquareQuantile(0.975, 2), -2 * Math.log(0.025), "χ²₂ quantile"); // (exact algebra)
  });

  it("chi-square on 1 df is the square of a standard normal (exact algebra)", () => {
    for (const z of [0.1, 1, 3, 12])
      expectClose(chiSquareUpper(z * z, 1), normalTwoSidedP(z), `χ²₁(${z}²)`);
  });

  it("F is a beta transform: P(F ≤ x) = I_{d1·x/(d1·x + d2)}(d1/2, d2/2) (exact algebra)", () => {
    expectClose(fCdf(3, 2, 2), 0.75, "F(2, 2) at 3: x/(1 + x)"); // (exact algebra)
    for (const [x, d2] of [
      [0.5, 7],
      [3, 15],
      [10, 2.5],
    ])
      expectClose(fCdf(x, 2, d2), 1 - (1 + (2 * x) / d2) ** (-d2 / 2), `F(2, ${d2}) at ${x}`); // (exact algebra)
    expectClose(fUpper(40, 2, 10), (1 + 8) ** -5, "F(2, 10) upper at 40"); // (exact algebra: (1 + 2x/d2)^(−d2/2))
    expectClose(regularizedBeta(0.25, 1, 3), 1 - 0.75 ** 3, "I_x(1, b) = 1 − (1 − x)^b"); // (exact algebra)
  });

  it("F(1, ν) is the square of t(ν) (exact algebra)", () => {
    for (const [t, df] of [
      [2.5, 9],
      [0.7, 30],
      [20, 4.5],
    ])
      expectClose(fUpper(t * t, 1, df), studentTTwoSidedP(t, df), `F(1, ${df}) at ${t}²`);
    const t = studentTQuantile(0.975, 12);
    expectClose(fQuantile(0.95, 1, 12), t * t, "F(0.95; 1, 12) = t(0.975; 12)²");
  });

  it("gives the printed 97.5 % point of F(5, 15) (Zar 2010, Table B.4, 2 decimals)", () => {
    expectPrinted(fQuantile(0.975, 5, 15), 3.58, 2, "F(0.975; 5, 15)"); // (Zar 2010, Table B.4)
  });

  it("round-trips its quantiles (exact algebra: inverse)", () => {
    for (const [d1, d2] of [
      [4.5, 11],
      [1, 1],
      [30, 300],
    ])
      for (const p of [1e-8, 0.3, 0.95])
        expectClose(fCdf(fQuantile(p, d1, d2), d1, d2), p, `F(q(${p}; ${d1}, ${d2}))`);
    for (const df of [1, 3.5, 120])
      for (const p of [1e-6, 0.5, 0.99])
        expectClose(chiSquareCdf(chiSquareQuantile(p, df), df), p, `χ²(q(${p}; ${df}))`);
  });

  it("refuses non-positive degrees of freedom", () => {
    expect(() => fCdf(1, 0, 3)).toThrow("fCdf requires positive finite degrees of freedom (got 0)");
    expect(() => regularizedBeta(1.5, 1, 1)).toThrow(StatsError);
  });
});

describe("noncentral t", () => {
  it("equals Φ(−δ) at 0 and the central t at δ = 0 (exact algebra)", () => {
    for (const [df, ncp] of [
      [3, 1.5],
      [40, -2],
      [10, 45],
    ])
      expectClose(noncentralTCdf(0, df, ncp), normalCdf(-ncp), `at 0 (${df}, ${ncp})`);
    for (const [t, df] of [
      [1.3, 4],
      [-2.2, 25],
      [12.7, 1],
      [60, 7],
    ]) {
      expectClose(noncentralTCdf(t, df, 0), studentTCdf(t, df), `δ = 0 (${t}, ${df})`);
      expectClose(noncentralTUpper(t, df, 0), studentTUpper(t, df), `δ = 0 upper (${t}, ${df})`);
    }
  });

  it("agrees with numerical integration of its definition (the test's own Simpson rule, 8 decimals)", () => {
    for (const [t, nu, delta] of [
      [1, 10, 1],
      [2.5, 9, 1.2],
      [-0.5, 20, 0.8],
      [4, 5, 3],
      [20, 9, 30],
      [-3, 15, -2.5],
    ])
      expect(noncentralTCdf(t, nu, delta)).toBeCloseTo(noncentralTByQuadrature(t, nu, delta), 8); // (independent quadrature)
  });

  it("approaches N(δ, 1) for very many degrees of freedom", () => {
    // (exact limit: T → Z + δ as ν → ∞; at ν = 10^7 the difference is of order 1/ν)
    expect(noncentralTCdf(1.3, 1e7, 0.4)).toBeCloseTo(normalCdf(0.9), 6);
  });

  it("keeps both tails for large noncentrality, where a sum from j = 0 underflows", () => {
    const below = noncentralTCdf(40, 100, 39);
    const above = noncentralTCdf(40, 100, 41);
    expect(below).toBeGreaterThan(above);
    expect(below + noncentralTUpper(40, 100, 39)).toBeCloseTo(1, 14); // (exact algebra: the tails sum to 1)
  });
});
