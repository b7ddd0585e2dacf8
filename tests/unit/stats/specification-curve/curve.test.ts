/**
 * The specification curve (kind "specification-curve"): every specification
 * against the engine's own ordinary fit, the count of specifications, the
 * summary shares by hand, the rule evaluation, and the joint test's null
 * draws (Simonsohn, Simmons & Nelson 2020, Nature Human Behaviour
 * 4:1208–1214).
 */
import { describe, expect, it } from "vitest";
import { meetsRule } from "../../../../contract/exclusion-rules";
import { specProblems } from "../../../../contract/fit-rules";
import { type FitData, type ModelSpecInput, modelSpecSchema } from "../../../../contract/spec";
import type { CurveSpecification } from "../../../../contract/specification-curve";
import { estimateRegionWork } from "../../../../server/stats/fit/estimate";
import { prepare } from "../../../../server/stats/fit/prepare";
import {
  curveNullBlock,
  fastNull,
  swappedNull,
} from "../../../../server/stats/fit/specification-curve";
import { runFit } from "../../../../server/stats/run-fit";
import { createRng, normalDraw } from "../../../../server/stats/rng";
import {
  curveStatistics,
  curveSummary,
  jointPValues,
} from "../../../../server/stats/specification-curve/joint";

function invented(n: number, slope: number, seed: number): FitData {
  const rng = createRng(seed);
  const participants = Array.from({ length: n }, (_, i) => `p${i + 1}`);
  const trait: (number | null)[] = [];
  const age: (number | null)[] = [];
  const fd: (number | null)[] = [];
  const site: (string | null)[] = [];
  const group: (string | null)[] = [];
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = normalDraw(rng);
    const a = 20 + 10 * rng.next();
    const f = 0.6 * rng.next();
    trait.push(i === 3 ? null : t);
    age.push(a);
    fd.push(i === 5 ? null : f);
    site.push(i % 3 === 0 ? "north" : "south");
    group.push(i % 2 === 0 ? "patient" : "control");
    y[i] = slope * t + 0.05 * a + 0.3 * normalDraw(rng) + (i % 2 === 0 ? slope : 0);
  }
  return {
    participants,
    regions: ["amygdala", "insula"],
    values: [y, Float64Array.from(y, (v) => -v)],
    numericColumns: { trait, age, mean_fd: fd },
    categoricalColumns: { site, group },
  };
}

const curveInput: ModelSpecInput = {
  kind: "specification-curve",
  regions: ["amygdala"],
  predictor: "trait",
  specifications: {
    estimators: ["ols", "huber", "rank"],
    covariateSets: [[], ["age"], ["age", "site"]],
    exclusionRules: [
      { column: "mean_fd", op: ">", value: 0.4, reason: "motion" },
      { column: "site", op: "==", value: "north", reason: "scanner change" },
    ],
  },
};

describe("specification curve", () => {
  const data = invented(60, 0.5, 7);
  const spec = modelSpecSchema.parse(curveInput);
  const result = runFit(spec, data);
  const specs = result.specifications as CurveSpecification[];

  it("has one specification per combination: 3 estimators × 3 covariate sets × 2² rule subsets", () => {
    // Exact enumeration: 3 × 3 × 4 = 36.
    expect(specs).toHaveLength(36);
    expect((result.summary as { count: number }).count).toBe(36);
    const keys = new Set(specs.map((s) => `${s.estimator}|${s.covariates}|${s.exclusions}`));
    expect(keys.size).toBe(36);
  });

  it("sorts the specifications by estimate", () => {
    for (let k = 1; k < specs.length; k++)
      expect(specs[k].estimate).toBeGreaterThanOrEqual(specs[k - 1].estimate);
  });

  it("gives every least-squares specification the estimate, interval and p of the ordinary association fit (exact comparison against the engine's own ordinary fit)", () => {
    const fd = data.numericColumns.mean_fd;
    const site = data.categoricalColumns.site;
    const ols = specs.filter((s) => s.estimator === "ols");
    expect(ols).toHaveLength(12);
    for (const s of ols) {
      // The exclusions written out by hand: fd > 0.4 (missing fd kept), site == north.
      const setAside = data.participants
        .filter((_, i) => {
          const motion = s.exclusions.includes(0) && fd[i] !== null && (fd[i] as number) > 0.4;
          const north = s.exclusions.includes(1) && site[i] === "north";
          return motion || north;
        })
        .map((participant) => ({ participant, reason: "excluded" }));
      const ordinary = runFit(
        modelSpecSchema.parse({
          kind: "association",
          regions: ["amygdala"],
          predictor: "trait",
          covariates: s.covariates,
          setAside,
        }),
        data,
      ).regions[0];
      const close = (a: number | null, b: number | null) =>
        expect(Math.abs((a as number) - (b as number))).toBeLessThanOrEqual(
          1e-9 * Math.max(1e-300, Math.abs(b as number)),
        );
      expect(s.n).toBe(ordinary.n);
      close(s.estimate, ordinary.estimate);
      close(s.ciLow, ordinary.ciLow);
      close(s.ciHigh, ordinary.ciHigh);
      close(s.p, ordinary.p);
    }
  });

  it("gives every specification, of every estimator, the numbers of the ordinary fit of its model with the switched-on rules as exclusionRules", () => {
    const rules = curveInput.specifications?.exclusionRules ?? [];
    const close = (a: number | null, b: number | null) =>
      expect(Math.abs((a as number) - (b as number))).toBeLessThanOrEqual(
        1e-9 * Math.max(1e-300, Math.abs(b as number)),
      );
    for (const s of specs) {
      const ordinary = runFit(
        modelSpecSchema.parse({
          kind: "association",
          regions: ["amygdala"],
          predictor: "trait",
          covariates: s.covariates,
          estimator: s.estimator,
          ...(s.exclusions.length > 0 ? { exclusionRules: s.exclusions.map((k) => rules[k]) } : {}),
        }),
        data,
      );
      const region = ordinary.regions[0];
      expect(s.n).toBe(region.n);
      close(s.estimate, region.estimate);
      close(s.ciLow, region.ciLow);
      close(s.ciHigh, region.ciHigh);
      close(s.p, region.p);
      // The ordinary fit names each switched-on rule; site == north leaves out 20 (every third of 60).
      const named = (ordinary.ruleExclusions ?? []) as {
        rule: { column: string };
        participants: string[];
      }[];
      expect(named.map((r) => r.rule.column)).toEqual(
        s.exclusions.map((k) => (k === 0 ? "mean_fd" : "site")),
      );
      for (const r of named) if (r.rule.column === "site") expect(r.participants).toHaveLength(20);
    }
  });

  it("leaves out, in an ordinary model, every participant meeting a rule and no one with a missing value", () => {
    const fd = data.numericColumns.mean_fd;
    const rules = curveInput.specifications?.exclusionRules ?? [];
    const res = runFit(
      modelSpecSchema.parse({
        kind: "association",
        regions: ["amygdala"],
        predictor: "trait",
        exclusionRules: rules,
      }),
      data,
    );
    const out = res.ruleExclusions as { rule: { column: string }; participants: string[] }[];
    // By hand: mean_fd > 0.4 among those with a value (p6 has none); site north = p1, p4, …, p58.
    const motion = data.participants.filter((_, i) => fd[i] !== null && (fd[i] as number) > 0.4);
    const north = data.participants.filter((_, i) => i % 3 === 0);
    expect(out.map((r) => r.rule.column)).toEqual(["mean_fd", "site"]);
    expect(out[0].participants).toEqual(motion);
    expect(out[0].participants).not.toContain("p6");
    expect(out[1].participants).toEqual(north);
    const left = new Set([...motion, ...north, "p4"]);
    expect(res.regions[0].n).toBe(60 - left.size);
    // A two-group model takes the same rules; other kinds refuse them, naming the field.
    expect(
      specProblems(modelSpecSchema.parse({ kind: "one-sample", exclusionRules: [rules[0]] })).map(
        (p) => p.field,
      ),
    ).toEqual(["exclusionRules"]);
    expect(() =>
      runFit(
        modelSpecSchema.parse({
          kind: "two-group",
          regions: ["amygdala"],
          group: "group",
          exclusionRules: [{ column: "handedness", op: "==", value: "left", reason: "x" }],
        }),
        data,
      ),
    ).toThrow(/exclusionRules: no column 'handedness'/);
  });

  it("drops the participants each switched-on rule names and no others", () => {
    const none = specs.find(
      (s) => s.estimator === "ols" && s.covariates.length === 0 && s.exclusions.length === 0,
    );
    const north = specs.find(
      (s) => s.estimator === "ols" && s.covariates.length === 0 && s.exclusions.join() === "1",
    );
    // 59 with a trait (p4 missing); north = indices 0, 3, 6, …, 57 (20), p4 among them.
    expect(none?.n).toBe(59);
    expect(north?.n).toBe(59 - 19);
  });

  it("computes the summary shares as counted by hand on a small case", () => {
    // Hand count: estimates 2, −1, 0.5, −3, 4 with p .01, .20, .04, .03, .50.
    // Median 0.5; positive 3/5; significant positive (2, 0.5) 2/5; significant negative (−3) 1/5.
    const s = curveSummary([
      { estimate: 2, p: 0.01 },
      { estimate: -1, p: 0.2 },
      { estimate: 0.5, p: 0.04 },
      { estimate: -3, p: 0.03 },
      { estimate: 4, p: 0.5 },
    ]);
    expect(s).toEqual({
      count: 5,
      medianEstimate: 0.5,
      sharePositive: 0.6,
      shareSignificantPositive: 0.4,
      shareSignificantNegative: 0.2,
    });
    // The engine's summary is the same count on its own specifications.
    const engine = result.summary as ReturnType<typeof curveSummary>;
    expect(engine.shareSignificantPositive).toBe(
      specs.filter((x) => x.p < 0.05 && x.estimate > 0).length / specs.length,
    );
  });

  it("computes Stouffer's Z of the one-sided p-values in the dominant direction", () => {
    // By hand: p = .05 and .05 both positive → one-sided .025 each, z = 1.959964; Z = 2·1.959964/√2 = 2.771808.
    // Φ⁻¹(.975) = 1.959964 (normal table, Abramowitz & Stegun 1964, Table 26.5).
    const st = curveStatistics([1, 2], [0.05, 0.05]);
    expect(st.stoufferZ).toBeCloseTo(2.771808, 5);
    expect(st.direction).toBe(1);
    expect(st.shareDominant).toBe(0);
  });
});

describe("specification curve: the joint test", () => {
  const base: ModelSpecInput = {
    kind: "specification-curve",
    regions: ["amygdala"],
    predictor: "trait",
    inference: "permutation",
    resamples: 99,
    specifications: {
      estimators: ["ols"],
      covariateSets: [[], ["age"]],
      exclusionRules: [{ column: "mean_fd", op: ">", value: 0.4, reason: "motion" }],
    },
  };

  it("gives the floor 1/(m + 1) for a strong effect", () => {
    const res = runFit(modelSpecSchema.parse(base), invented(60, 1, 3));
    const joint = res.jointTest as {
      pMedian: number;
      pShareSignificant: number;
      pStouffer: number;
    };
    // Exact: no permutation of the trait reaches the observed median or Z, so b = 0 and p = 1/100.
    expect(joint.pMedian).toBe(1 / 100);
    expect(joint.pStouffer).toBe(1 / 100);
    // The share takes only K + 1 values (0, 1/4, …, 1): a null curve significant everywhere ties
    // the observed share of 1, so its p is small but need not be the floor.
    expect(joint.pShareSignificant).toBeLessThanOrEqual(0.05);
  });

  it("gives a joint p that is not small on null data", () => {
    const res = runFit(modelSpecSchema.parse(base), invented(60, 0, 11));
    const joint = res.jointTest as { pMedian: number; pStouffer: number };
    // Common practice, no source: with no effect the p-values are uniform; this seed gives no small value.
    expect(joint.pMedian).toBeGreaterThan(0.1);
    expect(joint.pStouffer).toBeGreaterThan(0.1);
  });

  it("runs a two-group curve against the ordinary two-group fit", () => {
    const data = invented(40, 1, 5);
    const res = runFit(
      modelSpecSchema.parse({
        kind: "specification-curve",
        regions: ["amygdala"],
        group: "group",
        levels: ["patient", "control"],
        specifications: { estimators: ["ols", "welch"] },
      }),
      data,
    );
    const specs = res.specifications as CurveSpecification[];
    expect(specs).toHaveLength(2);
    const ordinary = runFit(
      modelSpecSchema.parse({
        kind: "two-group",
        regions: ["amygdala"],
        group: "group",
        levels: ["patient", "control"],
      }),
      data,
    ).regions[0];
    const ols = specs.find((s) => s.estimator === "ols") as CurveSpecification;
    expect(ols.estimate).toBe(ordinary.estimate);
    expect(ols.p).toBe(ordinary.p);
  });

  it("gives every two-group specification with rules the numbers of the ordinary two-group fit of its model", () => {
    const data = invented(40, 1, 5);
    const motion = { column: "mean_fd", op: ">" as const, value: 0.45, reason: "motion" };
    const res = runFit(
      modelSpecSchema.parse({
        kind: "specification-curve",
        regions: ["amygdala"],
        group: "group",
        levels: ["patient", "control"],
        specifications: {
          estimators: ["ols", "welch", "huber"],
          covariateSets: [[]],
          exclusionRules: [motion],
        },
      }),
      data,
    );
    const specs = res.specifications as CurveSpecification[];
    expect(specs).toHaveLength(6);
    for (const s of specs) {
      const region = runFit(
        modelSpecSchema.parse({
          kind: "two-group",
          regions: ["amygdala"],
          group: "group",
          levels: ["patient", "control"],
          estimator: s.estimator,
          ...(s.exclusions.length > 0 ? { exclusionRules: [motion] } : {}),
        }),
        data,
      ).regions[0];
      expect(s.n).toBe(region.n);
      for (const key of ["estimate", "ciLow", "ciHigh", "p"] as const)
        expect(Math.abs((s[key] as number) - (region[key] as number))).toBeLessThanOrEqual(
          1e-9 * Math.abs(region[key] as number),
        );
    }
    // The rule leaves some out: the specifications with it on have fewer participants.
    const on = specs.find((s) => s.estimator === "ols" && s.exclusions.length === 1);
    const off = specs.find((s) => s.estimator === "ols" && s.exclusions.length === 0);
    expect((on as CurveSpecification).n).toBeLessThan((off as CurveSpecification).n);
  });
});

describe("specification curve: rules", () => {
  it("refuses an estimator the question does not take, a second region and covariates outside the sets", () => {
    const problems = specProblems(
      modelSpecSchema.parse({
        kind: "specification-curve",
        regions: ["a", "b"],
        predictor: "trait",
        covariates: ["age"],
        specifications: { estimators: ["welch"] },
      }),
    );
    const fields = problems.map((p) => p.field);
    expect(fields).toContain("specifications.estimators.0");
    expect(fields).toContain("regions");
    expect(fields).toContain("covariates");
  });

  it("refuses specifications on another kind and two groups without levels", () => {
    expect(
      specProblems(
        modelSpecSchema.parse({ kind: "association", predictor: "t", specifications: {} }),
      ).map((p) => p.field),
    ).toContain("specifications");
    expect(
      specProblems(
        modelSpecSchema.parse({ kind: "specification-curve", regions: ["a"], group: "g" }),
      ).map((p) => p.field),
    ).toContain("levels");
  });

  it("defaults the null draws of a curve to 500", () => {
    expect(
      modelSpecSchema.parse({ kind: "specification-curve", regions: ["a"], predictor: "t" })
        .resamples,
    ).toBe(500);
  });

  it("evaluates rules: a missing value is never excluded; categories only by == and !=", () => {
    const rule = { column: "fd", op: ">" as const, value: 0.5, reason: "motion" };
    expect(meetsRule(rule, 0.6)).toBe(true);
    expect(meetsRule(rule, 0.5)).toBe(false);
    expect(meetsRule(rule, null)).toBe(false);
    expect(meetsRule(rule, Number.NaN)).toBe(false);
    expect(meetsRule({ column: "s", op: "!=", value: "a", reason: "r" }, "b")).toBe(true);
    expect(meetsRule({ column: "s", op: "<", value: "a", reason: "r" }, "b")).toBe(false);
  });
});

describe("specification curve: null draws without refitting", () => {
  it("gives each least-squares and partial-Spearman null draw the estimate and p of the engine's own ordinary fit on the permuted trait", () => {
    const data = invented(80, 0.3, 21);
    const trait = (data.numericColumns.trait as (number | null)[]).map((v) => v ?? 0.1);
    const complete: FitData = { ...data, numericColumns: { ...data.numericColumns, trait } };
    const rng = createRng(4);
    const perm = Int32Array.from({ length: 80 }, (_, i) => i);
    rng.shuffle(perm);
    const permuted = Array.from(perm, (j) => trait[j]);
    for (const estimator of ["ols", "rank"] as const)
      for (const covariates of [["age"], ["age", "site"]]) {
        const prep = prepare(
          modelSpecSchema.parse({
            kind: "association",
            regions: ["amygdala"],
            predictor: "trait",
            estimator,
            covariates,
            setAside: [{ participant: "p7", reason: "excluded" }],
          }),
          complete,
        );
        const quick = fastNull(prep, 0, trait);
        expect(quick).not.toBeNull();
        const fast = (quick as NonNullable<typeof quick>)(perm);
        const full = estimateRegionWork({ ...prep, predictor: permuted }, 0, new Map()).result;
        expect(Math.abs(fast.estimate - full.estimate)).toBeLessThanOrEqual(
          1e-9 * Math.abs(full.estimate),
        );
        expect(Math.abs(fast.p - full.p)).toBeLessThanOrEqual(1e-9 * full.p);
      }
  });
});

describe("specification curve: null draws with the design reused", () => {
  it("gives each robust, rank and correlation null draw the estimate and p of the engine's own ordinary fit on the permuted trait", () => {
    const data = invented(60, 0.3, 23);
    const untied = (data.numericColumns.trait as (number | null)[]).map((v) => v ?? -0.2);
    // Rounded to halves: tied ranks (Spearman's p then from t, untied from the Edgeworth series).
    const tied = untied.map((v) => Math.round(v * 2) / 2);
    // Three draws in a row: a specification's kept design and workspace serve every draw.
    const rng = createRng(9);
    const perms = [0, 1, 2].map(() => {
      const perm = Int32Array.from({ length: 60 }, (_, i) => i);
      rng.shuffle(perm);
      return perm;
    });
    const cases = [
      { estimator: "huber", covariates: ["age"] },
      { estimator: "bisquare", covariates: ["age", "site"] },
      { estimator: "rank", covariates: [] },
      { estimator: "skipped", covariates: [] },
      { estimator: "bend", covariates: [] },
    ] as const;
    const runs = cases.flatMap((c) =>
      (c.estimator === "rank" ? [untied, tied] : [untied]).map((trait) => ({ ...c, trait })),
    );
    for (const { estimator, covariates, trait } of runs) {
      const complete: FitData = { ...data, numericColumns: { ...data.numericColumns, trait } };
      const prep = prepare(
        modelSpecSchema.parse({
          kind: "association",
          regions: ["amygdala"],
          predictor: "trait",
          estimator,
          covariates: [...covariates],
        }),
        complete,
      );
      const quick = swappedNull(prep, 0, trait);
      expect(quick).not.toBeNull();
      for (const perm of perms) {
        const fast = (quick as NonNullable<typeof quick>)(perm);
        const permuted = Array.from(perm, (j) => trait[j]);
        const full = estimateRegionWork({ ...prep, predictor: permuted }, 0, new Map()).result;
        if (estimator === "huber" || estimator === "bisquare") {
          // The same IRLS with normal-equation steps: rounding apart (both stop at the same step here).
          expect(Math.abs(fast.estimate - full.estimate), estimator).toBeLessThan(
            1e-10 * Math.abs(full.estimate),
          );
          expect(Math.abs(fast.p - full.p), estimator).toBeLessThan(1e-10 * full.p);
        } else {
          // The same estimator call on the same numbers: equal exactly.
          expect(fast.estimate, estimator).toBe(full.estimate);
          expect(fast.p, estimator).toBe(full.p);
        }
      }
    }
  });
});

describe("specification curve: null draws in blocks (rearrangementStreams blocks-v1)", () => {
  // No effect, so the null draws decide the p-values (not all at their floor 1/61).
  const data = invented(40, 0, 9);
  const blocked = modelSpecSchema.parse({
    ...curveInput,
    specifications: { ...curveInput.specifications, estimators: ["ols", "rank"] },
    inference: "permutation",
    resamples: 60,
    seed: 12,
    rearrangementStreams: "blocks-v1",
  });

  it("gives the joint test of its blocks made apart and merged in any order", () => {
    const whole = runFit(blocked, data).jointTest as Record<string, number | string>;
    // 60 draws = blocks of 25, 25 and 10; merged last block first.
    const nulls = [2, 0, 1].flatMap((b) => curveNullBlock(blocked, data, b));
    expect(nulls).toHaveLength(60);
    const specs = runFit({ ...blocked, inference: "parametric" }, data)
      .specifications as CurveSpecification[];
    const observed = curveStatistics(
      specs.map((s) => s.estimate),
      specs.map((s) => s.p),
    );
    // p = (1 + b)/(m + 1) counts null draws, so the merge order cannot matter.
    expect(jointPValues(observed, nulls)).toEqual({
      pMedian: whole.pMedian,
      pShareSignificant: whole.pShareSignificant,
      pStouffer: whole.pStouffer,
    });
    expect(() => curveNullBlock(blocked, data, 3)).toThrow(/outside the fit's 60 null draws/);
  });

  it("gives a block the same numbers whether the thread's previous block was of the same curve or not", () => {
    const other = modelSpecSchema.parse({ ...blocked, seed: 13 });
    // Every trait value present, so the draws run on the kept designs (not refitted from the data).
    const trait = (data.numericColumns.trait as (number | null)[]).map((v) => v ?? -0.2);
    const complete: FitData = { ...data, numericColumns: { ...data.numericColumns, trait } };
    // Fresh: the previous block belongs to another curve, so block 1 is prepared anew.
    curveNullBlock(other, complete, 0);
    const fresh = curveNullBlock(blocked, complete, 1);
    // Kept: the previous block is of this curve (passed as copies, as a worker thread receives them).
    curveNullBlock(structuredClone(blocked), structuredClone(complete), 0);
    expect(curveNullBlock(structuredClone(blocked), structuredClone(complete), 1)).toEqual(fresh);
    // Data changed in place after a block: the kept setup is not used for the changed data.
    const changed = structuredClone(complete);
    curveNullBlock(other, complete, 0);
    curveNullBlock(blocked, changed, 1);
    changed.values[0][0] += 5;
    const afterChange = curveNullBlock(blocked, changed, 1);
    curveNullBlock(other, complete, 0);
    expect(afterChange).toEqual(curveNullBlock(blocked, changed, 1));
    expect(afterChange).not.toEqual(fresh);
  });

  it("keeps one stream for a recipe written before blocks (same numbers as before)", () => {
    const { rearrangementStreams: _, ...legacy } = blocked;
    const a = runFit(legacy as typeof blocked, data).jointTest as { stoufferZ: number };
    // The one-stream joint test as the engine gave it before blocks existed (run then, pinned here).
    expect(a).toMatchObject({ shareSignificantDominant: 0.20833333333333334, pMedian: 4 / 61 });
    expect(a.stoufferZ).toBeCloseTo(7.088255955131922, 12);
    const b = runFit(blocked, data).jointTest;
    expect(b).not.toEqual(a);
    expect(() => curveNullBlock(legacy as typeof blocked, data, 0)).toThrow(/blocks-v1/);
  });
});
