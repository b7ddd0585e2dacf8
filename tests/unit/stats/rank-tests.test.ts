import { describe, expect, it } from "vitest";
import { normalCdf } from "../../../server/stats/distributions";
import {
  kendallDistribution,
  rankSumDistribution,
  signedRankDistribution,
  spearmanDistribution,
} from "../../../server/stats/exact-rank-distributions";
import { kthDifference, kthWalshSum } from "../../../server/stats/hodges-lehmann";
import { mannWhitneyU } from "../../../server/stats/mann-whitney";
import { wilcoxonSignedRank } from "../../../server/stats/wilcoxon-signed-rank";
import {
  depressionX,
  depressionY,
  permeabilityEarly,
  permeabilityTerm,
  subsets,
} from "./reference-data";

const median = (v: number[]) => {
  const s = v.slice().sort((a, b) => a - b);
  const h = s.length >> 1;
  return s.length % 2 ? s[h] : (s[h - 1] + s[h]) / 2;
};

describe("exact null distributions", () => {
  it("signed-rank distribution equals brute-force enumeration of 2^n sign patterns", () => {
    const n = 8;
    const counts = new Array((n * (n + 1)) / 2 + 1).fill(0);
    for (let mask = 0; mask < 1 << n; mask++) {
      let v = 0;
      for (let k = 0; k < n; k++) if (mask & (1 << k)) v += k + 1;
      counts[v]++;
    }
    const p = signedRankDistribution(n);
    counts.forEach((c, v) => {
      expect(p[v]).toBeCloseTo(c / 256, 14); // (exact enumeration)
    });
  });
  it("Mann–Whitney distribution equals brute-force enumeration of C(9, 4) assignments", () => {
    const n1 = 4;
    const n2 = 5;
    const counts = new Array(n1 * n2 + 1).fill(0);
    let total = 0;
    for (const s of subsets(n1 + n2, n1)) {
      // ranks 1…9; U = Σ ranks(first) − n1(n1+1)/2
      counts[s.reduce((a, k) => a + k + 1, 0) - 10]++;
      total++;
    }
    const p = rankSumDistribution(n1, n2);
    counts.forEach((c, u) => {
      expect(p[u]).toBeCloseTo(c / total, 14); // (exact enumeration)
    });
  });
  it("Kendall inversion counts are the Mahonian numbers", () => {
    const p = kendallDistribution(4);
    [1, 3, 5, 6, 5, 3, 1].forEach((c, i) => {
      expect(p[i] * 24).toBeCloseTo(c, 10); // (exact enumeration: inversions of the 24 permutations of 4)
    });
  });
  it("Spearman S distribution for n = 4 by enumeration", () => {
    const p = spearmanDistribution(4);
    // S = Σd² over the 24 permutations of 4: counted by hand (exact enumeration)
    expect(p[0] * 24).toBeCloseTo(1, 10); // identity
    expect(p[20] * 24).toBeCloseTo(1, 10); // reversal, (n³ − n)/3 = 20
    expect(p.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
  });
});

describe("Wilcoxon signed-rank test", () => {
  const d = depressionX.map((v, i) => v - depressionY[i]);
  it("matches the documented example (exact, no ties)", () => {
    const w = wilcoxonSignedRank(d);
    expect(w.v).toBe(40); // (R wilcox.test documentation example: V = 40)
    expect(w.exact).toBe(true);
    expect(w.p).toBeCloseTo(2 * 0.01953, 4); // (R documentation: one-sided p = 0.01953; two-sided doubles it)
    expect(w.p).toBeCloseTo(20 / 512, 12); // (exact enumeration: 10 of 512 sign patterns have V ≥ 40, doubled)
  });
  it("Hodges–Lehmann pseudomedian and interval equal the Walsh-average order statistics", () => {
    const w = wilcoxonSignedRank(d);
    const walsh: number[] = [];
    for (let i = 0; i < d.length; i++)
      for (let j = i; j < d.length; j++) walsh.push((d[i] + d[j]) / 2);
    walsh.sort((a, b) => a - b);
    expect(w.estimate).toBeCloseTo(median(walsh), 12); // (exact enumeration of the 45 Walsh averages)
    // P(V ≤ 5) = 10/512 < 0.025 ≤ P(V ≤ 6) = 14/512, so k = 6 (exact enumeration)
    expect(w.ciLow).toBeCloseTo(walsh[5], 12);
    expect(w.ciHigh).toBeCloseTo(walsh[45 - 6], 12);
  });
  it("uses the normal approximation with tie and continuity corrections when ranks tie", () => {
    const x = [1, 2, 2, 3, -1];
    const w = wilcoxonSignedRank(x);
    // |x| = 1, 2, 2, 3, 1 → mid-ranks 1.5, 3.5, 3.5, 5, 1.5; V = 1.5 + 3.5 + 3.5 + 5 = 13.5 (hand computation)
    expect(w.v).toBe(13.5);
    expect(w.exact).toBe(false);
    // variance 5·6·11/24 − (6 + 6)/48 = 13.5; z = (13.5 − 7.5 − 0.5)/√13.5 (hand computation)
    const z = 5.5 / Math.sqrt(13.5);
    expect(w.z).toBeCloseTo(z, 12);
    expect(w.p).toBeCloseTo(2 * (1 - normalCdf(z)), 12);
  });
  it("drops zeros and says so", () => {
    const w = wilcoxonSignedRank([0, 1, 2, -3, 4, 5]);
    expect(w.zeros).toBe(1);
    expect(w.n).toBe(5);
    expect(w.exact).toBe(false); // (zeros present: normal approximation, as R does)
  });
});

describe("Mann–Whitney U test", () => {
  it("matches the documented example (exact, unequal groups 10 and 5)", () => {
    const m = mannWhitneyU(permeabilityTerm, permeabilityEarly);
    expect(m.u).toBe(35); // (R wilcox.test documentation example: W = 35)
    expect(m.p).toBeCloseTo(2 * 0.1272, 3); // (R documentation: one-sided p = 0.1272)
    let extreme = 0;
    let total = 0;
    const all = permeabilityTerm.concat(permeabilityEarly);
    const order = all.map((_, i) => i).sort((a, b) => all[a] - all[b]);
    const rank = new Array(all.length);
    order.forEach((idx, r) => {
      rank[idx] = r + 1;
    });
    for (const s of subsets(15, 10)) {
      const u = s.reduce((a, k) => a + rank[k], 0) - 55;
      if (u >= 35) extreme++;
      total++;
    }
    expect(m.p).toBeCloseTo((2 * extreme) / total, 12); // (exact enumeration of the 3003 assignments)
  });
  it("Hodges–Lehmann shift is the median of all pairwise differences", () => {
    const m = mannWhitneyU(permeabilityTerm, permeabilityEarly);
    const diffs: number[] = [];
    for (const a of permeabilityTerm) for (const b of permeabilityEarly) diffs.push(a - b);
    expect(m.estimate).toBeCloseTo(median(diffs), 12); // (exact enumeration)
    expect(m.probabilitySuperiority).toBeCloseTo(35 / 50, 12); // (U/(n1·n2))
  });
  it("normal approximation with ties", () => {
    const a = [1, 2, 2, 3, 4, 5];
    const b = [2, 3, 6, 7];
    const m = mannWhitneyU(a, b);
    expect(m.exact).toBe(false);
    // mid-ranks of the pooled 10 values: 1→1, 2,2,2→3, 3,3→5.5, 4→7, 5→8, 6→9, 7→10 (hand computation)
    // W(a) = 1 + 3 + 3 + 5.5 + 7 + 8 = 27.5, U = 27.5 − 21 = 6.5
    expect(m.u).toBe(6.5);
    const tie = 27 - 3 + (8 - 2); // Σ(t³ − t) for tie groups of 3 and 2
    const v = (24 / 12) * (11 - tie / 90);
    const z = (6.5 - 12 + 0.5) / Math.sqrt(v);
    expect(m.z).toBeCloseTo(z, 12); // (hand computation with the tie-corrected variance)
  });
});

describe("order statistics of pairwise sums without forming all pairs", () => {
  it("k-th Walsh sum and difference match sorting every pair", () => {
    const x = Float64Array.from([3.1, -2, 0.5, 0.5, 7, 1.25, -0.75, 4]).sort();
    const y = Float64Array.from([1, 1, 2.5, -3, 0.1]).sort();
    const walsh: number[] = [];
    for (let i = 0; i < x.length; i++) for (let j = i; j < x.length; j++) walsh.push(x[i] + x[j]);
    walsh.sort((a, b) => a - b);
    walsh.forEach((v, k) => {
      expect(kthWalshSum(x, k + 1)).toBe(v); // (exact enumeration)
    });
    const diffs: number[] = [];
    for (const a of x) for (const b of y) diffs.push(a - b);
    diffs.sort((a, b) => a - b);
    diffs.forEach((v, k) => {
      expect(kthDifference(x, y, k + 1)).toBe(v); // (exact enumeration)
    });
  });
});
