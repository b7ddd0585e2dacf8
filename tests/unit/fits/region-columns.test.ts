import { describe, expect, it } from "vitest";
import {
  availableOptionalColumns,
  defaultOptionalColumns,
  flagTotal,
  intervalText,
  keyRegionColumns,
  optionalRegionColumns,
} from "../../../components/fit/region-columns";
import type { RegionResult } from "../../../contract/spec";

const base: RegionResult = {
  region: "left_anterior_insula",
  n: 30,
  estimate: 0.25,
  se: 0.08,
  statistic: 3.11,
  df: 29,
  p: 0.004,
  pAdjusted: 0.027,
  ciLow: 0.0858,
  ciHigh: 0.415,
};

describe("the region table's columns", () => {
  it("keeps the six key columns apart from the chooser's", () => {
    expect(keyRegionColumns).toEqual(["region", "estimate", "interval", "p", "pAdjusted", "flags"]);
    for (const c of optionalRegionColumns) expect(keyRegionColumns).not.toContain(c.id);
  });

  it("offers only the columns some region has a value for", () => {
    expect(availableOptionalColumns([base]).map((c) => c.id)).toEqual([
      "n",
      "statistic",
      "df",
      "se",
    ]);
    const association = { ...base, r: 0.4, rCiLow: 0.18, rCiHigh: 0.59 };
    expect(availableOptionalColumns([base, association]).map((c) => c.id)).toEqual([
      "n",
      "statistic",
      "df",
      "se",
      "r",
      "rInterval",
    ]);
    // a rank test has no df or standard error
    const rank = { ...base, se: null, df: null };
    expect(availableOptionalColumns([rank]).map((c) => c.id)).toEqual(["n", "statistic"]);
  });

  it("reads effect sizes at the top level or under extras, and I² as a percentage", () => {
    const withExtras = {
      ...base,
      extras: { cohensD: { value: 0.57, ciLow: 0.18, ciHigh: 0.95 } },
      tau2: 0.012,
      i2: 0.314,
    };
    const byId = Object.fromEntries(optionalRegionColumns.map((c) => [c.id, c.read(withExtras)]));
    expect(byId.cohensD).toBe(0.57);
    expect(byId.cohensDInterval).toBe("0.180 to 0.950"); // both ends at the larger end's three significant digits
    expect(byId.hedgesG).toBeNull();
    expect(byId.tau2).toBe(0.012);
    expect(byId.i2).toBeCloseTo(31.4);
  });

  it("prints an interval as 'low to high', n/a when an end is missing", () => {
    expect(intervalText(-0.243, 1.47)).toBe("−0.24 to 1.47"); // the decimals of 1.47, the larger end
    expect(intervalText(null, 1.47)).toBe("n/a");
  });

  it("shows no extra column on a phone and N, statistic and df on a wide screen until the person chooses", () => {
    expect(defaultOptionalColumns(false)).toEqual([]);
    expect(defaultOptionalColumns(true)).toEqual(["n", "statistic", "df"]);
  });

  it("adds up a region's flags", () => {
    expect(flagTotal({ ...base, flagged: { outlier: 1, leverage: 3, influence: 5 } })).toBe(9);
    expect(flagTotal(base)).toBe(0);
  });
});
