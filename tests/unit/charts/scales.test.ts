import { describe, expect, it } from "vitest";
import {
  chartViewport,
  estimateTextWidth,
  leftMarginFor,
  paddedExtent,
  plotArea,
  truncateLabel,
} from "../../../components/charts/scales";
import { chart } from "../../../components/theme";

describe("paddedExtent", () => {
  it("pads the range of the finite values by a fraction of its length", () => {
    const [lo, hi] = paddedExtent([2, 4, null, Number.NaN, 12], { pad: 0.1 });
    expect(lo).toBeCloseTo(1, 12); // (exact arithmetic: 2 − 0.1·10)
    expect(hi).toBeCloseTo(13, 12); // (exact arithmetic: 12 + 0.1·10)
  });

  it("includes the required values such as zero", () => {
    const [lo, hi] = paddedExtent([0.3, 0.9], { include: [0], pad: 0 });
    expect(lo).toBe(0); // (exact arithmetic)
    expect(hi).toBe(0.9); // (exact arithmetic)
  });

  it("opens a single value and falls back to [0, 1] for nothing", () => {
    expect(paddedExtent([5])).toEqual([4.5, 5.5]); // (exact arithmetic: 5 ± 5/10)
    expect(paddedExtent([0])).toEqual([-1, 1]); // (exact arithmetic: 0 ± 1)
    expect(paddedExtent([null, undefined])).toEqual([0, 1]); // (common practice, no source)
  });
});

describe("chartViewport and plotArea", () => {
  it("uses one unit per pixel of the measured width and the aspect for the height", () => {
    expect(chartViewport(390, 1.5)).toEqual({ width: 390, height: 260 }); // (exact arithmetic: 390/1.5)
  });

  it("clamps the width and falls back to the default before measuring", () => {
    expect(chartViewport(null, 2).width).toBe(chart.defaultWidth); // (common practice, no source)
    expect(chartViewport(100, 2).width).toBe(chart.minWidth); // (common practice, no source)
    expect(chartViewport(5000, 2).width).toBe(chart.maxWidth); // (common practice, no source)
    expect(chartViewport(400, 2, 900)).toEqual({ width: 400, height: 900 }); // (exact arithmetic: fixed height kept)
  });

  it("computes the inner rectangle and refuses margins that leave no room", () => {
    expect(
      plotArea({ width: 300, height: 200 }, { top: 10, right: 20, bottom: 30, left: 40 }),
    ).toEqual({
      left: 40,
      top: 10,
      right: 280,
      bottom: 170,
      width: 240,
      height: 160,
    }); // (exact arithmetic)
    expect(() =>
      plotArea({ width: 50, height: 200 }, { top: 0, right: 30, bottom: 0, left: 30 }),
    ).toThrow(/no room/); // (exact arithmetic: 50 − 60 < 0)
  });
});

describe("text width estimates", () => {
  it("estimates 0.6 em per character and shortens long labels with an ellipsis", () => {
    expect(estimateTextWidth("abcde", 10)).toBe(30); // (exact arithmetic: 5 · 0.6 · 10)
    expect(truncateLabel("short", 100, 10)).toBe("short"); // (exact arithmetic: 30 ≤ 100)
    const cut = truncateLabel("left dorsolateral prefrontal cortex", 60, 10);
    expect(cut).toBe("left dors…"); // (exact arithmetic: floor(60/6) − 1 = 9 characters and an ellipsis)
    expect(estimateTextWidth(cut, 10)).toBeLessThanOrEqual(60); // (exact arithmetic)
  });

  it("sizes the left margin from the widest tick label", () => {
    expect(leftMarginFor(["0.5", "−10.5"], 10, 12)).toBe(56); // (exact arithmetic: 5·6 + 12 + 14)
  });
});
