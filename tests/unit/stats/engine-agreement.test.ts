/**
 * The engine against an independent implementation on seeded random data:
 * scipy 1.17.1 (general-purpose statistics library), values in
 * engine-agreement.json made by scripts/reference/engine-agreement.py.
 * p-values agree to 1e-10 relative; interval bounds to 1e-10 of the
 * interval's width.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { benjaminiHochberg } from "../../../server/stats/corrections";
import { pearsonCorrelation } from "../../../server/stats/correlation";
import { oneSampleTTest } from "../../../server/stats/one-sample-t";
import { welchTTest } from "../../../server/stats/two-sample-t";

interface Interval {
  p: number;
  ciLow: number;
  ciHigh: number;
}
const fixture = JSON.parse(
  readFileSync(new URL("./engine-agreement.json", import.meta.url), "utf8"),
) as {
  oneSample: ({ x: number[] } & Interval)[];
  welch: ({ x1: number[]; x2: number[] } & Interval)[];
  pearson: ({ x: number[]; y: number[] } & Interval)[];
  bh: { p: number[]; adjusted: number[] }[];
};

function expectAgreement(
  got: { p: number; ciLow: number | null; ciHigh: number | null },
  want: Interval,
  what: string,
): void {
  const pError = Math.abs(got.p - want.p) / want.p;
  expect(pError <= 1e-10, `${what}: p ${got.p} against ${want.p}`).toBe(true);
  const width = want.ciHigh - want.ciLow;
  for (const [g, w] of [
    [got.ciLow, want.ciLow],
    [got.ciHigh, want.ciHigh],
  ] as const) {
    expect(g !== null && Math.abs(g - w) <= 1e-10 * width, `${what}: bound ${g} against ${w}`).toBe(
      true,
    );
  }
}

describe("agreement with scipy 1.17.1 on seeded random data sets", () => {
  it("one-sample t test: p and 95 % interval", () => {
    expect(fixture.oneSample.length).toBeGreaterThan(100);
    fixture.oneSample.forEach((c, i) => {
      expectAgreement(oneSampleTTest(c.x), c, `one-sample case ${i}`);
    });
  });

  it("Welch's t test: p and 95 % interval", () => {
    expect(fixture.welch.length).toBeGreaterThan(100);
    fixture.welch.forEach((c, i) => {
      expectAgreement(welchTTest(c.x1, c.x2), c, `Welch case ${i}`);
    });
  });

  it("Pearson's r: t-test p and Fisher z interval", () => {
    expect(fixture.pearson.length).toBeGreaterThan(100);
    fixture.pearson.forEach((c, i) => {
      expectAgreement(pearsonCorrelation(c.x, c.y), c, `Pearson case ${i}`);
    });
  });

  it("Benjamini–Hochberg adjusted p", () => {
    expect(fixture.bh.length).toBeGreaterThan(50);
    fixture.bh.forEach((c, i) => {
      const got = benjaminiHochberg(c.p);
      c.adjusted.forEach((w, j) => {
        expect(
          Math.abs(got[j] - w) <= 1e-10 * w,
          `BH case ${i}, p ${j}: ${got[j]} against ${w}`,
        ).toBe(true);
      });
    });
  });
});
