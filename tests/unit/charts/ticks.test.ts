import { describe, expect, it } from "vitest";
import {
  formatTicks,
  niceDomain,
  stepDecimals,
  tickCountFor,
  tickValues,
} from "../../../components/charts/ticks";
import { MINUS } from "../../../components/charts/number-format";

function expectCloseList(actual: number[], expected: number[]) {
  expect(actual.length).toBe(expected.length);
  actual.forEach((v, i) => {
    expect(v).toBeCloseTo(expected[i], 12);
  });
}

describe("tickValues", () => {
  it("chooses steps of 1, 2 or 5 times a power of ten", () => {
    // (exact enumeration: for [0, 1] and about 5 ticks the 1-2-5 rule gives step 0.2)
    expectCloseList(tickValues([0, 1], 5), [0, 0.2, 0.4, 0.6, 0.8, 1]);
    // (exact enumeration: for [−3.2, 4.9] and about 5 ticks the step is 2, first multiple ≥ −3.2 is −2)
    expectCloseList(tickValues([-3.2, 4.9], 5), [-2, 0, 2, 4]);
    // (exact enumeration: for [0, 2000] and about 4 ticks the step is 500)
    expectCloseList(tickValues([0, 2000], 4), [0, 500, 1000, 1500, 2000]);
  });

  it("accepts a reversed domain and still returns ascending ticks", () => {
    expectCloseList(tickValues([1, 0], 5), [0, 0.2, 0.4, 0.6, 0.8, 1]); // (exact enumeration, as above)
  });

  it("widens a domain to round ends", () => {
    const [a, b] = niceDomain([0.13, 0.87], 5);
    expect(a).toBeCloseTo(0, 12); // (exact enumeration: step 0.2 → floor(0.13/0.2)·0.2 = 0)
    expect(b).toBeCloseTo(1, 12); // (exact enumeration: ceil(0.87/0.2)·0.2 = 1)
  });
});

describe("stepDecimals and formatTicks", () => {
  it("finds the fewest decimals that write a step exactly", () => {
    expect(stepDecimals(5)).toBe(0); // (exact arithmetic)
    expect(stepDecimals(0.2)).toBe(1); // (exact arithmetic)
    expect(stepDecimals(0.05)).toBe(2); // (exact arithmetic)
    expect(stepDecimals(2.5)).toBe(1); // (exact arithmetic)
    expect(stepDecimals(0.6000000000000001)).toBe(1); // (exact arithmetic: floating-point noise of 0.6)
  });

  it("labels every tick with the decimals of the step and a minus sign", () => {
    expect(formatTicks([0, 0.5, 1])).toEqual(["0.0", "0.5", "1.0"]); // (exact arithmetic)
    expect(formatTicks([-2, 0, 2, 4])).toEqual([`${MINUS}2`, "0", "2", "4"]); // (exact arithmetic)
    expect(formatTicks([0, 500, 1000])).toEqual(["0", "500", "1,000"]); // (exact arithmetic)
    expect(formatTicks([0, 0.2, 0.4], { scale: 100, suffix: "%" })).toEqual(["0%", "20%", "40%"]); // (exact arithmetic)
  });
});

describe("tickCountFor", () => {
  it("fits one tick per spacing, at least two", () => {
    expect(tickCountFor(300, 56)).toBe(5); // (exact arithmetic: floor(300/56) = 5)
    expect(tickCountFor(60, 56)).toBe(2); // (exact arithmetic: floor(60/56) = 1, raised to 2)
    expect(tickCountFor(0)).toBe(2); // (common practice, no source)
  });
});
