import { describe, expect, it } from "vitest";
import {
  hedgesCorrection,
  noncentralityInterval,
  standardizedMeanDifference,
  cohensDOneSample,
} from "../../../server/stats/effect-size";
import { StatsError } from "../../../server/stats/errors";
import { oneSampleTTest } from "../../../server/stats/one-sample-t";
import { studentTTest, welchTTest } from "../../../server/stats/two-sample-t";
import { noncentralTByQuadrature } from "./noncentral-quadrature";
import { sleepGroup1, sleepGroup2 } from "./reference-data";

describe("two-sample t tests on Student's sleep data", () => {
  it("Welch test matches R's t.test(extra ~ group, data = sleep)", () => {
    const w = welchTTest(sleepGroup1, sleepGroup2);
    expect(w.t).toBeCloseTo(-1.8608, 4); // (R documentation example, t.test on sleep)
    expect(w.df).toBeCloseTo(17.776, 3); // (R documentation example)
    expect(w.p).toBeCloseTo(0.07939, 5); // (R documentation example)
    expect(w.ciLow).toBeCloseTo(-3.3654832, 6); // (R t.test output on sleep; value from memory)
    expect(w.ciHigh).toBeCloseTo(0.2054832, 6); // (R t.test output on sleep; value from memory)
    expect(w.mean1).toBeCloseTo(0.75, 10); // (exact arithmetic on the data)
    expect(w.mean2).toBeCloseTo(2.33, 10); // (exact arithmetic on the data)
  });
  it("Student (pooled) test on the same data", () => {
    const s = studentTTest(sleepGroup1, sleepGroup2);
    expect(s.t).toBeCloseTo(-1.8608, 4); // (equal n: pooled and Welch t coincide, exact algebra)
    expect(s.df).toBe(18); // (n1 + n2 − 2)
    expect(s.p).toBeCloseTo(0.07919, 5); // (R t.test(var.equal = TRUE) on sleep; value from memory)
  });
  it("unequal group sizes: Welch and pooled differ, and match hand-computed formulas", () => {
    const a = [1, 2, 3, 4, 5, 6, 7, 8];
    const b = [10, 30];
    // exact algebra: mean a = 4.5, var a = 6; mean b = 20, var b = 200
    const w = welchTTest(a, b);
    const seW = Math.sqrt(6 / 8 + 200 / 2); // = √100.75
    expect(w.se).toBeCloseTo(seW, 12); // (exact algebra)
    expect(w.t).toBeCloseTo(-15.5 / seW, 12); // (exact algebra)
    expect(w.df).toBeCloseTo(100.75 ** 2 / (0.75 ** 2 / 7 + 100 ** 2 / 1), 10); // (Welch–Satterthwaite, exact algebra)
    const s = studentTTest(a, b);
    const sp2 = (7 * 6 + 1 * 200) / 8; // pooled variance
    expect(s.se).toBeCloseTo(Math.sqrt(sp2 * (1 / 8 + 1 / 2)), 12); // (exact algebra)
    expect(s.df).toBe(8);
  });
  it("refuses a group with one value", () => {
    expect(() => welchTTest([1], [2, 3])).toThrow(
      "welchTTest requires at least two values per group",
    );
  });
});

describe("one-sample t test", () => {
  it("paired sleep differences match R's paired t.test", () => {
    const d = sleepGroup1.map((v, i) => v - sleepGroup2[i]);
    const r = oneSampleTTest(d);
    expect(r.t).toBeCloseTo(-4.0621, 4); // (R documentation example, paired t.test on sleep)
    expect(r.df).toBe(9); // (R documentation example)
    expect(r.p).toBeCloseTo(0.002833, 6); // (R documentation example)
    expect(r.ciLow).toBeCloseTo(-2.4598858, 6); // (R paired t.test output; value from memory)
    expect(r.ciHigh).toBeCloseTo(-0.7001142, 6); // (R paired t.test output; value from memory)
  });
  it("refuses constant values", () => {
    expect(() => oneSampleTTest([2, 2, 2])).toThrow(StatsError);
  });
});

describe("standardised mean differences", () => {
  it("Hedges' exact correction factor", () => {
    expect(hedgesCorrection(2)).toBeCloseTo(1 / Math.sqrt(Math.PI), 10); // (exact algebra: Γ(1)/(1·Γ(1/2)))
    const gamma45 = 3.5 * 2.5 * 1.5 * 0.5 * Math.sqrt(Math.PI);
    expect(hedgesCorrection(10)).toBeCloseTo(24 / (Math.sqrt(5) * gamma45), 10); // (exact algebra: Γ(5)/(√5·Γ(4.5)))
    expect(hedgesCorrection(10)).toBeCloseTo(1 - 3 / 39, 3); // (Hedges 1981 approximation 1 − 3/(4ν − 1))
  });
  it("noncentral-t interval endpoints solve their defining equations", () => {
    const { low, high } = noncentralityInterval(2.5, 9, 0.95);
    expect(noncentralTByQuadrature(2.5, 9, low)).toBeCloseTo(0.975, 5); // (definition, independent quadrature)
    expect(noncentralTByQuadrature(2.5, 9, high)).toBeCloseTo(0.025, 5); // (definition, independent quadrature)
  });
  it("one-sample d on the sleep differences is t/√n", () => {
    const d = sleepGroup1.map((v, i) => v - sleepGroup2[i]);
    const e = cohensDOneSample(d);
    expect(e.value).toBeCloseTo(-4.062128 / Math.sqrt(10), 5); // (exact algebra from the t above)
    const t = e.value * Math.sqrt(10);
    expect(noncentralTByQuadrature(t, 9, e.ciLow * Math.sqrt(10))).toBeCloseTo(0.975, 5); // (definition)
  });
  it("two-sample d and g agree with the large-sample normal interval for big groups", () => {
    const a = Array.from({ length: 400 }, (_, i) => Math.sin(i) + 0.5);
    const b = Array.from({ length: 300 }, (_, i) => Math.cos(i * 1.7));
    const { d, g } = standardizedMeanDifference(a, b);
    const v = 1 / 400 + 1 / 300 + (d.value * d.value) / (2 * 700);
    expect(d.ciLow).toBeCloseTo(d.value - 1.96 * Math.sqrt(v), 2); // (Hedges & Olkin 1985 large-sample variance; formula from memory)
    expect(d.ciHigh).toBeCloseTo(d.value + 1.96 * Math.sqrt(v), 2); // (same)
    expect(g.value / d.value).toBeCloseTo(hedgesCorrection(698), 12); // (g = J·d by definition)
  });
});
