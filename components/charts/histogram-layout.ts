/**
 * Layout of a permutation null distribution drawn as a histogram: checks the
 * bin edges and counts, marks the bins that lie wholly as far from zero as
 * the observed statistic or farther (in the direction of the test), and
 * widens the horizontal range so the observed statistic is always in view.
 */
import { ChartInputError, requireFinite } from "./chart-input-error";

export type Tail = "two-sided" | "greater" | "less";

export interface HistogramBar {
  x0: number;
  x1: number;
  count: number;
  /** The whole bin is at least as extreme as the observed statistic. */
  extreme: boolean;
}

/**
 * Checks that `edges` has one more entry than `counts`, that edges are finite
 * and strictly increasing, and that counts are whole numbers ≥ 0. Throws a
 * `ChartInputError` naming the field and position.
 */
export function checkHistogram(edges: readonly number[], counts: readonly number[]): void {
  if (counts.length === 0) throw new ChartInputError("counts", "must hold at least one bin");
  if (edges.length !== counts.length + 1) {
    throw new ChartInputError(
      "edges",
      `must have one more entry than counts (got ${edges.length} edges for ${counts.length} counts)`,
    );
  }
  edges.forEach((e, i) => {
    requireFinite(e, "edges", i);
    if (i > 0 && !(e > edges[i - 1]))
      throw new ChartInputError(
        "edges",
        `must increase strictly (${e} follows ${edges[i - 1]})`,
        i,
      );
  });
  counts.forEach((c, i) => {
    if (!(Number.isInteger(c) && c >= 0))
      throw new ChartInputError("counts", `must be a whole number of at least 0 (got ${c})`, i);
  });
}

/** True when the whole interval [x0, x1] lies at least as far out as `observed` in the test's direction. */
export function isExtremeBin(x0: number, x1: number, observed: number, tail: Tail): boolean {
  if (tail === "greater") return x0 >= observed;
  if (tail === "less") return x1 <= observed;
  const size = Math.abs(observed);
  return x0 >= size || x1 <= -size;
}

/** The bars of the histogram, in the order of the bins. Cost O(bins). */
export function histogramBars(
  edges: readonly number[],
  counts: readonly number[],
  observed: number,
  tail: Tail = "two-sided",
): HistogramBar[] {
  checkHistogram(edges, counts);
  requireFinite(observed, "observed");
  return counts.map((count, i) => ({
    x0: edges[i],
    x1: edges[i + 1],
    count,
    extreme: isExtremeBin(edges[i], edges[i + 1], observed, tail),
  }));
}

/** Horizontal range covering every bin and the observed statistic, padded by 4% of its length on each side. */
export function histogramDomain(edges: readonly number[], observed: number): [number, number] {
  const lo = Math.min(edges[0], observed);
  const hi = Math.max(edges[edges.length - 1], observed);
  const pad = (hi - lo) * 0.04;
  return [lo - pad, hi + pad];
}

/** Sum of the counts (the number of rearrangements drawn). */
export function totalCount(counts: readonly number[]): number {
  return counts.reduce((s, c) => s + c, 0);
}
