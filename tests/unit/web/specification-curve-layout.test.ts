/**
 * The layout of the specification-curve screen: one choice row per
 * estimator, covariate set and exclusion rule, a mark in each column whose
 * specification made the choice, and a value scale that holds zero and
 * every interval. Expected values counted by hand (exact enumeration).
 */
import { describe, expect, it } from "vitest";
import {
  CURVE_LABELS_MIN,
  curveLabelWidth,
  curveLayout,
  specKey,
} from "../../../components/fit/specification-curve-layout";
import type { CurveSpecification } from "../../../contract/specification-curve";

const spec = (
  estimator: string,
  covariates: string[],
  exclusions: number[],
  estimate: number,
): CurveSpecification => ({
  estimator,
  covariates,
  exclusions,
  n: 20,
  estimate,
  ciLow: estimate - 1,
  ciHigh: estimate + 1,
  p: 0.2,
});

describe("specification curve layout", () => {
  const specs = [
    spec("ols", [], [], 0.5),
    spec("ols", ["age"], [0], 1),
    spec("huber", [], [0], 2),
    spec("huber", ["age"], [], 3),
  ];
  const rules = [{ column: "mean_fd", op: ">", value: 0.5, reason: "motion" }];
  const layout = curveLayout(specs, rules, 400);

  it("has a row per estimator, covariate set and rule, marked where the specification made the choice", () => {
    expect(layout.rows.map((r) => r.label)).toEqual([
      "Least squares",
      "Huber",
      "no covariates",
      "+ age",
      "excl. mean_fd > 0.5",
    ]);
    expect(layout.rows[0].made).toEqual([true, true, false, false]);
    expect(layout.rows[3].made).toEqual([false, true, false, true]);
    expect(layout.rows[4].made).toEqual([false, true, true, false]);
  });

  it("fits the columns to the width, never below 12 px, and scales values to hold zero and every interval", () => {
    expect(layout.columnWidth).toBe(100);
    expect(curveLayout(specs, rules, 20).columnWidth).toBe(12);
    // Intervals span −0.5 … 4; 5% padding each side of 4.5 = 0.225.
    expect(layout.low).toBeCloseTo(-0.725, 12);
    expect(layout.high).toBeCloseTo(4.225, 12);
    expect(layout.y(layout.high, 100)).toBe(0);
  });

  it("gives the choice labels the room of the widest, between 112 px and a third of the panel", () => {
    const long = [{ label: "excl. mean_fd_framewise_displacement > 0.5" }];
    // a phone: the narrow column, the label cut with "…"
    expect(curveLabelWidth(long, 320, 12)).toBe(CURVE_LABELS_MIN); // (exact arithmetic: 320/3 < 112)
    // a wide screen: up to a third of 1,000 px
    const wide = curveLabelWidth(long, 1000, 12);
    expect(wide).toBeGreaterThan(CURVE_LABELS_MIN);
    expect(wide).toBeLessThanOrEqual(333); // (exact arithmetic: floor(1000 / 3))
    // short labels keep the narrow column
    expect(curveLabelWidth([{ label: "Huber" }], 1000, 12)).toBe(CURVE_LABELS_MIN);
  });

  it("keys specifications uniquely", () => {
    expect(new Set(specs.map(specKey)).size).toBe(4);
  });
});
