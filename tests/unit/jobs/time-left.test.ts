/**
 * The time-left estimate of a running fit: none before 5 % of the work,
 * then the measured rate applied to what remains (common practice, no source).
 */
import { describe, expect, it } from "vitest";
import { secondsLeftOf, timeLeftAfterFraction } from "../../../server/jobs/time-left";

describe("secondsLeftOf", () => {
  it("gives no estimate before the first 5 % of the work, however long it has run", () => {
    expect(timeLeftAfterFraction).toBe(0.05);
    expect(secondsLeftOf(0, 10_000)).toBeNull();
    expect(secondsLeftOf(0.01, 10_000)).toBeNull();
    expect(secondsLeftOf(0.049, 60_000)).toBeNull();
  });

  it("gives no estimate when no time has passed or the fraction is not a number", () => {
    expect(secondsLeftOf(0.5, 0)).toBeNull();
    expect(secondsLeftOf(Number.NaN, 1000)).toBeNull();
  });

  it("applies the measured rate to what remains from 5 % on", () => {
    // 5 % in 2 s → 0.4 s per 1 %, 95 % left → 38 s (arithmetic).
    expect(secondsLeftOf(0.05, 2000)).toBe(38);
    // Half done in 30 s → 30 s left (arithmetic).
    expect(secondsLeftOf(0.5, 30_000)).toBe(30);
    // 90 % in 10 s → 1.11… s left, rounded up to 2 (arithmetic).
    expect(secondsLeftOf(0.9, 10_000)).toBe(2);
    expect(secondsLeftOf(1, 10_000)).toBe(0);
  });
});
