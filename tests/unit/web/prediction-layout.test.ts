import { describe, expect, it } from "vitest";
import type { PredictionBlock } from "../../../contract/prediction";
import { ChartInputError } from "../../../components/charts/chart-input-error";
import {
  consistencyOpacity,
  curveSeries,
  lambdaSummary,
  observedPredictedDomain,
  schemeWords,
  scoreSentence,
  scoreTiles,
  spreadSentence,
  weightChartLayout,
  weightRows,
  wrapLabel,
} from "../../../components/fit/prediction-layout";
import { estimateTextWidth } from "../../../components/charts/scales";

function block(over: Partial<PredictionBlock> = {}): PredictionBlock {
  return {
    folds: 10,
    repeats: 10,
    seed: 1,
    lambdaChoice: "inner-cv",
    r: 0.3141,
    r2: 0.0912,
    mae: 4.236,
    spread: { r: 0.0312, r2: 0.0208, mae: 0.0712 },
    perRepeat: [],
    participants: [],
    regions: [],
    lambdas: [
      { repeat: 1, fold: 1, lambda: 10 },
      { repeat: 1, fold: 2, lambda: 100 },
      { repeat: 1, fold: 3, lambda: 10 },
      { repeat: 1, fold: 4, lambda: 1 },
    ],
    permutation: { resamples: 999, pR: 0.004, pR2: 0.006 },
    learningCurve: null,
    ...over,
  };
}

describe("score words", () => {
  it("writes the headline with permutation p, scheme and trait", () => {
    expect(scoreSentence(block(), "accuracy")).toBe(
      "Predicted in people the model had not seen (10 repeats of 10-fold cross-validation): r = 0.31 (p = 0.004), r² = 0.09 (p = 0.006), mean absolute error 4.24 (in accuracy).",
    );
  });
  it("leaves p out without a permutation test and names leave-one-out", () => {
    const text = scoreSentence(
      block({ permutation: null, folds: "leave-one-out", repeats: 1 }),
      null,
    );
    expect(text).toBe(
      "Predicted in people the model had not seen (leave-one-out cross-validation): r = 0.31, r² = 0.09, mean absolute error 4.24.",
    );
  });
  it("prints a negative r² with the minus sign and a missing r as n/a", () => {
    const tiles = scoreTiles(block({ r: null, r2: -0.1234 }));
    expect(tiles.map((t) => t.value)).toEqual(["n/a", "\u22120.12", "4.24"]);
    expect(tiles.map((t) => t.p)).toEqual(["p = 0.004", "p = 0.006", null]);
    expect(tiles[0].spread).toBe("± 0.03");
    expect(scoreTiles(block({ r: 0.5 }))[0].value).toBe("0.50");
    expect(tiles[2].shortName).toBe("MAE");
  });
  it("explains spread and p only when they exist", () => {
    expect(
      spreadSentence(
        block({ repeats: 1, spread: { r: null, r2: null, mae: null }, permutation: null }),
      ),
    ).toBeNull();
    expect(spreadSentence(block())).toBe(
      "± is the standard deviation over the 10 repeats of the random split into folds; p compares the held-out score with 999 runs of the whole pipeline on shuffled trait values.",
    );
    expect(schemeWords({ folds: 5, repeats: 1 })).toBe("5-fold cross-validation");
  });
});

describe("lambdaSummary", () => {
  it("gives range and most common λ chosen per fold (ties to the smaller)", () => {
    const s = lambdaSummary(block());
    expect(s).toMatchObject({
      kind: "inner-cv",
      low: 1,
      high: 100,
      mostCommon: 10,
      mostCommonCount: 2,
      folds: 4,
    });
    const tie = lambdaSummary(
      block({
        lambdas: [
          { repeat: 1, fold: 1, lambda: 5 },
          { repeat: 1, fold: 2, lambda: 2 },
        ],
      }),
    );
    expect(tie).toMatchObject({ mostCommon: 2, mostCommonCount: 1 });
  });
  it("names a fixed λ", () => {
    const s = lambdaSummary(
      block({ lambdaChoice: "fixed", lambdas: [{ repeat: 1, fold: 1, lambda: 2.5 }] }),
    );
    expect(s.text).toBe("Penalty fixed at λ = 2.5.");
  });
  it("refuses a non-positive λ naming its position", () => {
    expect(() =>
      lambdaSummary(
        block({
          lambdas: [
            { repeat: 1, fold: 1, lambda: 1 },
            { repeat: 1, fold: 2, lambda: 0 },
          ],
        }),
      ),
    ).toThrow(/lambdas\[1\]: must be positive/);
    expect(() => lambdaSummary(block({ lambdas: [] }))).toThrow(ChartInputError);
  });
});

describe("weightRows", () => {
  const regions = [
    { region: "a", weight: 0.1, signConsistency: 1 },
    { region: "b", weight: -0.5, signConsistency: 0.9 },
    { region: "c", weight: 0.3, signConsistency: 0.6 },
    { region: "d", weight: -0.05, signConsistency: 0.5 },
  ];
  it("keeps the largest by absolute weight and sorts positive to negative", () => {
    const { rows, hidden } = weightRows(regions, 2);
    expect(rows.map((r) => r.region)).toEqual(["c", "b"]);
    expect(hidden).toBe(2);
    expect(weightRows(regions, null).rows.map((r) => r.region)).toEqual(["c", "a", "d", "b"]);
  });
  it("names a bad sign consistency", () => {
    expect(() => weightRows([{ region: "x", weight: 1, signConsistency: 1.2 }], 30)).toThrow(
      "regions[0].signConsistency: must lie in [0, 1] (got 1.2)",
    );
  });
  it("fades dots whose sign flips", () => {
    expect(consistencyOpacity(1)).toBe(1);
    expect(consistencyOpacity(0.5)).toBeCloseTo(0.2, 12);
    expect(consistencyOpacity(0.2)).toBeCloseTo(0.2, 12);
    expect(consistencyOpacity(0.75)).toBeCloseTo(0.6, 12);
  });
});

describe("label wrapping", () => {
  it("breaks at separators and keeps every line inside the width", () => {
    const name = "left_superior_temporal_gyrus_posterior_division";
    const lines = wrapLabel(name, 110, 11, 3);
    expect(lines.length).toBeGreaterThan(1);
    expect(lines.length).toBeLessThanOrEqual(3);
    for (const l of lines) expect(estimateTextWidth(l, 11)).toBeLessThanOrEqual(110);
    expect(lines[0]).toBe("left_superior_");
  });
  it("ends with an ellipsis when the name does not fit in the lines", () => {
    const lines = wrapLabel("x".repeat(100), 66, 11, 2);
    expect(lines).toEqual(["xxxxxxxxxx", "xxxxxxxxx…"]);
  });
  it("lays rows out without overlap on a phone-wide chart", () => {
    const rows = [
      {
        region: "left_superior_temporal_gyrus_posterior_division",
        weight: 0.2,
        signConsistency: 1,
      },
      { region: "V1", weight: 0.1, signConsistency: 1 },
    ];
    const layout = weightChartLayout(rows, 326, 11);
    expect(layout.labelWidth).toBeCloseTo(326 * 0.4, 9);
    const [a, b] = layout.rows;
    expect(a.lines.length).toBeGreaterThan(1);
    expect(b.top).toBe(a.top + a.height);
    expect(a.height).toBeGreaterThanOrEqual(a.lines.length * 13);
    expect(layout.bottom).toBe(b.top + b.height);
  });
});

describe("plots' data", () => {
  it("shares one padded domain for observed and predicted", () => {
    expect(
      observedPredictedDomain([
        { observed: 0, predicted: 5 },
        { observed: 10, predicted: 4 },
      ]),
    ).toEqual([-0.5, 10.5]);
    expect(() => observedPredictedDomain([{ observed: 1, predicted: Number.NaN }])).toThrow(
      "participants[0].predicted: must be a finite number (got NaN)",
    );
  });
  it("orders the learning curve and turns spread into a band", () => {
    const series = curveSeries(
      [
        { fraction: 1, trainingRows: 80, r: 0.3, r2: 0.1, rSpread: 0.05, r2Spread: null },
        { fraction: 0.2, trainingRows: 16, r: null, r2: -0.2, rSpread: null, r2Spread: 0.1 },
      ],
      "r",
    );
    expect(series).toEqual([{ x: 80, value: 0.3, low: 0.25, high: 0.35 }]);
    expect(
      curveSeries(
        [{ fraction: 0.2, trainingRows: 16, r: 0.1, r2: -0.2, rSpread: null, r2Spread: null }],
        "r2",
      ),
    ).toEqual([{ x: 16, value: -0.2, low: -0.2, high: -0.2 }]);
  });
});
