import { describe, expect, it } from "vitest";
import { StatsError } from "../../../server/stats/errors";
import { genericPermutationTest } from "../../../server/stats/generic-permutation";
import { linearPermutationTest } from "../../../server/stats/permutation";
import { createRearranger } from "../../../server/stats/rearrangements";
import { createRng, normalDraw } from "../../../server/stats/rng";
import {
  allPermutations,
  allSignVectors,
  allSubsets,
  mean,
  naiveOls,
  oneSampleT,
  pooledT,
  twoSidedShare,
  welchT,
} from "./resampling-reference";

function designOf(rows: number[][]): Float64Array {
  return Float64Array.from(rows.flat());
}

function sortedClose(actual: ArrayLike<number>, expected: number[], digits: number): void {
  const a = Array.from(actual).sort((x, y) => x - y);
  const e = [...expected].sort((x, y) => x - y);
  expect(a.length).toBe(e.length);
  for (let i = 0; i < a.length; i++) expect(a[i]).toBeCloseTo(e[i], digits);
}

describe("linearPermutationTest, two groups of unequal size without covariates", () => {
  // Groups of 3 and 5, interleaved in the file order.
  const group = [1, 0, 0, 1, 0, 0, 1, 0];
  const regions = [
    [2.9, 1.1, 0.4, 1.6, 1.9, 0.8, 2.2, 1.5],
    [0.3, -0.2, 1.4, 0.9, 0.1, 0.6, -0.4, 1.2],
  ];
  const design = designOf(group.map((g) => [1, g]));
  const n = 8;

  // Brute force: every one of the C(8, 3) = 56 assignments of the first label,
  // pooled-variance t of first minus second group.
  const bruteForce = regions.map((y) => {
    const observed = pooledT(
      y.filter((_, i) => group[i] === 1),
      y.filter((_, i) => group[i] === 0),
    );
    const all = allSubsets(n, 3).map((s) =>
      pooledT(
        s.map((i) => y[i]),
        y.filter((_, i) => !s.includes(i)),
      ),
    );
    return { observed, all, p: twoSidedShare(all, observed) };
  });

  it("enumerates all 56 group assignments and matches the brute-force p (exact enumeration)", () => {
    const result = linearPermutationTest({
      design,
      n,
      p: 2,
      tested: 1,
      y: regions.map((r) => Float64Array.from(r)),
      scheme: "freedman-lane",
      resamples: 10000,
      rng: createRng(7),
      keepNull: true,
    });
    expect(result.exact).toBe(true);
    expect(result.rearrangements).toBe(56); // C(8, 3) (exact enumeration)
    for (let r = 0; r < regions.length; r++) {
      expect(result.observed[r]).toBeCloseTo(bruteForce[r].observed, 10); // pooled t (exact algebra)
      expect(result.p[r]).toBeCloseTo(bruteForce[r].p, 12); // (exact enumeration)
      expect(result.nullStatistics?.[r][0]).toBeCloseTo(bruteForce[r].observed, 5); // identity first
      sortedClose(result.nullStatistics?.[r] ?? [], bruteForce[r].all, 4); // same null multiset (exact enumeration)
    }
    // The brute-force p-values are not trivial, so the check can fail.
    expect(bruteForce[0].p).toBeGreaterThan(1 / 56);
    expect(bruteForce[0].p).toBeLessThan(1);
  });

  it("gives the same exact p whichever column order the design uses", () => {
    const swapped = designOf(group.map((g) => [g, 1]));
    const result = linearPermutationTest({
      design: swapped,
      n,
      p: 2,
      tested: 0,
      y: [Float64Array.from(regions[0])],
      scheme: "freedman-lane",
      resamples: 56,
      rng: createRng(1),
    });
    expect(result.rearrangements).toBe(56);
    expect(result.p[0]).toBeCloseTo(bruteForce[0].p, 12); // (exact enumeration)
  });

  it("switches to Monte Carlo when resamples < 56 and reports p = (b + 1)/(m + 1)", () => {
    const result = linearPermutationTest({
      design,
      n,
      p: 2,
      tested: 1,
      y: [Float64Array.from(regions[0])],
      scheme: "freedman-lane",
      resamples: 40,
      rng: createRng(3),
      keepNull: true,
    });
    expect(result.exact).toBe(false);
    expect(result.rearrangements).toBe(41);
    const nulls = Array.from(result.nullStatistics?.[0] ?? []);
    const b = nulls
      .slice(1)
      .filter((t) => Math.abs(t) >= Math.abs(result.observed[0]) * (1 - 1e-6)).length;
    expect(result.p[0]).toBeCloseTo((b + 1) / 41, 12); // (Phipson & Smyth 2010, p = (b + 1)/(m + 1))
  });
});

describe("linearPermutationTest, Monte Carlo against exact enumeration", () => {
  it("agrees with the exact p of 6 vs 8 group labels within the binomial band", () => {
    const rng = createRng(11);
    const group = [1, 1, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0];
    const y = group.map((g) => normalDraw(rng) + 0.6 * g);
    const observed = pooledT(
      y.filter((_, i) => group[i] === 1),
      y.filter((_, i) => group[i] === 0),
    );
    const all = allSubsets(14, 6).map((s) =>
      pooledT(
        s.map((i) => y[i]),
        y.filter((_, i) => !s.includes(i)),
      ),
    );
    const exactP = twoSidedShare(all, observed); // (exact enumeration over C(14, 6) = 3003)
    const result = linearPermutationTest({
      design: designOf(group.map((g) => [1, g])),
      n: 14,
      p: 2,
      tested: 1,
      y: [Float64Array.from(y)],
      scheme: "freedman-lane",
      resamples: 2000,
      rng: createRng(5),
    });
    expect(result.exact).toBe(false);
    expect(result.rearrangements).toBe(2001);
    const sd = Math.sqrt((exactP * (1 - exactP)) / 2000);
    expect(Math.abs(result.p[0] - exactP)).toBeLessThan(4 * sd + 1 / 2001); // (binomial Monte Carlo band, 4 sd)
  });

  it("is reproducible from the seed", () => {
    const y = [Float64Array.from([0.3, 1.2, -0.5, 0.8, 1.9, 0.1, 0.7, 1.4, -0.2, 0.9, 1.1, 0.4])];
    const run = (seed: number) =>
      linearPermutationTest({
        design: new Float64Array(12).fill(1),
        n: 12,
        p: 1,
        tested: 0,
        y,
        scheme: "sign-flip",
        resamples: 500,
        rng: createRng(seed),
        keepNull: true,
      });
    const a = run(42);
    const b = run(42);
    const c = run(43);
    expect(a.exact).toBe(false);
    expect(Array.from(a.nullStatistics?.[0] ?? [])).toEqual(
      Array.from(b.nullStatistics?.[0] ?? []),
    );
    expect(Array.from(a.nullStatistics?.[0] ?? [])).not.toEqual(
      Array.from(c.nullStatistics?.[0] ?? []),
    );
  });
});

describe("linearPermutationTest, sign flipping", () => {
  const regions = [
    [1.2, -0.4, 2.1, 0.7, 1.6, -0.9],
    [0.2, 0.5, -1.1, 0.4, 0.3, -0.6],
    [2.0, 1.1, 0.9, 1.7, -0.3, 1.4],
  ];
  const signs = allSignVectors(6);

  it("enumerates all 2^6 sign patterns for a one-sample test (exact enumeration)", () => {
    const result = linearPermutationTest({
      design: new Float64Array(6).fill(1),
      n: 6,
      p: 1,
      tested: 0,
      y: regions.map((r) => Float64Array.from(r)),
      scheme: "sign-flip",
      resamples: 64,
      rng: createRng(1),
      maxT: true,
    });
    expect(result.exact).toBe(true);
    expect(result.rearrangements).toBe(64); // 2^6 (exact enumeration)
    const perRegion = regions.map((y) => signs.map((s) => oneSampleT(y.map((v, i) => v * s[i]))));
    for (let r = 0; r < 3; r++) {
      const t = oneSampleT(regions[r]);
      expect(result.observed[r]).toBeCloseTo(t, 10); // one-sample t (exact algebra)
      expect(result.p[r]).toBeCloseTo(twoSidedShare(perRegion[r], t), 12); // (exact enumeration)
    }
    // max-T: share of sign patterns whose maximum |t*| over the three regions reaches |t| (exact enumeration).
    const maxima = signs.map((_, k) => Math.max(...perRegion.map((ts) => Math.abs(ts[k]))));
    for (let r = 0; r < 3; r++) {
      const thr = Math.abs(oneSampleT(regions[r])) * (1 - 1e-9);
      const expected = maxima.filter((m) => m >= thr).length / 64;
      expect(result.pMaxT?.[r]).toBeCloseTo(expected, 12); // (exact enumeration)
      expect(result.pMaxT?.[r]).toBeGreaterThanOrEqual(result.p[r]);
    }
  });

  it("flips reduced-model residuals with a covariate and matches a naive refit (exact enumeration)", () => {
    const z = [0.5, -1.0, 1.5, 0.2, -0.7, 1.1];
    const x = z.map((v) => [1, v]);
    const y = regions[0];
    // Reduced model: the covariate alone (the tested intercept left out).
    const reduced = naiveOls(
      z.map((v) => [v]),
      y,
    );
    const ts = signs.map(
      (s) =>
        naiveOls(
          x,
          reduced.fitted.map((f, i) => f + s[i] * reduced.residuals[i]),
        ).t[0],
    );
    const observed = naiveOls(x, y).t[0];
    const result = linearPermutationTest({
      design: designOf(x),
      n: 6,
      p: 2,
      tested: 0,
      y: [Float64Array.from(y)],
      scheme: "sign-flip",
      resamples: 100,
      rng: createRng(2),
      keepNull: true,
    });
    expect(result.exact).toBe(true);
    expect(result.observed[0]).toBeCloseTo(observed, 10); // (naive refit)
    expect(result.p[0]).toBeCloseTo(twoSidedShare(ts, observed), 12); // (exact enumeration)
    sortedClose(result.nullStatistics?.[0] ?? [], ts, 4);
  });

  it("reproduces the exact sign-flip p of Darwin's Zea mays pairs (Fisher 1935)", () => {
    // Cross- minus self-fertilised heights in eighths of an inch, 15 pairs
    // (Fisher 1935, The Design of Experiments, §17 and §21); their sum is 314.
    const d = [49, -67, 8, 16, 6, 23, 28, 41, 14, 29, 56, 24, 75, 60, -48];
    expect(d.reduce((s, v) => s + v, 0)).toBe(314); // (Fisher 1935, §21)
    // Brute force over all 2^15 patterns: sums at least as large as 314.
    let greater = 0;
    let equal = 0;
    for (let mask = 0; mask < 1 << 15; mask++) {
      let s = 0;
      for (let i = 0; i < 15; i++) s += mask & (1 << i) ? -d[i] : d[i];
      if (s > 314) greater++;
      if (s === 314) equal++;
    }
    // (Fisher 1935, §21: of 32,768 arrangements 835 exceed 314 and 28 equal it;
    // value from memory, confirmed by this enumeration)
    expect(greater).toBe(835);
    expect(equal).toBe(28);
    const result = linearPermutationTest({
      design: new Float64Array(15).fill(1),
      n: 15,
      p: 1,
      tested: 0,
      y: [Float64Array.from(d)],
      scheme: "sign-flip",
      resamples: 32768,
      rng: createRng(1),
    });
    expect(result.exact).toBe(true);
    expect(result.rearrangements).toBe(32768);
    // With the |values| fixed the one-sample t is increasing in the sum, so the
    // two-sided p is 2 · (835 + 28) / 32768 = 5.267% (Fisher 1935, §21; exact enumeration).
    expect(result.p[0]).toBeCloseTo(1726 / 32768, 12);
  });
});

describe("linearPermutationTest, Freedman–Lane with a covariate", () => {
  const n = 6;
  const z = [0.3, 1.8, -0.6, 1.1, -1.4, 0.5];
  const x = [1.0, 0.2, -0.8, 1.6, 0.4, -1.2];
  const y = [2.4, 1.1, -0.3, 3.0, 0.2, 0.9];

  // Naive: reduced model [1, z], residuals e permuted by every one of the 720
  // permutations π (y*_i = fitted_i + e_π(i)), full model [1, z, x] refitted.
  const reduced = naiveOls(
    z.map((v) => [1, v]),
    y,
  );
  const full = z.map((v, i) => [1, v, x[i]]);
  const ts = allPermutations(n).map(
    (perm) =>
      naiveOls(
        full,
        reduced.fitted.map((f, i) => f + reduced.residuals[perm[i]]),
      ).t[2],
  );
  const observed = naiveOls(full, y).t[2];

  it("matches 720 naive refits (exact enumeration)", () => {
    expect(ts.length).toBe(720);
    const result = linearPermutationTest({
      design: designOf(full),
      n,
      p: 3,
      tested: 2,
      y: [Float64Array.from(y)],
      scheme: "freedman-lane",
      resamples: 720,
      rng: createRng(9),
      keepNull: true,
    });
    expect(result.exact).toBe(true);
    expect(result.rearrangements).toBe(720); // 6! (exact enumeration)
    expect(result.observed[0]).toBeCloseTo(observed, 10); // (naive refit)
    expect(result.p[0]).toBeCloseTo(twoSidedShare(ts, observed), 12); // (exact enumeration)
    sortedClose(result.nullStatistics?.[0] ?? [], ts, 3);
    expect(twoSidedShare(ts, observed)).toBeGreaterThan(0.01);
    expect(twoSidedShare(ts, observed)).toBeLessThan(0.99);
  });

  it("handles the tested column in the middle of the design", () => {
    const middle = z.map((v, i) => [1, x[i], v]);
    const result = linearPermutationTest({
      design: designOf(middle),
      n,
      p: 3,
      tested: 1,
      y: [Float64Array.from(y)],
      scheme: "freedman-lane",
      resamples: 1000,
      rng: createRng(9),
    });
    expect(result.observed[0]).toBeCloseTo(observed, 10); // (naive refit)
    expect(result.p[0]).toBeCloseTo(twoSidedShare(ts, observed), 12); // (exact enumeration)
  });

  it("uses Monte Carlo with 719 resamples (fewer than 6!)", () => {
    const result = linearPermutationTest({
      design: designOf(full),
      n,
      p: 3,
      tested: 2,
      y: [Float64Array.from(y)],
      scheme: "freedman-lane",
      resamples: 719,
      rng: createRng(9),
    });
    expect(result.exact).toBe(false);
    expect(result.rearrangements).toBe(720);
  });
});

describe("linearPermutationTest kernel against naive refits on the same rearrangements", () => {
  it("gives the naive t for every random rearrangement with four regressors and seven regions", () => {
    const rng = createRng(21);
    const n = 40;
    const rows = Array.from({ length: n }, () => [
      1,
      normalDraw(rng),
      normalDraw(rng),
      normalDraw(rng),
    ]);
    const regions = Array.from({ length: 7 }, () =>
      rows.map((r) => 0.5 * r[1] + 0.3 * r[3] + normalDraw(rng)),
    );
    const result = linearPermutationTest({
      design: designOf(rows),
      n,
      p: 4,
      tested: 3,
      y: regions.map((r) => Float64Array.from(r)),
      scheme: "freedman-lane",
      resamples: 60,
      rng: createRng(99),
      keepNull: true,
      maxT: true,
    });
    // Walk the same rearrangements independently: residual i moves to unit order[i].
    const walk = createRearranger({ kind: "permutations", n, resamples: 60, rng: createRng(99) });
    const reducedRows = rows.map((r) => r.slice(0, 3));
    const reducedFits = regions.map((y) => naiveOls(reducedRows, y));
    for (let k = 0; k < 61; k++) {
      walk.next();
      let max = 0;
      for (let r = 0; r < 7; r++) {
        const { fitted, residuals } = reducedFits[r];
        const ystar = [...fitted];
        for (let i = 0; i < n; i++) ystar[walk.order[i]] += residuals[i];
        const t = naiveOls(rows, ystar).t[3];
        max = Math.max(max, Math.abs(t));
        expect(result.nullStatistics?.[r][k]).toBeCloseTo(t, 4); // (naive refit; stored as 32-bit floats)
      }
      expect(result.maxNull?.[k]).toBeCloseTo(max, 9); // (naive refit)
    }
  });

  it("gives the naive t with seven regressors (two column blocks)", () => {
    const rng = createRng(22);
    const n = 25;
    const rows = Array.from({ length: n }, () => [
      1,
      ...Array.from({ length: 6 }, () => normalDraw(rng)),
    ]);
    const y = rows.map((r) => r[2] - 0.5 * r[6] + normalDraw(rng));
    const result = linearPermutationTest({
      design: designOf(rows),
      n,
      p: 7,
      tested: 4,
      y: [Float64Array.from(y)],
      scheme: "sign-flip",
      resamples: 20,
      rng: createRng(5),
      keepNull: true,
    });
    expect(result.observed[0]).toBeCloseTo(naiveOls(rows, y).t[4], 9); // (naive refit)
    const walk = createRearranger({ kind: "signs", n, resamples: 20, rng: createRng(5) });
    const reduced = naiveOls(
      rows.map((r) => r.filter((_, j) => j !== 4)),
      y,
    );
    for (let k = 0; k < 21; k++) {
      walk.next();
      const ystar = reduced.fitted.map((f, i) => f + walk.signs[i] * reduced.residuals[i]);
      expect(result.nullStatistics?.[0][k]).toBeCloseTo(naiveOls(rows, ystar).t[4], 4); // (naive refit)
    }
  });
});

describe("linearPermutationTest preconditions, progress and cancellation", () => {
  const base = {
    design: designOf([
      [1, 0],
      [1, 1],
      [1, 2],
      [1, 3],
    ]),
    n: 4,
    p: 2,
    tested: 1,
    y: [Float64Array.from([1, 3, 2, 5])],
    scheme: "freedman-lane" as const,
    resamples: 100,
    rng: createRng(1),
  };

  it("rejects malformed input with a message naming the field", () => {
    const run = (patch: object) => () => linearPermutationTest({ ...base, ...patch });
    expect(run({ n: 2, design: new Float64Array(4) })).toThrow(
      /more participants than design columns/,
    );
    expect(run({ design: new Float64Array(6) })).toThrow(/design to hold n × p = 8 values/);
    expect(run({ tested: 2 })).toThrow(/tested to be a column index/);
    expect(run({ y: [Float64Array.from([1, 2, 3])] })).toThrow(/y\[0\] to hold n = 4 values/);
    expect(run({ y: [Float64Array.from([1, Number.NaN, 3, 4])] })).toThrow(
      /finite values \(y\[0\], row 1\)/,
    );
    expect(run({ resamples: 0 })).toThrow(/resamples to be a positive integer/);
    expect(run({ y: [] })).toThrow(/at least one region/);
    expect(
      run({
        design: designOf([
          [1, 2],
          [1, 2],
          [1, 2],
          [1, 2],
        ]),
      }),
    ).toThrow(/full-rank design \(column 1/);
    expect(run({ y: [Float64Array.from([1, 3, 5, 7])] })).toThrow(/fitted exactly/);
    expect(run({ y: [Float64Array.from([2, 2, 2, 2])] })).toThrow(
      /residual variation after the reduced model \(y\[0\]\)/,
    );
    expect(run({ y: [Float64Array.from([1, 3, 5, 7])] })).toThrow(StatsError);
  });

  it("reports progress up to 1 and stops with code cancelled", () => {
    const seen: number[] = [];
    linearPermutationTest({ ...base, onProgress: (f) => seen.push(f) });
    expect(seen.length).toBeGreaterThan(0);
    expect(seen[seen.length - 1]).toBe(1);
    let calls = 0;
    try {
      linearPermutationTest({ ...base, shouldCancel: () => ++calls > 3 });
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(StatsError);
      expect((error as StatsError).code).toBe("cancelled");
    }
  });
});

describe("genericPermutationTest", () => {
  it("enumerates the 56 assignments of groups of 3 and 5 for Welch's t (exact enumeration)", () => {
    const y = [3.1, 4.4, 2.9, 1.2, 2.6, 0.4, 1.9, 2.2];
    const welch = (order: Int32Array) =>
      welchT(
        Array.from(order.subarray(0, 3), (i) => y[i]),
        Array.from(order.subarray(3), (i) => y[i]),
      );
    const result = genericPermutationTest({
      n: 8,
      scheme: "labels",
      groupSizes: [3, 5],
      statistic: welch,
      resamples: 1000,
      rng: createRng(1),
    });
    const observed = welchT(y.slice(0, 3), y.slice(3));
    const all = allSubsets(8, 3).map((s) =>
      welchT(
        s.map((i) => y[i]),
        y.filter((_, i) => !s.includes(i)),
      ),
    );
    expect(result.exact).toBe(true);
    expect(result.rearrangements).toBe(56); // C(8, 3) (exact enumeration)
    expect(result.observed).toBeCloseTo(observed, 12); // Welch t (textbook formula)
    expect(result.p).toBeCloseTo(twoSidedShare(all, observed), 12); // (exact enumeration)
    sortedClose(result.nullStatistics, all, 10);
  });

  it("enumerates 2^6 sign patterns for the median (exact enumeration)", () => {
    const y = [1.4, -0.3, 2.2, 0.8, 1.1, -0.6];
    const median = (a: number[]) => {
      const s = [...a].sort((u, v) => u - v);
      return (s[2] + s[3]) / 2;
    };
    const result = genericPermutationTest({
      n: 6,
      scheme: "sign-flip",
      statistic: (_order, signs) => median(y.map((v, i) => v * signs[i])),
      resamples: 64,
      rng: createRng(1),
    });
    const all = allSignVectors(6).map((s) => median(y.map((v, i) => v * s[i])));
    expect(result.exact).toBe(true);
    expect(result.p).toBeCloseTo(twoSidedShare(all, median(y)), 12); // (exact enumeration)
  });

  it("enumerates 6! permutations for a correlation and uses Monte Carlo below that", () => {
    const x = [1, 2, 3, 4, 5, 6];
    const y = [1.2, 1.9, 3.5, 2.8, 5.1, 4.2];
    const r = (yy: number[]) => {
      const mx = mean(x);
      const my = mean(yy);
      let sxy = 0;
      let sxx = 0;
      let syy = 0;
      for (let i = 0; i < 6; i++) {
        sxy += (x[i] - mx) * (yy[i] - my);
        sxx += (x[i] - mx) ** 2;
        syy += (yy[i] - my) ** 2;
      }
      return sxy / Math.sqrt(sxx * syy);
    };
    const statistic = (order: Int32Array) => r(Array.from(order, (i) => y[i]));
    const exact = genericPermutationTest({
      n: 6,
      scheme: "labels",
      statistic,
      resamples: 720,
      rng: createRng(1),
    });
    const all = allPermutations(6).map((perm) => r(perm.map((i) => y[i])));
    expect(exact.exact).toBe(true);
    expect(exact.p).toBeCloseTo(twoSidedShare(all, r(y)), 12); // (exact enumeration)
    const mc = genericPermutationTest({
      n: 6,
      scheme: "labels",
      statistic,
      resamples: 500,
      rng: createRng(1),
    });
    expect(mc.exact).toBe(false);
    expect(mc.rearrangements).toBe(501);
    expect(mc.nullStatistics[0]).toBe(r(y));
    const b = Array.from(mc.nullStatistics.subarray(1)).filter(
      (v) => Math.abs(v) >= Math.abs(r(y)) * (1 - 1e-9),
    ).length;
    expect(mc.p).toBeCloseTo((b + 1) / 501, 12); // (Phipson & Smyth 2010)
  });

  it("rejects bad input, NaN statistics and honours cancellation", () => {
    const ok = {
      n: 5,
      scheme: "labels" as const,
      statistic: () => 1,
      resamples: 10,
      rng: createRng(1),
    };
    expect(() => genericPermutationTest({ ...ok, groupSizes: [2, 2] })).toThrow(
      /groupSizes to be two positive integers summing to n = 5/,
    );
    expect(() =>
      genericPermutationTest({ ...ok, scheme: "sign-flip", groupSizes: [2, 3] }),
    ).toThrow(/scheme "labels" when groupSizes/);
    expect(() => genericPermutationTest({ ...ok, n: 1 })).toThrow(/at least 2 units/);
    expect(() =>
      genericPermutationTest({ ...ok, statistic: () => Number.POSITIVE_INFINITY }),
    ).toThrow(/finite observed statistic/);
    let k = 0;
    expect(() =>
      genericPermutationTest({ ...ok, statistic: () => (k++ === 3 ? Number.NaN : 1) }),
    ).toThrow(/rearrangement 3 gave NaN/);
    try {
      genericPermutationTest({ ...ok, resamples: 1000, n: 10, shouldCancel: () => true });
      expect.unreachable();
    } catch (error) {
      expect((error as StatsError).code).toBe("cancelled");
    }
  });
});
