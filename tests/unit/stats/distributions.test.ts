import { describe, expect, it } from "vitest";
import {
  chiSquareQuantile,
  fCdf,
  fQuantile,
  fUpperTail,
  noncentralTCdf,
  normalCdf,
  normalQuantile,
  normalTwoSidedP,
  studentTCdf,
  studentTQuantile,
  studentTTwoSidedP,
} from "../../../server/stats/distributions";
import { StatsError } from "../../../server/stats/errors";
import { noncentralTByQuadrature } from "./noncentral-quadrature";

/** Standard normal density, to check the test's own quadrature. */
const phi = (z: number) => Math.exp(-0.5 * z * z) / Math.sqrt(2 * Math.PI);

describe("normal distribution", () => {
  it("matches exact values and the printed table", () => {
    expect(normalCdf(0)).toBeCloseTo(0.5, 14); // (exact: symmetry)
    expect(normalQuantile(0.975)).toBeCloseTo(1.959964, 6); // (value from memory: z_0.975 = 1.959964)
    expect(normalTwoSidedP(1.959964)).toBeCloseTo(0.05, 6); // (value from memory, as above)
    expect(normalCdf(-1)).toBeCloseTo(0.158655254, 8); // (Abramowitz & Stegun 1964, Table 26.1)
  });
});

// jstat's continued fraction stops at a relative change of 3e-7, which leaves
// absolute errors of about 1e-9 in probabilities: comparisons use 8 decimals.
describe("Student t distribution", () => {
  it("equals the Cauchy distribution on 1 df (exact algebra)", () => {
    for (const t of [-3, -0.5, 0.2, 4]) {
      expect(studentTCdf(t, 1)).toBeCloseTo(0.5 + Math.atan(t) / Math.PI, 8); // (exact algebra: t on 1 df is Cauchy)
    }
  });
  it("has the closed form on 2 df (exact algebra)", () => {
    for (const t of [-2, 0.7, 3]) {
      expect(studentTCdf(t, 2)).toBeCloseTo(0.5 + t / (2 * Math.sqrt(2 + t * t)), 8); // (exact algebra)
      expect(studentTTwoSidedP(t, 2)).toBeCloseTo(1 - Math.abs(t) / Math.sqrt(2 + t * t), 8); // (exact algebra)
    }
  });
  it("matches printed critical values", () => {
    expect(studentTQuantile(0.975, 10)).toBeCloseTo(2.228, 3); // (t table, Zar 2010, Table B.3)
    expect(studentTQuantile(0.995, 30)).toBeCloseTo(2.75, 3); // (t table, Zar 2010, Table B.3)
    expect(studentTQuantile(0.975, 1)).toBeCloseTo(Math.tan(Math.PI * 0.475), 6); // (exact algebra: Cauchy quantile)
  });
  it("keeps precision in the far tail", () => {
    // on 2 df, P(|T| ≥ 1000) = 1 − 1000/√(1000002) (exact algebra)
    const exact = 1 - 1000 / Math.sqrt(1000002);
    expect(studentTTwoSidedP(1000, 2) / exact).toBeCloseTo(1, 6);
  });
});

describe("F and chi-square distributions", () => {
  it("chi-square on 2 df is exponential with mean 2 (exact algebra)", () => {
    expect(chiSquareQuantile(0.975, 2)).toBeCloseTo(-2 * Math.log(0.025), 6); // (exact algebra)
  });
  it("F(1, ν) is the square of t(ν) (exact algebra)", () => {
    const t = studentTQuantile(0.975, 12);
    expect(fQuantile(0.95, 1, 12)).toBeCloseTo(t * t, 5); // (exact algebra)
    expect(fCdf(t * t, 1, 12)).toBeCloseTo(0.95, 8); // (exact algebra)
    expect(fUpperTail(t * t, 1, 12)).toBeCloseTo(0.05, 8); // (exact algebra)
  });
  it("F(2, 2) has P(F ≤ x) = x/(1 + x) (exact algebra)", () => {
    expect(fCdf(3, 2, 2)).toBeCloseTo(0.75, 8); // (exact algebra)
  });
});

describe("noncentral t distribution", () => {
  it("agrees with numerical integration of its definition", () => {
    for (const [t, nu, delta] of [
      [1, 10, 1],
      [2.5, 9, 1.2],
      [-0.5, 20, 0.8],
      [4, 5, 3],
      [20, 9, 30],
      [-3, 15, -2.5],
    ] as const) {
      expect(noncentralTCdf(t, nu, delta)).toBeCloseTo(noncentralTByQuadrature(t, nu, delta), 6); // (independent quadrature)
    }
  });
  it("reduces to the central t at δ = 0 and to Φ(t − δ) for huge df", () => {
    expect(noncentralTCdf(1.3, 7, 0)).toBeCloseTo(studentTCdf(1.3, 7), 8); // (exact algebra)
    expect(noncentralTCdf(1.3, 1e7, 0.4)).toBeCloseTo(normalCdf(0.9), 5); // (limit ν → ∞)
  });
  it("stays finite and monotone far out, where the series switches to the normal approximation", () => {
    const a = noncentralTCdf(40, 100, 39);
    const b = noncentralTCdf(40, 100, 41);
    expect(a).toBeGreaterThan(b);
    expect(Number.isFinite(a) && Number.isFinite(b)).toBe(true);
  });
  it("refuses non-positive degrees of freedom", () => {
    expect(() => studentTCdf(1, 0)).toThrow(StatsError);
    expect(() => normalQuantile(1)).toThrow(StatsError);
  });
  it("phi helper integrates to one (sanity of the test's own quadrature)", () => {
    let s = 0;
    for (let z = -8; z <= 8; z += 0.001) s += phi(z) * 0.001;
    expect(s).toBeCloseTo(1, 6);
  });
});
