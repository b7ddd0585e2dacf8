import { describe, expect, it } from "vitest";
import {
  formatCount,
  formatFixed,
  formatInterval,
  formatP,
  formatPercent,
  formatValue,
  isMissingNumber,
  MINUS,
} from "../../../components/charts/number-format";

describe("formatFixed", () => {
  it("rounds to the asked decimals, groups thousands and uses the minus sign", () => {
    expect(formatFixed(-0.5, 2)).toBe(`${MINUS}0.50`); // (exact arithmetic)
    expect(formatFixed(12345.6, 0)).toBe("12,346"); // (exact arithmetic: 12345.6 rounds to 12346)
    expect(formatFixed(1234567.125, 3)).toBe("1,234,567.125"); // (exact arithmetic; 1234567.125 is a binary fraction)
    expect(formatFixed(999.5, 0)).toBe("1,000"); // (exact arithmetic: 999.5 is exact in binary, rounds half up)
  });

  it("never prints a negative zero", () => {
    expect(formatFixed(-0.0004, 2)).toBe("0.00"); // (exact arithmetic: |−0.0004| < 0.005)
    expect(formatFixed(-0, 0)).toBe("0"); // (exact arithmetic)
  });

  it("prints missing values as n/a", () => {
    expect(formatFixed(null, 2)).toBe("n/a"); // (BIDS participants-file convention for missing)
    expect(formatFixed(Number.NaN, 2)).toBe("n/a"); // (BIDS participants-file convention for missing)
    expect(isMissingNumber(Number.POSITIVE_INFINITY)).toBe(true); // (common practice, no source)
    expect(isMissingNumber(0)).toBe(false); // (common practice, no source)
  });
});

describe("formatValue", () => {
  it("keeps three significant digits and drops trailing zeros", () => {
    expect(formatValue(0.42)).toBe("0.42"); // (exact arithmetic)
    expect(formatValue(0.4213)).toBe("0.421"); // (exact arithmetic: 3 significant digits)
    expect(formatValue(31)).toBe("31"); // (exact arithmetic)
    expect(formatValue(31.25)).toBe("31.3"); // (exact arithmetic: 31.25 is exact in binary; toPrecision rounds half up)
    expect(formatValue(-2.5)).toBe(`${MINUS}2.5`); // (exact arithmetic)
    expect(formatValue(0.00012)).toBe("0.00012"); // (exact arithmetic)
  });

  it("rounds large values to whole numbers with grouping, including 999.9 → 1,000", () => {
    expect(formatValue(1500)).toBe("1,500"); // (exact arithmetic)
    expect(formatValue(999.9)).toBe("1,000"); // (exact arithmetic: 3 significant digits of 999.9 is 1.00 × 10³)
    expect(formatValue(12345.6, 5)).toBe("12,346"); // (exact arithmetic: 5 significant digits)
  });

  it("writes tiny values with powers of ten", () => {
    expect(formatValue(0.00001234)).toBe("1.23×10⁻⁵"); // (exact arithmetic: 1.234 × 10⁻⁵ to 3 significant digits)
    expect(formatValue(-2e-7)).toBe(`${MINUS}2×10⁻⁷`); // (exact arithmetic)
  });

  it("prints zero and missing", () => {
    expect(formatValue(0)).toBe("0"); // (exact arithmetic)
    expect(formatValue(undefined)).toBe("n/a"); // (BIDS participants-file convention for missing)
  });
});

describe("formatInterval", () => {
  it("prints both ends at the decimals of the larger end's three significant digits", () => {
    // common practice, no source: an interval's ends share one number of decimals
    expect(formatInterval(1.39, 3.3)).toBe("1.39 to 3.30"); // (exact arithmetic)
    expect(formatInterval(0.638, 2.28)).toBe("0.64 to 2.28"); // (exact arithmetic)
    expect(formatInterval(-0.151, 0.193)).toBe(`${MINUS}0.151 to 0.193`); // (exact arithmetic)
    expect(formatInterval(-0.0004, 0.0123)).toBe(`${MINUS}0.0004 to 0.0123`); // (exact arithmetic)
    expect(formatInterval(9.996, 12.5)).toBe("10.0 to 12.5"); // (exact arithmetic: 9.996 rounds up)
    expect(formatInterval(999.6, 1200)).toBe("1,000 to 1,200"); // (exact arithmetic)
    expect(formatInterval(-0.004, 0)).toBe(`${MINUS}0.00400 to 0.00000`); // (exact arithmetic)
    expect(formatInterval(2e-6, 3e-5)).toBe("2×10⁻⁶ to 3×10⁻⁵"); // (exact arithmetic)
    expect(formatInterval(null, 1)).toBe("n/a");
    expect(formatInterval(1, 2, 3, ", ")).toBe("1.00, 2.00"); // (exact arithmetic)
  });
});

describe("formatP, formatCount, formatPercent", () => {
  it("reports p below 0.001 as an inequality and others with three decimals", () => {
    expect(formatP(0.0004)).toBe("p < 0.001"); // (common practice, no source)
    expect(formatP(0.001)).toBe("p = 0.001"); // (common practice, no source)
    expect(formatP(0.0342)).toBe("p = 0.034"); // (exact arithmetic: 0.0342 to 3 decimals)
    expect(formatP(1)).toBe("p = 1.000"); // (exact arithmetic)
  });

  it("rejects p outside [0, 1]", () => {
    expect(() => formatP(1.2)).toThrow(/\[0, 1\]/); // (definition of a probability)
    expect(() => formatP(Number.NaN)).toThrow(RangeError); // (definition of a probability)
  });

  it("groups counts and prints fractions as percentages", () => {
    expect(formatCount(2000)).toBe("2,000"); // (exact arithmetic)
    expect(formatCount(7)).toBe("7"); // (exact arithmetic)
    expect(formatPercent(0.8)).toBe("80%"); // (exact arithmetic)
    expect(formatPercent(0.805, 1)).toBe("80.5%"); // (exact arithmetic)
  });
});
