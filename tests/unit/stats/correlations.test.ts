import { sampleCorrelation } from "simple-statistics";
import { describe, expect, it } from "vitest";
import {
  compareIndependentCorrelations,
  correlationWithAndWithout,
  leaveOneOutCorrelations,
} from "../../../server/stats/compare-correlations";
import { correlationP, pearsonCorrelation } from "../../../server/stats/correlation";
import { idealFourths } from "../../../server/stats/descriptive";
import { normalCdf, normalQuantile } from "../../../server/stats/distributions";
import { spearmanDistribution } from "../../../server/stats/exact-rank-distributions";
import { kendallTauB } from "../../../server/stats/kendall";
import {
  percentageBendCorrelation,
  projectionOutliers,
  skippedCorrelation,
} from "../../../server/stats/robust-correlation";
import { SPEARMAN_EXACT_MAX_N, spearmanCorrelation } from "../../../server/stats/spearman";
import { anscombeX1, anscombeY1, permutations } from "./reference-data";

describe("Pearson correlation", () => {
  it("Anscombe set I: r = 0.816", () => {
    const c = pearsonCorrelation(anscombeX1, anscombeY1);
    expect(c.r).toBeCloseTo(0.816, 3); // (Anscombe 1973, Table 1)
    expect(c.t).toBeCloseTo(4.2415, 4); // (R cor.test on Anscombe set I; value from memory, equals the slope t)
    expect(c.p).toBeCloseTo(0.00217, 5); // (R cor.test on Anscombe set I; value from memory)
    const half = normalQuantile(0.975) / Math.sqrt(11 - 3);
    expect(c.ciLow).toBeCloseTo(Math.tanh(Math.atanh(c.r) - half), 12); // (Fisher 1921 z interval, Zar 2010 eq. 19.22, exact algebra)
    expect(c.ciHigh).toBeCloseTo(Math.tanh(Math.atanh(c.r) + half), 12);
  });
});

describe("Spearman correlation: exact for n ≤ 9 without ties, an Edgeworth series or t otherwise", () => {
  it("n = 9: exact p equals the brute-force count over all 9! orderings", () => {
    expect(SPEARMAN_EXACT_MAX_N).toBe(9);
    const x = [1, 2, 3, 4, 5, 6, 7, 8, 9];
    const y = [2, 1, 4, 3, 7, 5, 6, 9, 8];
    const s = spearmanCorrelation(x, y);
    expect(s.exact).toBe(true);
    const sObs = y.reduce((a, v, i) => a + (v - x[i]) ** 2, 0); // ranks equal values here
    let atMost = 0;
    let atLeast = 0;
    let total = 0;
    for (const perm of permutations(9)) {
      let sum = 0;
      for (let i = 0; i < 9; i++) sum += (perm[i] - i) ** 2;
      if (sum <= sObs) atMost++;
      if (sum >= sObs) atLeast++;
      total++;
    }
    expect(s.s).toBe(sObs);
    expect(s.p).toBeCloseTo(Math.min(1, (2 * Math.min(atMost, atLeast)) / total), 12); // (exact enumeration)
    expect(s.r).toBeCloseTo(1 - (6 * sObs) / (9 * 80), 12); // (Spearman's formula without ties, exact algebra)
  });
  it("n = 10: uses the Edgeworth series (AS 89), which differs from the exact permutation p", () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
    const y = [3, 1, 2, 5, 4, 8, 6, 10, 7, 9];
    const s = spearmanCorrelation(x, y);
    expect(s.exact).toBe(false);
    expect(s.pMethod).toBe("edgeworth");
    const dist = spearmanDistribution(10); // exact distribution, checked by enumeration at n = 4 and n = 9
    let lower = 0;
    for (let v = 0; v <= s.s; v++) lower += dist[v];
    const exactP = 2 * lower;
    expect(Math.abs(exactP - s.p)).toBeGreaterThan(1e-4); // the two really differ at n = 10
    expect(Math.abs(exactP - s.p)).toBeLessThan(Math.abs(exactP - correlationP(s.r, 8))); // (exact enumeration: closer than the t approximation here)
  });
  it("ties force the approximation even for small n", () => {
    const s = spearmanCorrelation([1, 2, 2, 4, 5], [5, 6, 7, 8, 7]);
    expect(s.exact).toBe(false);
  });
});

describe("Kendall's tau-b", () => {
  it("exact p without ties equals brute-force enumeration (n = 7)", () => {
    const x = [1, 2, 3, 4, 5, 6, 7];
    const y = [2, 1, 4, 3, 7, 6, 5];
    const k = kendallTauB(x, y);
    expect(k.exact).toBe(true);
    const concordant = (perm: ArrayLike<number>) => {
      let c = 0;
      for (let i = 0; i < 7; i++) for (let j = i + 1; j < 7; j++) if (perm[j] > perm[i]) c++;
      return c;
    };
    const cObs = concordant(y.map((v) => v - 1));
    let atMost = 0;
    let atLeast = 0;
    let total = 0;
    for (const perm of permutations(7)) {
      const c = concordant(perm);
      if (c <= cObs) atMost++;
      if (c >= cObs) atLeast++;
      total++;
    }
    expect(k.tau).toBeCloseTo((2 * cObs - 21) / 21, 12); // (C − D)/n0 without ties
    expect(k.p).toBeCloseTo(Math.min(1, (2 * Math.min(atMost, atLeast)) / total), 12); // (exact enumeration)
  });
  it("with ties: tau-b and the tie-corrected normal approximation by hand", () => {
    const k = kendallTauB([1, 2, 2, 3], [1, 3, 2, 2]);
    // pairs: C = 3, D = 1, one pair tied in x, one in y: τ_b = 2/√(5·5) = 0.4 (hand computation)
    expect(k.tau).toBeCloseTo(0.4, 12);
    // Var S = (156 − 18 − 18)/18 + (2·2)/(2·4·3) + 0 = 6.8333… (Kendall 1970, eq. 4.3, by hand)
    expect(k.z).toBeCloseTo(2 / Math.sqrt(120 / 18 + 4 / 24), 12);
    expect(k.p).toBeCloseTo(2 * (1 - normalCdf(2 / Math.sqrt(120 / 18 + 4 / 24))), 12);
  });
});

describe("percentage-bend correlation (Wilcox 1994), beta = 0.2", () => {
  it("worked by hand on a small set with one wild x", () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8, 9, 30];
    const y = [2, 1, 4, 3, 6, 5, 8, 7, 10, 9];
    // m = ⌊0.8·10 + 0.5⌋ = 8; ω̂ = 3.5 for both; one value bent at each end; φ̂ = 5.5 for both;
    // A·7 = (−7, −7, −5, −3, −1, 1, 3, 5, 7, 7), B·7 = (−7, −7, −3, −5, 1, −1, 5, 3, 7, 7);
    // r_pb = ΣAB/√(ΣA²ΣB²) = 254/266 (hand computation)
    const b = percentageBendCorrelation(x, y);
    expect(b.r).toBeCloseTo(254 / 266, 12);
    expect(b.t).toBeCloseTo((254 / 266) * Math.sqrt(8 / (1 - (254 / 266) ** 2)), 10);
    expect(b.p).toBeCloseTo(correlationP(254 / 266, 8), 12);
  });
});

describe("skipped correlation", () => {
  it("ideal fourths follow their definition (Frigge, Hoaglin & Iglewicz 1989)", () => {
    const f = idealFourths([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
    // j = ⌊10/4 + 5/12⌋ = 2, h = 11/12: lower = x(2)/12 + 11·x(3)/12, upper = x(9)/12 + 11·x(8)/12 (exact algebra)
    expect(f.lower).toBeCloseTo(2 / 12 + 33 / 12, 12);
    expect(f.upper).toBeCloseTo(9 / 12 + 88 / 12, 12);
  });
  it("removes a planted bivariate outlier and correlates the rest", () => {
    const x = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 6.5];
    const y = [1.2, 1.9, 3.3, 3.8, 5.1, 6.2, 6.8, 8.1, 9.2, 9.9, 11.3, 11.8, 40];
    expect(projectionOutliers(x, y)).toEqual([12]);
    const s = skippedCorrelation(x, y);
    expect(s.nKept).toBe(12);
    expect(s.r).toBeCloseTo(sampleCorrelation(x.slice(0, 12), y.slice(0, 12)), 12); // (independent Pearson, simple-statistics)
    expect(s.adjustedCritical).toBeCloseTo(6.947 / 13 + 2.3197, 12); // (Wilcox 2012, §9.4.3 critical value; value from memory)
  });
});

describe("comparing and probing correlations", () => {
  it("Fisher z test for two independent correlations", () => {
    const c = compareIndependentCorrelations(0.5, 50, 0.2, 60);
    const z = (Math.atanh(0.5) - Math.atanh(0.2)) / Math.sqrt(1 / 47 + 1 / 57); // (Zar 2010 eq. 19.30, exact algebra)
    expect(c.z).toBeCloseTo(z, 12);
    expect(c.p).toBeCloseTo(2 * (1 - normalCdf(z)), 12);
    expect(c.ciLow).toBeLessThan(0.3);
    expect(c.ciHigh).toBeGreaterThan(0.3);
  });
  it("leave-one-out r equals recomputation without each participant", () => {
    const loo = leaveOneOutCorrelations(anscombeX1, anscombeY1);
    anscombeX1.forEach((_, i) => {
      const xs = anscombeX1.filter((__, k) => k !== i);
      const ys = anscombeY1.filter((__, k) => k !== i);
      expect(loo.values[i]).toBeCloseTo(sampleCorrelation(xs, ys), 12); // (independent recomputation)
    });
    expect(loo.min).toBe(Math.min(...(loo.values as number[])));
  });
  it("with and without flagged participants", () => {
    const w = correlationWithAndWithout(anscombeX1, anscombeY1, [2]);
    expect(w.without?.n).toBe(10);
    expect(w.without?.r).toBeCloseTo(
      sampleCorrelation(
        anscombeX1.filter((_, k) => k !== 2),
        anscombeY1.filter((_, k) => k !== 2),
      ),
      12,
    );
  });
});
