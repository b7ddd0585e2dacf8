import { describe, expect, it } from "vitest";
import {
  compareCells,
  formatCell,
  missingToUndefined,
} from "../../../components/tables/cell-values";
import {
  matchesNumericFilter,
  matchesTextFilter,
  parseNumericFilter,
} from "../../../components/tables/column-filter";
import { MINUS } from "../../../components/charts/number-format";

describe("numeric column filters", () => {
  it("reads comparisons, ranges, plain numbers and n/a", () => {
    expect(parseNumericFilter("> 0.5")).toEqual({ kind: "compare", op: ">", value: 0.5 }); // (filter language)
    expect(parseNumericFilter("<=-2")).toEqual({ kind: "compare", op: "<=", value: -2 }); // (filter language)
    expect(parseNumericFilter(`>=${MINUS}1.5`)).toEqual({ kind: "compare", op: ">=", value: -1.5 }); // (filter language: typographic minus accepted)
    expect(parseNumericFilter("3")).toEqual({ kind: "compare", op: "=", value: 3 }); // (filter language)
    expect(parseNumericFilter("3..1")).toEqual({ kind: "between", low: 1, high: 3 }); // (filter language: ends put in order)
    expect(parseNumericFilter("20 to 40")).toEqual({ kind: "between", low: 20, high: 40 }); // (filter language)
    expect(parseNumericFilter("1,500")).toEqual({ kind: "compare", op: "=", value: 1500 }); // (filter language: thousands commas ignored)
    expect(parseNumericFilter("N/A")).toEqual({ kind: "missing" }); // (BIDS participants-file convention for missing)
    expect(parseNumericFilter("  ")).toBeNull(); // (filter language: empty is no filter)
  });

  it("explains text it cannot read", () => {
    expect(() => parseNumericFilter("big")).toThrow(
      '"big" is not a number filter; write for example > 0.5, <= 2, 1..3, 4 or n/a',
    ); // (input contract)
  });

  it("keeps the matching values; missing values pass only n/a", () => {
    const f = parseNumericFilter("1..3")!;
    expect([0.5, 1, 2, 3, 3.5].map((v) => matchesNumericFilter(v, f))).toEqual([
      false,
      true,
      true,
      true,
      false,
    ]); // (exact enumeration: inclusive range)
    expect(matchesNumericFilter(null, f)).toBe(false); // (filter language)
    expect(matchesNumericFilter(Number.NaN, { kind: "missing" })).toBe(true); // (filter language)
    expect(matchesNumericFilter(2, { kind: "missing" })).toBe(false); // (filter language)
    expect(matchesNumericFilter(0.5, parseNumericFilter(">0.5")!)).toBe(false); // (exact arithmetic: strict)
    expect(matchesNumericFilter(0.5, parseNumericFilter(">=0.5")!)).toBe(true); // (exact arithmetic)
  });

  it("matches text case-insensitively", () => {
    expect(matchesTextFilter("Patient", "pati")).toBe(true); // (filter language)
    expect(matchesTextFilter("control", "pati")).toBe(false); // (filter language)
    expect(matchesTextFilter(null, "n/a")).toBe(true); // (BIDS participants-file convention for missing)
    expect(matchesTextFilter(null, "x")).toBe(false); // (filter language)
    expect(matchesTextFilter("anything", "")).toBe(true); // (filter language: empty is no filter)
  });
});

describe("cell values", () => {
  it("turns null and NaN into undefined so the table sorts them last", () => {
    expect(missingToUndefined(null)).toBeUndefined(); // (product convention)
    expect(missingToUndefined(Number.NaN)).toBeUndefined(); // (product convention)
    expect(missingToUndefined(0)).toBe(0); // (product convention)
    expect(missingToUndefined("")).toBe(""); // (product convention)
  });

  it("sorts ids in natural order and numbers by value", () => {
    expect(["sub-10", "sub-2", "sub-1"].sort(compareCells)).toEqual(["sub-1", "sub-2", "sub-10"]); // (exact enumeration: natural order)
    expect([10, -2, 3].sort(compareCells)).toEqual([-2, 3, 10]); // (exact enumeration)
  });

  it("prints cells", () => {
    expect(formatCell(0.123456)).toBe("0.123"); // (exact arithmetic: 3 significant digits)
    expect(formatCell(-0.5, { decimals: 2 })).toBe(`${MINUS}0.50`); // (exact arithmetic)
    expect(formatCell(undefined)).toBe("n/a"); // (BIDS participants-file convention for missing)
    expect(formatCell(true)).toBe("yes"); // (product convention)
    expect(formatCell("patient")).toBe("patient"); // (product convention)
  });
});
