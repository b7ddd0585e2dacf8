/**
 * The layouts a prediction fit's plots and figures draw from
 * (observed-predicted-layout.ts, learning-curve-layout.ts,
 * weight-dot-layout.ts): where points, lines and rows go, and the field
 * named for bad input. Inputs are invented; expected positions follow from
 * the linear scales (exact algebra).
 */
import { describe, expect, it } from "vitest";
import {
  learningCurveDescription,
  learningCurveLayout,
  learningCurveLegend,
} from "../../../components/charts/learning-curve-layout";
import {
  observedPredictedDescription,
  observedPredictedLayout,
} from "../../../components/charts/observed-predicted-layout";
import {
  weightColours,
  weightDotHeight,
  weightDotLayout,
} from "../../../components/charts/weight-dot-layout";
import { weightChart } from "../../../components/fit/prediction-layout";

const viewport = { width: 360, height: 327 };

describe("observed against predicted layout", () => {
  const participants = [
    { participant: "s01", observed: 10, predicted: 12 },
    { participant: "s02", observed: 20, predicted: 20 },
    { participant: "s03", observed: 30, predicted: 25 },
  ];
  const input = { participants, trait: "accuracy", confounds: ["age"] };

  it("places one point per participant on one scale shared by both axes", () => {
    const layout = observedPredictedLayout(input, viewport);
    expect(layout.points.map((p) => p.participant)).toEqual(["s01", "s02", "s03"]); // (exact enumeration)
    const { identity } = layout;
    // The identity line runs from the bottom-left to the top-right corner of the plot (exact algebra).
    expect(identity.x1).toBeCloseTo(layout.area.left, 9);
    expect(identity.y1).toBeCloseTo(layout.area.bottom, 9);
    expect(identity.x2).toBeCloseTo(layout.area.right, 9);
    expect(identity.y2).toBeCloseTo(layout.area.top, 9);
    // s02 was predicted exactly, so it lies on the identity line (exact algebra).
    const slope = (identity.y2 - identity.y1) / (identity.x2 - identity.x1);
    const s02 = layout.points[1];
    expect(s02.cy - identity.y1).toBeCloseTo(slope * (s02.cx - identity.x1), 9);
    // s01 was over-predicted: above the line (smaller y); s03 under-predicted: below it.
    const onLine = (x: number) => identity.y1 + slope * (x - identity.x1);
    expect(layout.points[0].cy).toBeLessThan(onLine(layout.points[0].cx));
    expect(layout.points[2].cy).toBeGreaterThan(onLine(layout.points[2].cx));
    expect(layout.xAxis.title).toBe("Observed accuracy, age removed");
    expect(layout.yAxis.title).toBe("Predicted accuracy, age removed");
    expect(layout.points[2].words).toBe("observed 30, predicted 25");
    expect(observedPredictedDescription(input)).toContain("for 3 held-out participants");
  });

  it("names the participant and field of bad input", () => {
    expect(() =>
      observedPredictedLayout(
        { ...input, participants: [{ participant: "s01", observed: 1, predicted: Number.NaN }] },
        viewport,
      ),
    ).toThrow("participants[0].predicted"); // (input contract)
  });
});

describe("learning curve layout", () => {
  const points = [
    { fraction: 1, trainingRows: 60, r: 0.4, r2: 0.15, rSpread: 0.05, r2Spread: 0.04 },
    { fraction: 0.5, trainingRows: 30, r: 0.2, r2: 0.02, rSpread: 0.1, r2Spread: 0.06 },
  ];

  it("orders the points by training rows and puts zero on its line", () => {
    const layout = learningCurveLayout(points, { width: 360, height: 240 });
    expect(layout.r.points.map((p) => p.x)).toEqual([30, 60]); // (exact enumeration)
    expect(layout.r2.points.map((p) => p.value)).toEqual([0.02, 0.15]); // (exact enumeration)
    // r = 0.4 lies above r = 0.2, and both above zero (SVG y grows downwards).
    expect(layout.r.points[1].cy).toBeLessThan(layout.r.points[0].cy);
    expect(layout.r.points[0].cy).toBeLessThan(layout.zero.y);
    expect(layout.r.band.length).toBeGreaterThan(0);
    expect(learningCurveLegend(points).map((e) => e.label)).toEqual([
      "r",
      "r²",
      "± SD over repeats",
    ]);
    expect(learningCurveDescription(points)).toContain("30 rows: r 0.20, r² 0.02");
  });

  it("draws no band legend with one repeat and names a bad training size", () => {
    const one = points.map((p) => ({ ...p, rSpread: null, r2Spread: null }));
    expect(learningCurveLegend(one).map((e) => e.label)).toEqual(["r", "r²"]);
    expect(() =>
      learningCurveLayout([{ ...points[0], trainingRows: 0 }], { width: 360, height: 240 }),
    ).toThrow("learningCurve[0].trainingRows"); // (input contract)
  });
});

describe("weight dot chart layout", () => {
  const rows = [
    { region: "L_dlpfc", weight: 0.3, signConsistency: 1 },
    {
      region: "a_very_long_region_name_that_has_to_wrap_onto_more_lines",
      weight: 0.1,
      signConsistency: 0.6,
    },
    { region: "R_insula", weight: -0.2, signConsistency: 0.9 },
  ];

  it("keeps the rows' order, colours by sign and stacks rows without overlap", () => {
    const width = 360;
    const layout = weightDotLayout(rows, { width, height: weightDotHeight(rows, width) });
    expect(layout.rows.map((r) => r.region)).toEqual(rows.map((r) => r.region)); // (exact enumeration)
    expect(layout.rows.map((r) => r.colour)).toEqual([
      weightColours.positive,
      weightColours.positive,
      weightColours.negative,
    ]);
    // Positive weights right of zero, negative left (exact algebra of the scale).
    expect(layout.rows[0].cx).toBeGreaterThan(layout.zero.x);
    expect(layout.rows[2].cx).toBeLessThan(layout.zero.x);
    expect(layout.rows[1].lines.length).toBeGreaterThan(1);
    for (let i = 1; i < layout.rows.length; i++) {
      const prevLast = layout.rows[i - 1].lines.at(-1)?.y ?? 0;
      expect(layout.rows[i].lines[0].y - prevLast).toBeGreaterThanOrEqual(weightChart.lineHeight);
    }
    expect(layout.rows.map((r) => r.stripe !== null)).toEqual([false, true, false]);
    expect(layout.rows[0].share.text).toBe("100%");
    expect(layout.rows[2].words).toBe("R_insula: weight −0.2, same sign in 90% of training folds");
  });

  it("names the field when there is nothing to draw", () => {
    expect(() => weightDotLayout([], viewport)).toThrow("regions: holds no weights"); // (input contract)
  });
});
