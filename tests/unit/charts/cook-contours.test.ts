import { describe, expect, it } from "vitest";
import { contourLeverageAt, contourPoints, contourResidual, cooksDistanceFrom } from "../../../components/charts/cook-contours";
import { ChartInputError } from "../../../components/charts/chart-input-error";

describe("Cook's distance contours (Cook 1977: D = r²h / (p(1 − h)))", () => {
  it("gives r on the contour by exact algebra", () => {
    expect(contourResidual(0.5, 2, 0.5)).toBeCloseTo(1, 14); // (exact algebra: √(0.5·2·0.5/0.5) = 1)
    expect(contourResidual(1, 4, 0.2)).toBeCloseTo(4, 14); // (exact algebra: √(1·4·0.8/0.2) = √16 = 4)
    expect(contourResidual(1, 3, 0.75)).toBeCloseTo(1, 14); // (exact algebra: √(1·3·0.25/0.75) = 1)
    expect(contourResidual(0.5, 3, 0.1)).toBeCloseTo(Math.sqrt(13.5), 14); // (exact algebra: 0.5·3·0.9/0.1 = 13.5)
  });

  it("maps back to the same Cook's distance", () => {
    for (const d of [0.5, 1]) {
      for (const p of [2, 3, 5]) {
        for (const h of [0.02, 0.1, 0.3, 0.6, 0.9]) {
          const r = contourResidual(d, p, h);
          expect(cooksDistanceFrom(r, h, p)).toBeCloseTo(d, 12); // (exact algebra: substituting r back into D = r²h/(p(1 − h)))
          expect(cooksDistanceFrom(-r, h, p)).toBeCloseTo(d, 12); // (exact algebra: D depends on r², so −r lies on the lower contour)
        }
      }
    }
  });

  it("finds where a contour reaches a given |r|", () => {
    expect(contourLeverageAt(1, 2, 4)).toBeCloseTo(2 / 18, 14); // (exact algebra: h = Dp/(r² + Dp) = 2/(16 + 2))
    expect(contourResidual(1, 2, contourLeverageAt(1, 2, 4))).toBeCloseTo(4, 12); // (exact algebra: the two formulas are inverse)
  });

  it("samples the contour inside the box from its entry to hMax", () => {
    const pts = contourPoints(0.5, 2, { hMax: 0.5, rMax: 3, steps: 10 });
    expect(pts.length).toBe(11); // (exact enumeration: steps + 1 points)
    expect(pts[0].h).toBeCloseTo(1 / 10, 14); // (exact algebra: h = 0.5·2/(9 + 0.5·2) = 0.1)
    expect(pts[0].r).toBeCloseTo(3, 12); // (exact algebra: the entry point lies on |r| = rMax)
    expect(pts[10]).toEqual({ h: 0.5, r: contourResidual(0.5, 2, 0.5) }); // (exact algebra: last point at hMax, r = 1)
    for (let i = 1; i < pts.length; i++) {
      expect(pts[i].h).toBeGreaterThan(pts[i - 1].h); // (exact algebra: leverages increase)
      expect(pts[i].r).toBeLessThan(pts[i - 1].r); // (exact algebra: r decreases in h on a contour)
    }
  });

  it("is empty when the contour stays outside the box", () => {
    expect(contourPoints(1, 2, { hMax: 0.05, rMax: 2 })).toEqual([]); // (exact algebra: entry h = 2/(4 + 2) = 1/3 > 0.05)
  });

  it("refuses impossible input with the field named", () => {
    expect(() => contourResidual(0.5, 2, 1)).toThrow(/leverage: must lie strictly between 0 and 1/); // (definition: h < 1)
    expect(() => contourResidual(0, 2, 0.5)).toThrow(ChartInputError); // (definition: D > 0 for a contour)
    expect(() => contourResidual(0.5, 0, 0.5)).toThrow(/coefficients/); // (definition: p ≥ 1)
    expect(() => contourPoints(0.5, 2, { hMax: 0.5, rMax: 0 })).toThrow(/rMax/); // (definition: positive box)
  });
});
