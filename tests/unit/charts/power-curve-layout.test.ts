import { describe, expect, it } from "vitest";
import {
  checkPowerCurve,
  checkPowerPoints,
  interpolatePower,
  powerCurveDescription,
  powerCurveLayout,
  powerCurveLegend,
} from "../../../components/charts/power-curve-layout";

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

  it("places one point per planned N, the target line and the answer's marker", () => {
    const input = { points: pts, targetPower: 0.8, answerN: 70 };
    const layout = powerCurveLayout(input, { width: 360, height: 240 });
    expect(layout.points.map((p) => p.n)).toEqual([20, 40, 80]); // (exact enumeration)
    const { area } = layout;
    // Power 0 at the bottom, 1 at the top, so 0.8 lies 80% of the way up (exact algebra).
    expect(layout.target.y).toBeCloseTo(area.bottom - 0.8 * (area.bottom - area.top), 9);
    // The answer's dot sits on the curve: power at N = 70 read by interpolation (exact algebra).
    const power70 = 0.5 + 0.32 * 0.75;
    expect(layout.answer?.dot?.cy).toBeCloseTo(area.bottom - power70 * (area.bottom - area.top), 9);
    expect(layout.answer?.label.text).toBe("N = 70");
    expect(layout.points[0].words).toBe("N = 20: power 30%"); // (input, in words)
    expect(layout.curvePath.startsWith("M")).toBe(true);
    expect(layout.curvePath.split("L")).toHaveLength(3); // (one segment per pair of neighbours)
    expect(powerCurveLegend(input).map((e) => e.label)).toEqual(["power", "target 80%", "N = 70"]);
    expect(powerCurveDescription(input)).toContain("at 3 planned Ns");
  });

  it("draws no marker without an answer and names a bad target", () => {
    const layout = powerCurveLayout(
      { points: pts, targetPower: 0.9, answerN: null },
      { width: 360, height: 240 },
    );
    expect(layout.answer).toBeNull();
    expect(() => checkPowerCurve({ points: pts, targetPower: 1, answerN: null })).toThrow(
      "targetPower: must lie strictly between 0 and 1 (got 1)",
    ); // (input contract)
    expect(() => checkPowerCurve({ points: pts, targetPower: 0.8, answerN: -3 })).toThrow(
      "answerN: must be positive (got -3)",
    ); // (input contract)
  });
});
