/**
 * The median by selection (server/stats/descriptive.ts) against its
 * definition: the middle order statistic, or the mean of the two middle
 * ones for an even count, read off a sorted copy (the textbook definition,
 * common practice, no source). Exact equality: selection and sorting pick
 * the same values.
 */
import { describe, expect, it } from "vitest";
import { median, medianAbsoluteDeviation } from "../../../server/stats/descriptive";
import { createRng } from "../../../server/stats/rng";

function sortedMedian(x: readonly number[]): number {
  const s = Float64Array.from(x).sort();
  const h = s.length >> 1;
  return s.length % 2 === 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
}

describe("median", () => {
  it("equals the middle of the sorted values, odd and even counts, with ties", () => {
    const rng = createRng(11);
    for (let trial = 0; trial < 400; trial++) {
      const n = 1 + (trial % 37);
      // Every third sample draws from few distinct values, so ties are common.
      const x = Array.from({ length: n }, () =>
        trial % 3 === 0 ? Math.floor(rng.next() * 4) : rng.next() * 10 - 5,
      );
      expect(median(x), `trial ${trial}`).toBe(sortedMedian(x));
    }
  });

  it("hand cases: [3, 1, 2] → 2; [4, 1, 3, 2] → 2.5; one value; the input is not reordered", () => {
    expect(median([3, 1, 2])).toBe(2);
    const x = [4, 1, 3, 2];
    expect(median(x)).toBe(2.5);
    expect(x).toEqual([4, 1, 3, 2]);
    expect(median([7])).toBe(7);
    expect(() => median([])).toThrow(/at least one value/);
  });

  it("keeps the sorted reading when a value is NaN (sorted last)", () => {
    expect(median([Number.NaN, 1, 2])).toBe(2);
  });

  it("MAD of 1..9 is 2 (median 5, absolute deviations 4,3,2,1,0,1,2,3,4)", () => {
    expect(medianAbsoluteDeviation([1, 2, 3, 4, 5, 6, 7, 8, 9])).toBe(2);
  });
});
