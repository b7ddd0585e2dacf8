import { describe, expect, it } from "vitest";
import { type FitData, type ModelSpecInput, modelSpecSchema } from "../../../contract/spec";
import { pearsonCorrelation } from "../../../server/stats/correlation";
import { StatsError } from "../../../server/stats/errors";
import { intraclassCorrelations } from "../../../server/stats/icc";
import { mannWhitneyU } from "../../../server/stats/mann-whitney";
import { weightedLinearModel } from "../../../server/stats/meta-regression";
import { oneSampleTTest } from "../../../server/stats/one-sample-t";
import { createRng } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";
import { studentTTest, welchTTest } from "../../../server/stats/two-sample-t";
import { subsets } from "./reference-data";

/** Invented demo-style data from a seeded generator (not a reference data set). */
function makeData(n = 24, seed = 11): FitData {
  const rng = createRng(seed);
  const normal = () => {
    let s = 0;
    for (let i = 0; i < 12; i++) s += rng.next();
    return s - 6;
  };
  const participants = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
  const age: (number | null)[] = participants.map(() => 20 + Math.floor(rng.next() * 40));
  const motion: (number | null)[] = participants.map(() => Math.round(rng.next() * 100) / 100);
  const group: (string | null)[] = participants.map((_, i) =>
    i % 3 === 0 ? "patient" : "control",
  );
  const sex: (string | null)[] = participants.map(() => (rng.next() < 0.5 ? "F" : "M"));
  const regions = ["left insula", "right insula", "precuneus"];
  const values = regions.map((_, r) =>
    Float64Array.from(participants, (_, i) => 0.4 + 0.03 * r * (age[i] as number) + normal()),
  );
  const standardErrors = regions.map(() =>
    Float64Array.from(participants, () => 0.2 + rng.next() * 0.3),
  );
  const sessions = {
    labels: ["ses-1", "ses-2"],
    values: regions.map((_, r) => [
      values[r],
      Float64Array.from(values[r], (v) => v + 0.5 * normal()),
    ]),
  };
  return {
    participants,
    regions,
    values,
    standardErrors,
    sessions,
    numericColumns: { age, motion },
    categoricalColumns: { group, sex },
  };
}

const spec = (input: ModelSpecInput) => modelSpecSchema.parse(input);
const region = (res: ReturnType<typeof runFit>, name: string) => {
  const r = res.regions.find((x) => x.region === name);
  if (!r) throw new Error(`no region ${name}`);
  return r;
};

describe("runFit: parametric results equal the underlying methods", () => {
  const data = makeData();
  it("one-sample t", () => {
    const res = runFit(spec({ kind: "one-sample" }), data);
    const t = oneSampleTTest(data.values[1]);
    const r = region(res, "right insula");
    expect(r.n).toBe(24);
    expect(r.estimate).toBeCloseTo(t.estimate, 12);
    expect(r.statistic).toBeCloseTo(t.t, 10);
    expect(r.p).toBeCloseTo(t.p, 12);
    expect(r.ciLow).toBeCloseTo(t.ciLow, 10);
    expect(res.participants.length).toBe(3 * 24);
  });
  it("two groups of unequal size (8 patients, 16 controls): Student, Welch and Mann–Whitney", () => {
    const g = data.categoricalColumns.group;
    const a = Array.from(data.values[0]).filter((_, i) => g[i] === "patient");
    const b = Array.from(data.values[0]).filter((_, i) => g[i] === "control");
    expect(a.length).toBe(8);
    const ols = region(
      runFit(spec({ kind: "two-group", group: "group", levels: ["patient", "control"] }), data),
      "left insula",
    );
    expect(ols.estimate).toBeCloseTo(studentTTest(a, b).estimate, 12);
    expect(ols.p).toBeCloseTo(studentTTest(a, b).p, 10);
    expect((ols.hedgesG as { value: number }).value).toBeLessThan(
      Math.abs((ols.cohensD as { value: number }).value) + 1e-12,
    );
    const welch = region(
      runFit(
        spec({
          kind: "two-group",
          group: "group",
          levels: ["patient", "control"],
          estimator: "welch",
        }),
        data,
      ),
      "left insula",
    );
    expect(welch.df).toBeCloseTo(welchTTest(a, b).df, 10);
    expect(welch.p).toBeCloseTo(welchTTest(a, b).p, 12);
    const rank = region(
      runFit(
        spec({
          kind: "two-group",
          group: "group",
          levels: ["patient", "control"],
          estimator: "rank",
        }),
        data,
      ),
      "left insula",
    );
    expect(rank.statistic).toBe(mannWhitneyU(a, b).u);
    expect(rank.p).toBeCloseTo(mannWhitneyU(a, b).p, 12);
  });
  it("association: slope, Pearson r and its interval without covariates", () => {
    const res = runFit(spec({ kind: "association", predictor: "age" }), data);
    const r = region(res, "precuneus");
    const c = pearsonCorrelation(data.numericColumns.age as number[], data.values[2]);
    expect(r.r).toBeCloseTo(c.r, 12);
    expect(r.rCiLow).toBeCloseTo(c.ciLow as number, 10);
    expect(r.p).toBeCloseTo(c.p, 10);
    expect(r.standardizedSlope).toBeCloseTo(c.r, 12); // (simple regression: standardised slope = r, exact algebra)
  });
  it("weights 'first-level-se' delegate to the weighted meta-regression", () => {
    const res = runFit(
      spec({ kind: "one-sample", weights: "first-level-se", tau2Method: "dl" }),
      data,
    );
    const se = data.standardErrors?.[0] as Float64Array;
    const direct = weightedLinearModel({
      y: data.values[0],
      se,
      X: Array.from({ length: 24 }, () => [1]),
      tested: 0,
      tau2Method: "dl",
      smallSample: "none",
    });
    const r = region(res, "left insula");
    expect(r.estimate).toBeCloseTo(direct.estimate, 12);
    expect(r.tau2).toBeCloseTo(direct.tau2, 12);
  });
  it("kind 'reliability' delegates to the intraclass correlations", () => {
    const res = runFit(spec({ kind: "reliability" }), data);
    const s = data.sessions as NonNullable<FitData["sessions"]>;
    const matrix = Array.from({ length: 24 }, (_, i) => [s.values[1][0][i], s.values[1][1][i]]);
    const direct = intraclassCorrelations(matrix);
    const r = region(res, "right insula");
    expect(r.estimate).toBeCloseTo(direct.icc21.value, 12);
    expect(res.participants).toEqual([]);
  });
});

describe("runFit: participants", () => {
  it("applies set-aside (all regions and one region) and listwise deletion, and reports n", () => {
    const data = makeData();
    const values = data.values.map((v) => Float64Array.from(v));
    values[1][4] = Number.NaN;
    const age = (data.numericColumns.age as (number | null)[]).slice();
    age[6] = null;
    const d2: FitData = { ...data, values, numericColumns: { ...data.numericColumns, age } };
    const res = runFit(
      spec({
        kind: "association",
        predictor: "age",
        setAside: [
          { participant: "sub-01", reason: "excessive head motion, decided before analysis" },
          { participant: "sub-02", region: "precuneus", reason: "signal dropout in this region" },
        ],
      }),
      d2,
    );
    expect(region(res, "left insula").n).toBe(22); // minus sub-01 and sub-07 (no age)
    expect(region(res, "right insula").n).toBe(21); // also minus sub-05 (missing value)
    expect(region(res, "precuneus").n).toBe(21); // also minus sub-02 there
    const ids = res.participants.filter((p) => p.region === "precuneus").map((p) => p.participant);
    expect(ids).not.toContain("sub-01");
    expect(ids).not.toContain("sub-02");
    expect(ids).not.toContain("sub-07");
  });
  it("the only member of a category level has leverage 1 and empty residual measures — never NaN", () => {
    const data = makeData();
    const site = data.participants.map((_, i) =>
      i === 5 ? "site-c" : i % 2 ? "site-a" : "site-b",
    );
    const d2: FitData = { ...data, categoricalColumns: { ...data.categoricalColumns, site } };
    const res = runFit(spec({ kind: "association", predictor: "age", covariates: ["site"] }), d2);
    const row = res.participants.find(
      (p) => p.participant === "sub-06" && p.region === "left insula",
    );
    expect(row?.leverage).toBe(1);
    expect(row?.flags).toContain("leverage");
    expect(row?.studentizedResidual).toBeNull();
    expect(row?.cooksDistance).toBeNull();
    expect(JSON.stringify(res)).not.toMatch(/NaN|Infinity/);
  });
});

describe("runFit: refusals name the field or the region", () => {
  const data = makeData();
  const cases: [ModelSpecInput, string][] = [
    [
      { kind: "one-sample", regions: ["cerebellum"] },
      "regions: no region 'cerebellum' in the brain table",
    ],
    [
      { kind: "association", predictor: "height" },
      "predictor: no column 'height' in the participant sheet",
    ],
    [
      { kind: "association", predictor: "sex" },
      "predictor: column 'sex' of the participant sheet is a category; an association needs a numeric trait",
    ],
    [{ kind: "two-group", group: "arm" }, "group: no column 'arm' in the participant sheet"],
    [
      { kind: "two-group", group: "group", levels: ["patient", "sibling"] },
      "levels: level 'sibling' is not present in column 'group'",
    ],
    [
      { kind: "association", predictor: "age", covariates: ["iq"] },
      "covariates: no column 'iq' in the participant sheet",
    ],
    [
      { kind: "association", predictor: "age", estimator: "welch" },
      "estimator: 'welch' is not available for kind 'association'",
    ],
    [
      { kind: "two-group", group: "group", estimator: "welch", covariates: ["age"] },
      "covariates: estimator 'welch' does not take covariates",
    ],
    [
      { kind: "one-sample", correction: "maxt" },
      "correction: max-T correction requires permutation inference",
    ],
    [
      { kind: "one-sample", setAside: [{ participant: "sub-99", reason: "x" }] },
      "setAside: unknown participant 'sub-99'",
    ],
  ];
  it.each(cases)("%j", (input, message) => {
    expect(() => runFit(spec(input), data)).toThrow(message);
  });
  it("too few participants names the region", () => {
    const setAside = data.participants
      .slice(0, 23)
      .map((participant) => ({ participant, region: "precuneus", reason: "test" }));
    expect(() => runFit(spec({ kind: "one-sample", setAside }), data)).toThrow(
      "region 'precuneus': too few participants (n = 1; at least 2 needed)",
    );
  });
  it("max-T takes regions that differ in participants (one region fitted without a participant)", () => {
    const s = spec({
      kind: "one-sample",
      inference: "permutation",
      correction: "maxt",
      resamples: 99,
      setAside: [{ participant: "sub-03", region: "precuneus", reason: "test" }],
    });
    const res = runFit(s, data);
    expect(region(res, "precuneus").n).toBe(23);
    expect(region(res, "left insula").n).toBe(24);
    for (const r of res.regions) expect(r.pAdjusted).toBeGreaterThanOrEqual(r.p); // (max-T: the maximum over regions is at least the region's own statistic)
  });
  it("a cancelled fit throws with code 'cancelled'", () => {
    try {
      runFit(spec({ kind: "one-sample" }), data, { shouldCancel: () => true });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(StatsError);
      expect((e as StatsError).code).toBe("cancelled");
    }
  });
});

describe("runFit: resampling inference", () => {
  it("two groups of 3 and 5: exact label permutation equals enumeration of the C(8, 3) assignments", () => {
    const data = makeData(8, 5);
    const g = data.categoricalColumns.group; // patients are sub-01, sub-04, sub-07
    const res = runFit(
      spec({
        kind: "two-group",
        group: "group",
        levels: ["patient", "control"],
        inference: "permutation",
        resamples: 1000,
      }),
      data,
    );
    const y = Array.from(data.values[0]);
    const tObs = Math.abs(
      studentTTest(
        y.filter((_, i) => g[i] === "patient"),
        y.filter((_, i) => g[i] !== "patient"),
      ).t,
    );
    let extreme = 0;
    let total = 0;
    for (const s of subsets(8, 3)) {
      const a = s.map((i) => y[i]);
      const b = y.filter((_, i) => !s.includes(i));
      if (Math.abs(studentTTest(a, b).t) >= tObs * (1 - 1e-10)) extreme++;
      total++;
    }
    const r = region(res, "left insula");
    expect(r.p).toBeCloseTo(extreme / total, 12); // (exact enumeration of 56 assignments)
    expect((r.permutation as { exact: boolean }).exact).toBe(true);
    const h = r.nullHistogram as { edges: number[]; counts: number[] };
    expect(h.counts.length).toBe(40);
    expect(h.edges.length).toBe(41);
    expect(h.counts.reduce((a, b) => a + b, 0)).toBe(56);
  });
  it("max-T adjusted p is never below the region's own p", () => {
    const data = makeData();
    for (const estimator of ["ols", "rank"] as const) {
      const res = runFit(
        spec({
          kind: "association",
          predictor: "age",
          estimator,
          inference: "permutation",
          resamples: 199,
          correction: "maxt",
        }),
        data,
      );
      for (const r of res.regions) expect(r.pAdjusted).toBeGreaterThanOrEqual(r.p - 1e-12);
    }
  });
  it("is deterministic: the same recipe gives byte-identical JSON", () => {
    const data = makeData();
    for (const input of [
      { kind: "association", predictor: "age", covariates: ["sex", "motion"], correction: "holm" },
      { kind: "association", predictor: "age", inference: "permutation", resamples: 199, seed: 42 },
      {
        kind: "two-group",
        group: "group",
        estimator: "huber",
        inference: "bootstrap",
        resamples: 200,
        seed: 7,
      },
    ] as ModelSpecInput[]) {
      const a = JSON.stringify(runFit(spec(input), data));
      const b = JSON.stringify(runFit(spec(input), data));
      expect(a).toBe(b);
    }
  });
  it("reports progress up to 1", () => {
    const seen: number[] = [];
    runFit(spec({ kind: "one-sample", inference: "permutation", resamples: 99 }), makeData(), {
      onProgress: (f) => seen.push(f),
    });
    expect(seen[seen.length - 1]).toBe(1);
    expect(Math.min(...seen)).toBeGreaterThanOrEqual(0);
  });
});
