import { describe, expect, it } from "vitest";
import { StatsError } from "../../../server/stats/errors";
import { intraclassCorrelations } from "../../../server/stats/icc";
import { SHROUT_FLEISS } from "./reference-data";

const stepUp = (r: number, k: number) => (k * r) / (1 + (k - 1) * r);

describe("intraclassCorrelations on the Shrout & Fleiss example", () => {
  const r = intraclassCorrelations(SHROUT_FLEISS);

  it("reproduces the ANOVA mean squares", () => {
    expect(r.n).toBe(6);
    expect(r.sessions).toBe(4);
    expect(r.meanSquares.between).toBeCloseTo(11.24, 2); // (Shrout & Fleiss 1979, Table 3: BMS = 11.24)
    expect(r.meanSquares.within).toBeCloseTo(6.26, 2); // (Shrout & Fleiss 1979, Table 3: WMS = 6.26)
    expect(r.meanSquares.sessions).toBeCloseTo(32.49, 2); // (Shrout & Fleiss 1979, Table 3: JMS = 32.49)
    expect(r.meanSquares.error).toBeCloseTo(1.02, 2); // (Shrout & Fleiss 1979, Table 3: EMS = 1.02)
  });

  it("reproduces the six published coefficients", () => {
    expect(r.icc11.value).toBeCloseTo(0.17, 2); // (Shrout & Fleiss 1979, Table 4: ICC(1,1) = .17)
    expect(r.icc21.value).toBeCloseTo(0.29, 2); // (Shrout & Fleiss 1979, Table 4: ICC(2,1) = .29)
    expect(r.icc31.value).toBeCloseTo(0.71, 2); // (Shrout & Fleiss 1979, Table 4: ICC(3,1) = .71)
    expect(r.icc1k.value).toBeCloseTo(0.44, 2); // (Shrout & Fleiss 1979, Table 4: ICC(1,4) = .44)
    expect(r.icc2k.value).toBeCloseTo(0.62, 2); // (Shrout & Fleiss 1979, Table 4: ICC(2,4) = .62)
    expect(r.icc3k.value).toBeCloseTo(0.91, 2); // (Shrout & Fleiss 1979, Table 4: ICC(3,4) = .91)
  });

  it("computes the F tests", () => {
    // (exact algebra: F = BMS/WMS on (n−1, n(k−1)) and BMS/EMS on (n−1, (n−1)(k−1)), Shrout & Fleiss 1979)
    expect(r.icc11.f).toBeCloseTo(r.meanSquares.between / r.meanSquares.within, 14);
    expect([r.icc11.df1, r.icc11.df2]).toEqual([5, 18]);
    expect(r.icc31.f).toBeCloseTo(r.meanSquares.between / r.meanSquares.error, 14);
    expect([r.icc21.df1, r.icc21.df2]).toEqual([5, 15]);
    expect(r.icc11.f).toBeCloseTo(1.79, 2); // (value from memory: documented F = 1.8 in the psych package's example output)
    expect(r.icc31.f).toBeCloseTo(11.03, 2); // (value from memory: documented F = 11)
    expect(r.icc11.p).toBeCloseTo(0.16477, 5); // (value from memory: documented p = 0.16477)
    expect(r.icc31.p).toBeCloseTo(0.00013, 5); // (value from memory: documented p = 0.00013)
    expect(r.icc1k.p).toBe(r.icc11.p);
    expect(r.icc2k.p).toBe(r.icc31.p);
  });

  it("reproduces the documented confidence intervals", () => {
    // (value from memory: the psych package's ICC example on these data prints these bounds, 2–3 decimals)
    expect(r.icc11.ciLow).toBeCloseTo(-0.133, 3);
    expect(r.icc11.ciHigh).toBeCloseTo(0.72, 2);
    expect(r.icc21.ciLow).toBeCloseTo(0.019, 3);
    expect(r.icc21.ciHigh).toBeCloseTo(0.76, 2);
    expect(r.icc31.ciLow).toBeCloseTo(0.342, 3);
    expect(r.icc31.ciHigh).toBeCloseTo(0.95, 2);
    expect(r.icc1k.ciLow).toBeCloseTo(-0.884, 3);
    expect(r.icc1k.ciHigh).toBeCloseTo(0.91, 2);
    expect(r.icc2k.ciLow).toBeCloseTo(0.071, 3);
    expect(r.icc2k.ciHigh).toBeCloseTo(0.93, 2);
    expect(r.icc3k.ciLow).toBeCloseTo(0.676, 3);
    expect(r.icc3k.ciHigh).toBeCloseTo(0.99, 2);
  });

  it("relates the k-session forms to the single-session forms by Spearman–Brown", () => {
    // (exact algebra: ICC(i,k) = k·ICC(i,1) / (1 + (k−1)·ICC(i,1)) for i = 1, 2, 3; Shrout & Fleiss 1979)
    expect(r.icc1k.value).toBeCloseTo(stepUp(r.icc11.value, 4), 13);
    expect(r.icc2k.value).toBeCloseTo(stepUp(r.icc21.value, 4), 13);
    expect(r.icc3k.value).toBeCloseTo(stepUp(r.icc31.value, 4), 13);
    // (exact algebra: 1 − 1/F equals the Spearman–Brown step-up of (F − 1)/(F + k − 1))
    expect(r.icc1k.ciLow).toBeCloseTo(stepUp(r.icc11.ciLow, 4), 12);
    expect(r.icc3k.ciHigh).toBeCloseTo(stepUp(r.icc31.ciHigh, 4), 12);
  });

  it("narrows the interval at a lower confidence level", () => {
    const r90 = intraclassCorrelations(SHROUT_FLEISS, { level: 0.9 });
    expect(r90.icc31.value).toBe(r.icc31.value);
    expect(r90.icc31.ciLow).toBeGreaterThan(r.icc31.ciLow);
    expect(r90.icc31.ciHigh).toBeLessThan(r.icc31.ciHigh);
  });
});

describe("intraclassCorrelations with a systematic session shift", () => {
  it("keeps consistency but lowers absolute agreement", () => {
    // Session 2 = session 1 + 5 plus small disagreement: ICC(3,1) stays high, ICC(2,1) and ICC(1,1) drop.
    const base = [1, 4, 2, 8, 5, 7, 3, 6];
    const wobble = [0.1, -0.2, 0.15, 0, -0.1, 0.2, -0.05, -0.1];
    const matrix = base.map((b, i) => [b, b + 5 + wobble[i]]);
    const r = intraclassCorrelations(matrix);
    expect(r.icc31.value).toBeGreaterThan(0.99); // (exact algebra: a constant shift does not enter EMS)
    expect(r.icc21.value).toBeLessThan(r.icc31.value);
    expect(r.icc11.value).toBeLessThan(r.icc21.value);
  });
});

describe("intraclassCorrelations when sessions disagree more than participants differ", () => {
  it("keeps every interval ordered, with an unbounded lower limit for the k-session forms", () => {
    const r = intraclassCorrelations([
      [0.1, 0.9, 0.4],
      [0.9, 0.1, 0.6],
      [0.5, 0.45, 0.2],
      [0.3, 0.8, 0.1],
    ]);
    for (const icc of [r.icc11, r.icc21, r.icc31, r.icc1k, r.icc2k, r.icc3k]) {
      expect(icc.ciLow).toBeLessThanOrEqual(icc.value);
      expect(icc.value).toBeLessThanOrEqual(icc.ciHigh);
    }
    // (exact algebra: the one-session lower bound is below −1/(k−1) = −0.5, where the Spearman–Brown step-up has its pole)
    expect(r.icc21.ciLow).toBeLessThan(-0.5);
    expect(r.icc2k.ciLow).toBe(Number.NEGATIVE_INFINITY);
  });
});

describe("intraclassCorrelations preconditions", () => {
  it("needs two sessions and two participants", () => {
    expect(() => intraclassCorrelations([[1], [2], [3]])).toThrow(
      "intraclassCorrelations requires at least two sessions (got 1)",
    );
    expect(() => intraclassCorrelations([[1, 2]])).toThrow(
      "intraclassCorrelations requires at least two participants (got 1)",
    );
  });

  it("names the missing cell", () => {
    expect(() =>
      intraclassCorrelations([
        [1, 2],
        [3, Number.NaN],
        [5, 6],
      ]),
    ).toThrow("intraclassCorrelations requires a complete matrix (row 2, session 2 has NaN)");
    expect(() => intraclassCorrelations([[1, 2], [3], [5, 6]])).toThrow("(row 2 has 1)");
  });

  it("refuses a matrix without residual variation", () => {
    expect(() =>
      intraclassCorrelations([
        [1, 1],
        [2, 2],
        [3, 3],
      ]),
    ).toThrow(StatsError);
  });
});
