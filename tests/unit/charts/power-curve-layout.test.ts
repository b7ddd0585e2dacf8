import { describe, expect, it } from "vitest";
import { checkPowerPoints, interpolatePower } from "../../../components/charts/power-curve-layout";

describe("power curve layout", () => {
  const pts = checkPowerPoints([
    { n: 40, power: 0.5 },
    { n: 20, power: 0.3 },
    { n: 80, power: 0.82 },
  ]);

  it("sorts the points by N", () => {
    expect(pts.map((p) => p.n)).toEqual([20, 40, 80]); // (exact enumeration)
  });

  it("reads the curve by linear interpolation", () => {
    expect(interpolatePower(pts, 30)).toBeCloseTo(0.4, 14); // (exact algebra: halfway between 0.3 and 0.5)
    expect(interpolatePower(pts, 70)).toBeCloseTo(0.5 + 0.32 * 0.75, 14); // (exact algebra: 3/4 of the way from 40 to 80)
    expect(interpolatePower(pts, 80)).toBe(0.82); // (exact enumeration: a point of the curve)
    expect(interpolatePower(pts, 20)).toBe(0.3); // (exact enumeration)
    expect(interpolatePower(pts, 10)).toBeNull(); // (outside the curve)
    expect(interpolatePower(pts, 81)).toBeNull(); // (outside the curve)
  });

  it("names the point and field of bad input", () => {
    expect(() => checkPowerPoints([{ n: 10, power: 1.2 }])).toThrow(
      "points[0].power: must lie in [0, 1] (got 1.2)",
    ); // (definition of a probability)
    expect(() =>
      checkPowerPoints([
        { n: 10, power: 0.2 },
        { n: 0, power: 0.1 },
      ]),
    ).toThrow("points[1].n: must be positive (got 0)"); // (input contract)
    expect(() => checkPowerPoints([{ n: Number.NaN, power: 0.1 }])).toThrow(
      "points[0].n: must be a finite number (got NaN)",
    ); // (input contract)
    expect(() =>
      checkPowerPoints([
        { n: 10, power: 0.1 },
        { n: 10, power: 0.2 },
      ]),
    ).toThrow("N = 10 appears more than once"); // (input contract)
    expect(() => checkPowerPoints([])).toThrow("points: must hold at least one point"); // (input contract)
  });
});
