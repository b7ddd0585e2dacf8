/**
 * Permutation inference and max-T over regions that differ in participants
 * (empty cells of the brain table), checked against a full enumeration
 * written here without the engine: every sign vector or every order σ of
 * the participants, the rule of one shared rearrangement applied region by
 * region, each region's t from a plain least-squares refit
 * (resampling-reference.ts), the maximum |t| over regions, counted.
 *
 * Methods: single-step max-T (Westfall & Young 1993, Resampling-Based
 * Multiple Testing); sign flipping and permutation of reduced-model
 * residuals (Freedman & Lane 1983, J. Business & Economic Statistics
 * 1:292–298; both as in Winkler et al. 2014, NeuroImage 92:381–397).
 *
 * The rule (issue of the brief, restated): σ = (σ₀, …, σ_{N−1}) over all
 * participants in roster order, participant i receiving the residual of σᵢ;
 * a region whose participants are a₀ < … < a_{m−1} keeps from σ, in σ's
 * order, the entries that are its own, c₀, …, c_{m−1}, and aₖ receives
 * the region's residual of cₖ. Sign flips: one sign per participant, each
 * region using the signs of its own participants.
 */
import { describe, expect, it } from "vitest";
import { type FitData, type ModelSpecInput, modelSpecSchema } from "../../../contract/spec";
import { createRearranger } from "../../../server/stats/rearrangements";
import { createRng } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";
import expectedUnchanged from "./permutation-unchanged.json";
import { permutationData, withEmptyCells } from "./permutation-data";
import { unchangedCases } from "./permutation-unchanged-cases";
import { allPermutations, allSignVectors, naiveOls, welchT } from "./resampling-reference";

/** The engine's documented tie tolerance: |T*| ≥ |T|·(1 − 1e-10) counts as extreme (common practice, no source). */
const TIE = 1e-10;

interface RegionModel {
  /** participants (roster indices) with a value and complete columns, in roster order */
  rows: number[];
  /** full design row of each of those participants */
  x: number[][];
  tested: number;
  y: number[];
}

/**
 * A region's participants (a value, and every column `complete` asks for)
 * and design, built here from the data (not by the engine).
 */
function regionModel(
  data: FitData,
  r: number,
  design: (i: number, rows: number[]) => number[],
  tested: number,
  complete: (i: number) => boolean = () => true,
): RegionModel {
  const rows: number[] = [];
  for (let i = 0; i < data.participants.length; i++)
    if (Number.isFinite(data.values[r][i]) && complete(i)) rows.push(i);
  return {
    rows,
    x: rows.map((i) => design(i, rows)),
    tested,
    y: rows.map((i) => data.values[r][i]),
  };
}

/** The reduced model's fit (the design without the tested column) by plain least squares. */
function reducedFit(m: RegionModel): { fitted: number[]; residuals: number[] } {
  const z = m.x.map((row) => row.filter((_, j) => j !== m.tested));
  if (z[0].length === 0) return { fitted: m.y.map(() => 0), residuals: [...m.y] };
  const fit = naiveOls(z, m.y);
  return { fitted: fit.fitted, residuals: fit.residuals };
}

/** The rule: region participant a_k receives the residual of c_k, the k-th of σ's entries that are the region's. */
function regionSources(sigma: readonly number[], rows: readonly number[]): number[] {
  const own = new Set(rows);
  return sigma.filter((u) => own.has(u));
}

interface Enumerated {
  p: number[];
  pAdjusted: number[];
  observed: number[];
  count: number;
}

const leastSquaresT = (m: RegionModel, y: readonly number[]) => naiveOls(m.x, y).t[m.tested];

/** Counts over all rearrangements: each region's |T*| ≥ |T| and the maximum over regions ≥ |T| (T the least-squares t unless given). */
function countAll(
  models: RegionModel[],
  rearranged: (m: RegionModel, k: number) => number,
  total: number,
  statistic: (m: RegionModel, y: readonly number[]) => number = leastSquaresT,
): Enumerated {
  const observed = models.map((m) => statistic(m, m.y));
  const own = models.map(() => 0);
  const family = models.map(() => 0);
  for (let k = 0; k < total; k++) {
    const t = models.map((m) => Math.abs(rearranged(m, k)));
    const max = Math.max(...t);
    models.forEach((_, r) => {
      const threshold = Math.abs(observed[r]) * (1 - TIE);
      if (t[r] >= threshold) own[r]++;
      if (max >= threshold) family[r]++;
    });
  }
  return {
    p: own.map((c) => c / total),
    pAdjusted: family.map((c) => c / total),
    observed,
    count: total,
  };
}

/** Freedman–Lane over every order σ of n participants. */
function enumerateOrders(models: RegionModel[], n: number): Enumerated {
  const all = allPermutations(n);
  const reduced = models.map(reducedFit);
  return countAll(
    models,
    (m, k) => {
      const r = models.indexOf(m);
      const c = regionSources(all[k], m.rows);
      return leastSquaresT(
        m,
        m.rows.map((_, j) => reduced[r].fitted[j] + reduced[r].residuals[m.rows.indexOf(c[j])]),
      );
    },
    all.length,
  );
}

/** Sign flipping of reduced-model residuals over every sign vector of n participants. */
function enumerateSigns(models: RegionModel[], n: number): Enumerated {
  const all = allSignVectors(n);
  const reduced = models.map(reducedFit);
  return countAll(
    models,
    (m, k) => {
      const r = models.indexOf(m);
      const ystar = m.rows.map(
        (i, j) => reduced[r].fitted[j] + all[k][i] * reduced[r].residuals[j],
      );
      return leastSquaresT(m, ystar);
    },
    all.length,
  );
}

function runModel(input: ModelSpecInput, data: FitData) {
  return runFit(modelSpecSchema.parse(input), data);
}

function expectExactly(
  result: ReturnType<typeof runModel>,
  expected: Enumerated,
  ns: number[],
): void {
  result.regions.forEach((region, r) => {
    expect(region.n).toBe(ns[r]);
    expect(region.p).toBe(expected.p[r]); // (full enumeration above)
    expect(region.pAdjusted).toBe(expected.pAdjusted[r]); // (full enumeration above, max over regions)
    const perm = region.permutation as { exact: boolean; rearrangements: number; observed: number };
    expect(perm.exact).toBe(true);
    expect(perm.rearrangements).toBe(expected.count);
    expect(Math.abs(perm.observed)).toBeCloseTo(Math.abs(expected.observed[r]), 9);
  });
}

// Empty cells: region 0 complete, regions 1 and 3 lack the same participant (one block of two regions),
// region 2 lacks two others.
const emptyCells = [
  [1, 2],
  [3, 2],
  [2, 0],
  [2, 5],
] as const;

describe("max-T with empty cells, sign flips (one-sample with a covariate), against all 2^9 sign vectors", () => {
  const data = withEmptyCells(permutationData(9, 21), emptyCells);
  const motion = data.numericColumns.motion as number[];
  // One-sample with a covariate: intercept (tested) and the covariate centred on the region's participants.
  const models = data.regions.map((_, r) =>
    regionModel(
      data,
      r,
      (i, rows) => [1, motion[i] - rows.reduce((s, j) => s + motion[j], 0) / rows.length],
      0,
    ),
  );
  const expected = enumerateSigns(models, 9);

  it("p and max-T adjusted p equal the enumeration exactly", () => {
    const result = runModel(
      {
        kind: "one-sample",
        covariates: ["motion"],
        inference: "permutation",
        resamples: 1000,
        correction: "maxt",
        seed: 4,
      },
      data,
    );
    expectExactly(result, expected, [9, 8, 7, 8]);
    expect(result.regions.map((r) => r.pAdjusted).every((v, r) => v >= result.regions[r].p)).toBe(
      true,
    );
  });

  it("without max-T the regions' own p follow the same draws", () => {
    const result = runModel(
      {
        kind: "one-sample",
        covariates: ["motion"],
        inference: "permutation",
        resamples: 1000,
        correction: "none",
        seed: 4,
      },
      data,
    );
    result.regions.forEach((region, r) => {
      expect(region.p).toBe(expected.p[r]); // (full enumeration above)
    });
  });
});

describe("max-T with empty cells, two groups of unequal size, against all 7! orders", () => {
  // Patients are participants 0, 3 and 6; region 2 lacks patient 0 and control 5 (2 patients, 3 controls there).
  const data = withEmptyCells(permutationData(7, 22), emptyCells);
  const group = data.categoricalColumns.group;
  const models = data.regions.map((_, r) =>
    regionModel(data, r, (i) => [1, group[i] === "patient" ? 1 : 0], 1),
  );

  it("least squares (label permutation as Freedman–Lane without covariates): p and adjusted p exactly", () => {
    const expected = enumerateOrders(models, 7);
    const result = runModel(
      {
        kind: "two-group",
        group: "group",
        levels: ["patient", "control"],
        inference: "permutation",
        resamples: 6000,
        correction: "maxt",
        seed: 5,
      },
      data,
    );
    expectExactly(result, expected, [7, 6, 5, 6]);
  });

  it("Welch t (generic rearrangement test): p and adjusted p exactly", () => {
    // The generic test rearranges the values themselves: a_k receives the value of c_k.
    const welch = (m: RegionModel, y: readonly number[]) =>
      welchT(
        y.filter((_, j) => m.x[j][1] === 1),
        y.filter((_, j) => m.x[j][1] === 0),
      );
    const all = allPermutations(7);
    const expected = countAll(
      models,
      (m, k) => {
        const r = models.indexOf(m);
        return welch(
          m,
          regionSources(all[k], m.rows).map((u) => data.values[r][u]),
        );
      },
      all.length,
      welch,
    );
    const result = runModel(
      {
        kind: "two-group",
        group: "group",
        levels: ["patient", "control"],
        estimator: "welch",
        inference: "permutation",
        resamples: 6000,
        correction: "maxt",
        seed: 5,
      },
      data,
    );
    expectExactly(result, expected, [7, 6, 5, 6]);
  });
});

describe("max-T with empty cells, Freedman–Lane with a covariate, against all 7! orders", () => {
  const data = withEmptyCells(permutationData(7, 23), emptyCells);
  const age = data.numericColumns.age as number[];
  const motion = data.numericColumns.motion as number[];
  const models = data.regions.map((_, r) => regionModel(data, r, (i) => [1, age[i], motion[i]], 1));
  const expected = enumerateOrders(models, 7);

  it("p and max-T adjusted p equal the enumeration exactly", () => {
    const result = runModel(
      {
        kind: "association",
        predictor: "age",
        covariates: ["motion"],
        inference: "permutation",
        resamples: 5040,
        correction: "maxt",
        seed: 6,
      },
      data,
    );
    expectExactly(result, expected, [7, 6, 5, 6]);
  });

  it("a participant missing a covariate takes no part in the draw (it is in no region)", () => {
    // An eighth participant with values everywhere but no motion: dropped from every region.
    const withGap: FitData = {
      participants: [...data.participants, "sub-99"],
      regions: data.regions,
      values: data.values.map((v) => Float64Array.from([...v, 0.5])),
      numericColumns: { age: [...age, 30], motion: [...motion, null] },
      categoricalColumns: {
        group: [...(data.categoricalColumns.group as string[]), "control"],
        sex: [...(data.categoricalColumns.sex as string[]), "F"],
      },
    };
    const result = runModel(
      {
        kind: "association",
        predictor: "age",
        covariates: ["motion"],
        inference: "permutation",
        resamples: 5040,
        correction: "maxt",
        seed: 6,
      },
      withGap,
    );
    expectExactly(result, expected, [7, 6, 5, 6]);
  });
});

describe("max-T with empty cells, Monte Carlo", () => {
  // 12 participants: 12! orders exceed the 300 requested, so the identity and 300 random orders are used.
  const n = 12;
  const data = withEmptyCells(permutationData(n, 24), [
    [1, 2],
    [3, 2],
    [2, 0],
    [2, 5],
    [2, 11],
  ]);
  const age = data.numericColumns.age as number[];
  const motion = data.numericColumns.motion as number[];
  const models = data.regions.map((_, r) => regionModel(data, r, (i) => [1, age[i], motion[i]], 1));
  const spec: ModelSpecInput = {
    kind: "association",
    predictor: "age",
    covariates: ["motion"],
    inference: "permutation",
    resamples: 300,
    correction: "maxt",
    seed: 8,
  };

  it("follows the documented draw: σ is the inverse of the seeded walk's order, and (b + 1)/(m + 1)", () => {
    // The sequence of orders comes from the engine's documented walk; the rule and the refits are this file's.
    const walk = createRearranger({ kind: "permutations", n, resamples: 300, rng: createRng(8) });
    const sigmas: number[][] = [];
    for (let k = 0; k < walk.total; k++) {
      walk.next();
      const sigma = new Array<number>(n);
      walk.order.forEach((to, from) => {
        sigma[to] = from;
      });
      sigmas.push(sigma);
    }
    const reduced = models.map(reducedFit);
    const expected = countAll(
      models,
      (m, k) => {
        const r = models.indexOf(m);
        const c = regionSources(sigmas[k], m.rows);
        const ystar = m.rows.map(
          (_, j) => reduced[r].fitted[j] + reduced[r].residuals[m.rows.indexOf(c[j])],
        );
        return leastSquaresT(m, ystar);
      },
      sigmas.length,
    );
    const result = runModel(spec, data);
    result.regions.forEach((region, r) => {
      expect(region.p).toBe(expected.p[r]); // (refits above on the same draws)
      expect(region.pAdjusted).toBe(expected.pAdjusted[r]);
      expect(
        (region.permutation as { rearrangements: number; exact: boolean }).rearrangements,
      ).toBe(301);
      expect((region.permutation as { exact: boolean }).exact).toBe(false);
      expect((region.p * 301) % 1).toBeCloseTo(0, 9); // (b + 1)/(m + 1), Phipson & Smyth 2010
    });
  });

  it("is deterministic, and a region with every participant keeps the result it has alone", () => {
    const a = runModel(spec, data);
    const b = runModel(spec, data);
    expect(JSON.stringify(a)).toBe(JSON.stringify(b));
    const alone = runModel({ ...spec, regions: ["left insula"] }, data);
    expect(alone.regions[0].p).toBe(a.regions[0].p);
    expect((alone.regions[0].permutation as { observed: number }).observed).toBe(
      (a.regions[0].permutation as { observed: number }).observed,
    );
    expect(a.notes.some((note) => note.startsWith("Regions differ in participants"))).toBe(true);
  });
});

describe("permutation fits without empty cells are unchanged", () => {
  // Values recorded from the implementation before regions could differ in participants under max-T
  // (regression values, not an external reference).
  const recorded = expectedUnchanged as unknown as Record<
    string,
    [string, number, number, number, number, boolean][]
  >;
  it.each(unchangedCases.map((c) => [c.name, c] as const))("%s", (name, c) => {
    const result = runFit(modelSpecSchema.parse(c.spec), c.data());
    const now = result.regions.map((r) => {
      const perm = r.permutation as { observed: number; rearrangements: number; exact: boolean };
      return [r.region, r.p, r.pAdjusted, perm.observed, perm.rearrangements, perm.exact];
    });
    expect(now).toEqual(recorded[name]);
    expect(result.notes.some((note) => note.startsWith("Regions differ in participants"))).toBe(
      false,
    );
  });
});
