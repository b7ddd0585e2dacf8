import { describe, expect, it } from "vitest";
import {
  checkHistogram,
  histogramBars,
  histogramDomain,
  isExtremeBin,
  totalCount,
} from "../../../components/charts/histogram-layout";

const edges = [-3, -2, -1, 0, 1, 2, 3];
const counts = [1, 6, 18, 19, 5, 1];

describe("histogram layout", () => {
  it("pairs each count with its bin", () => {
    const bars = histogramBars(edges, counts, 2.2);
    expect(bars.map((b) => [b.x0, b.x1, b.count])).toEqual([
      [-3, -2, 1],
      [-2, -1, 6],
      [-1, 0, 18],
      [0, 1, 19],
      [1, 2, 5],
      [2, 3, 1],
    ]); // (exact enumeration)
    expect(totalCount(counts)).toBe(50); // (exact arithmetic)
  });

  it("marks bins wholly beyond |observed| on both sides for a two-sided test", () => {
    const extreme = histogramBars(edges, counts, 1.5).map((b) => b.extreme);
    // |obs| = 1.5: bins [2, 3] and [−3, −2] lie wholly beyond; [1, 2] and [−2, −1] straddle it
    expect(extreme).toEqual([true, false, false, false, false, true]); // (exact enumeration)
    expect(histogramBars(edges, counts, -1).map((b) => b.extreme)).toEqual([
      true,
      true,
      false,
      false,
      true,
      true,
    ]); // (exact enumeration: |obs| = 1, edges touching count)
  });

  it("marks one side for one-sided tests", () => {
    expect(histogramBars(edges, counts, 1, "greater").map((b) => b.extreme)).toEqual([
      false,
      false,
      false,
      false,
      true,
      true,
    ]); // (exact enumeration: x0 ≥ 1)
    expect(histogramBars(edges, counts, -1, "less").map((b) => b.extreme)).toEqual([
      true,
      true,
      false,
      false,
      false,
      false,
    ]); // (exact enumeration: x1 ≤ −1)
    expect(isExtremeBin(0, 1, 0, "two-sided")).toBe(true); // (exact enumeration: every value is at least as far out as 0)
  });

  it("keeps an observed statistic beyond the bins in view", () => {
    const [lo, hi] = histogramDomain(edges, 5);
    expect(lo).toBeCloseTo(-3 - 0.32, 12); // (exact arithmetic: range [−3, 5], pad 0.04·8)
    expect(hi).toBeCloseTo(5 + 0.32, 12); // (exact arithmetic)
    expect(histogramDomain(edges, 0)).toEqual([-3.24, 3.24]); // (exact arithmetic: range [−3, 3], pad 0.04·6)
  });

  it("names the field and position of bad input", () => {
    expect(() => checkHistogram([0, 1, 2], [1, 2, 3])).toThrow(
      "edges: must have one more entry than counts (got 3 edges for 3 counts)",
    ); // (input contract)
    expect(() => checkHistogram([0, 1, 1], [1, 2])).toThrow(
      "edges[2]: must increase strictly (1 follows 1)",
    ); // (input contract)
    expect(() => checkHistogram([0, Number.NaN, 2], [1, 2])).toThrow(
      "edges[1]: must be a finite number (got NaN)",
    ); // (input contract)
    expect(() => checkHistogram([0, 1, 2], [1, -2])).toThrow(
      "counts[1]: must be a whole number of at least 0 (got -2)",
    ); // (input contract)
    expect(() => checkHistogram([0], [])).toThrow("counts: must hold at least one bin"); // (input contract)
    expect(() => histogramBars(edges, counts, Number.POSITIVE_INFINITY)).toThrow(
      "observed: must be a finite number",
    ); // (input contract)
  });
});
