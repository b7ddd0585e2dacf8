/**
 * The one source of standard normal draws (Box & Muller 1958): the same seed
 * gives the same draws as the copies it replaced, and the draws have the
 * standard normal's mean and variance.
 */
import { describe, expect, it } from "vitest";
import { createRng, normalDraw, normalPairs } from "../../../server/stats/rng";

const take = (draw: () => number, k: number) => Array.from({ length: k }, draw);

describe("normal draws keep the seeded sequences of the code they replaced", () => {
  it("redraw rule (the tests' and benchmarks' copies): seed 2026", () => {
    const rng = createRng(2026);
    // Captured from the former copy: u = next() drawn again while 0, then √(−2 ln u)·cos(2π·next()).
    expect(take(() => normalDraw(rng), 6)).toEqual([
      0.690179727183287, -0.4611592489182501, 0.5017551340325798, -0.1879372201613053,
      -0.7278914982548218, -0.034924631668959115,
    ]); // (captured from the former code, common practice, no source)
  });

  it("complement rule (the demo data's copy): seed 2026", () => {
    const rng = createRng(2026);
    // Captured from the former copy: u = 1 − next(), v = next(), √(−2 ln u)·cos(2πv).
    expect(take(() => normalDraw(rng, { zero: "complement" }), 6)).toEqual([
      0.4208933126967943, -0.34886247965057626, 0.7390490892784448, -0.09100631468150548,
      -1.6957860383547074, -0.15762547343089342,
    ]); // (captured from the former code, common practice, no source)
  });

  it("pairs (the power simulation's copy): cosine then sine of each pair, seed 2026", () => {
    const draw = normalPairs(createRng(2026));
    expect(take(draw, 6)).toEqual([
      0.690179727183287, 1.309110515801201, -0.4611592489182501, 1.2641804231543272,
      0.5017551340325798, -0.8173818166449015,
    ]); // (captured from the former code, common practice, no source)
  });

  it("a zero uniform is drawn again, or complemented, never fed to the logarithm", () => {
    const uniforms = [0, 0, 0.25, 0.5];
    const fake = (values: number[]) => {
      let k = 0;
      // normalDraw takes uniforms only: the other draws fail loudly if it ever asks for them.
      const unused = (): never => {
        throw new Error("normalDraw drew something other than a uniform");
      };
      return { seed: 0, next: () => values[k++], int: unused, shuffle: unused };
    };
    // redraw: u = 0.25 (third), v = 0.5 (fourth): √(−2 ln 0.25)·cos(π)
    expect(normalDraw(fake(uniforms))).toBeCloseTo(-Math.sqrt(-2 * Math.log(0.25)), 14); // (exact algebra)
    // complement: u = 1 − 0 = 1, so the radius is 0
    expect(Math.abs(normalDraw(fake(uniforms), { zero: "complement" }))).toBe(0); // (exact algebra)
  });
});

describe("normal draws have mean 0 and variance 1", () => {
  const cases: [string, () => number][] = [
    [
      "redraw",
      (() => {
        const rng = createRng(11);
        return () => normalDraw(rng);
      })(),
    ],
    [
      "complement",
      (() => {
        const rng = createRng(12);
        return () => normalDraw(rng, { zero: "complement" });
      })(),
    ],
    ["pairs", normalPairs(createRng(13))],
  ];
  for (const [name, draw] of cases) {
    it(`${name}: over 200,000 draws`, () => {
      const n = 200_000;
      let sum = 0;
      let sumSq = 0;
      let beyond196 = 0;
      for (let i = 0; i < n; i++) {
        const z = draw();
        sum += z;
        sumSq += z * z;
        if (Math.abs(z) > 1.959964) beyond196++;
      }
      const mean = sum / n;
      const variance = sumSq / n - mean * mean;
      // Five standard errors: mean se 1/√n ≈ 0.0022, variance se √(2/n) ≈ 0.0032 (normal theory).
      expect(Math.abs(mean)).toBeLessThan(0.012);
      expect(Math.abs(variance - 1)).toBeLessThan(0.016);
      // P(|Z| > 1.96) = 0.05 (standard normal table); binomial se √(0.05·0.95/n) ≈ 0.0005.
      expect(Math.abs(beyond196 / n - 0.05)).toBeLessThan(0.0025);
    });
  }
});
