import { sampleRankCorrelation } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { type FitData, type ModelSpecInput, modelSpecSchema } from "../../../contract/spec";
import { studentTQuantile } from "../../../server/stats/distributions";
import { createRng } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";

/** Invented data from a seeded generator (not a reference data set). */
function makeData(
  n: number,
  seed: number,
): FitData & { age: number[]; score: number[]; group: string[] } {
  const rng = createRng(seed);
  const normal = () => {
    let s = 0;
    for (let i = 0; i < 12; i++) s += rng.next();
    return s - 6;
  };
  const participants = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
  const age = participants.map(() => 20 + rng.int(45) + rng.next());
  const score = participants.map(() => rng.next() * 30);
  const group = participants.map((_, i) => (i % 5 < 2 ? "patient" : "control"));
  const y = Float64Array.from(
    participants,
    (_, i) =>
      0.05 * age[i] +
      (group[i] === "patient" ? 0.8 : 0) +
      0.02 * score[i] * (group[i] === "patient" ? 2 : 1) +
      normal(),
  );
  return {
    participants,
    regions: ["anterior cingulate"],
    values: [y],
    numericColumns: { age, score },
    categoricalColumns: { group },
    age,
    score,
    group,
  };
}
const spec = (input: ModelSpecInput) => modelSpecSchema.parse(input);

const sum = (v: number[]) => v.reduce((a, b) => a + b, 0);
const meanOf = (v: number[]) => sum(v) / v.length;
const sxy = (x: number[], y: number[]) => {
  const mx = meanOf(x);
  const my = meanOf(y);
  return sum(x.map((v, i) => (v - mx) * (y[i] - my)));
};

describe("covariate-adjusted group difference (ANCOVA)", () => {
  it("equals (ȳ1 − ȳ2) − b_w(x̄1 − x̄2) with the pooled within-group slope", () => {
    const d = makeData(30, 3);
    const y = Array.from(d.values[0]);
    const inA = (i: number) => d.group[i] === "patient";
    const ya = y.filter((_, i) => inA(i));
    const yb = y.filter((_, i) => !inA(i));
    const xa = d.age.filter((_, i) => inA(i));
    const xb = d.age.filter((_, i) => !inA(i));
    // (Snedecor & Cochran 1989, "Statistical Methods", §18.3: adjusted difference, exact algebra)
    const bw = (sxy(xa, ya) + sxy(xb, yb)) / (sxy(xa, xa) + sxy(xb, xb));
    const adjusted = meanOf(ya) - meanOf(yb) - bw * (meanOf(xa) - meanOf(xb));
    const r = runFit(
      spec({
        kind: "two-group",
        group: "group",
        levels: ["patient", "control"],
        covariates: ["age"],
      }),
      d,
    ).regions[0];
    expect(r.estimate).toBeCloseTo(adjusted, 10);
    expect(r.df).toBe(27);
    expect(r.method).toContain("ANCOVA");
  });
});

describe("group × trait interaction", () => {
  it("the interaction coefficient is the difference of the two groups' own slopes", () => {
    const d = makeData(40, 9);
    const y = Array.from(d.values[0]);
    const slope = (keep: (i: number) => boolean) => {
      const xs = d.score.filter((_, i) => keep(i));
      const ys = y.filter((_, i) => keep(i));
      return sxy(xs, ys) / sxy(xs, xs);
    };
    // full interaction without other covariates = separate regressions per group (exact algebra)
    const expected =
      slope((i) => d.group[i] === "patient") - slope((i) => d.group[i] !== "patient");
    const r = runFit(
      spec({
        kind: "association",
        predictor: "score",
        group: "group",
        levels: ["patient", "control"],
        interaction: true,
      }),
      d,
    ).regions[0];
    expect(r.estimate).toBeCloseTo(expected, 10);
  });
});

describe("partial Spearman correlation", () => {
  it("with one numeric covariate equals the first-order partial of the rank correlations", () => {
    const d = makeData(25, 21);
    const y = Array.from(d.values[0]);
    const rxy = sampleRankCorrelation(d.score, y);
    const rxz = sampleRankCorrelation(d.score, d.age);
    const ryz = sampleRankCorrelation(y, d.age);
    // r_xy·z = (r_xy − r_xz r_yz)/√((1 − r_xz²)(1 − r_yz²)) (Yule's partial correlation formula, exact algebra)
    const partial = (rxy - rxz * ryz) / Math.sqrt((1 - rxz * rxz) * (1 - ryz * ryz));
    const r = runFit(
      spec({ kind: "association", predictor: "score", covariates: ["age"], estimator: "rank" }),
      d,
    ).regions[0];
    expect(r.estimate).toBeCloseTo(partial, 10);
    expect(r.df).toBe(22);
  });
});

describe("outlier flag", () => {
  it("flags a planted outlier by the Bonferroni rule and reports the sensitivity refit", () => {
    const d = makeData(30, 5);
    const values = Float64Array.from(d.values[0]);
    values[10] += 25;
    const res = runFit(spec({ kind: "association", predictor: "age" }), { ...d, values: [values] });
    const crit = studentTQuantile(1 - 0.05 / (2 * 30), 30 - 2 - 1);
    for (const p of res.participants) {
      expect(p.flags.includes("outlier")).toBe(Math.abs(p.studentizedResidual as number) > crit);
    }
    expect(res.participants[10].flags).toContain("outlier");
    const sens = res.regions[0].sensitivity as { excluded: string[]; n: number };
    expect(sens.excluded).toContain("sub-11");
    expect(sens.n).toBe(30 - sens.excluded.length);
  });

  it("refits exactly as a fit of the same model without the excluded participants", () => {
    // Common practice, no source: the sensitivity refit is the fit on the participants left.
    for (const model of [
      spec({ kind: "association", predictor: "age", covariates: ["score"] }),
      spec({
        kind: "two-group",
        group: "group",
        levels: ["patient", "control"],
        covariates: ["age"],
      }),
    ]) {
      const d = makeData(40, 7);
      const values = Float64Array.from(d.values[0]);
      values[4] += 20;
      values[21] -= 18;
      const res = runFit(model, { ...d, values: [values] });
      const sens = res.regions[0].sensitivity as {
        excluded: string[];
        n: number;
        estimate: number;
        p: number;
        ciLow: number;
        ciHigh: number;
      };
      expect(sens.excluded.length).toBeGreaterThan(0);
      const keep = d.participants.flatMap((id, i) => (sens.excluded.includes(id) ? [] : [i]));
      const reduced = runFit(model, {
        participants: keep.map((i) => d.participants[i]),
        regions: d.regions,
        values: [Float64Array.from(keep, (i) => values[i])],
        numericColumns: { age: keep.map((i) => d.age[i]), score: keep.map((i) => d.score[i]) },
        categoricalColumns: { group: keep.map((i) => d.group[i]) },
      }).regions[0];
      expect(sens.n).toBe(reduced.n);
      expect(sens.estimate).toBe(reduced.estimate);
      expect(sens.p).toBe(reduced.p);
      expect(sens.ciLow).toBe(reduced.ciLow);
      expect(sens.ciHigh).toBe(reduced.ciHigh);
    }
  });
});

describe("robust estimators through the fit", () => {
  it("skipped correlation reports the removed participants by identifier", () => {
    const d = makeData(20, 8);
    const values = Float64Array.from(d.values[0]);
    values[3] = 60;
    const r = runFit(spec({ kind: "association", predictor: "age", estimator: "skipped" }), {
      ...d,
      values: [values],
    }).regions[0];
    expect(r.projectionOutliers).toContain("sub-04");
    expect(r.nKept as number).toBeLessThan(20);
  });
  it("one-sample Huber location is reported with its convergence", () => {
    const d = makeData(20, 8);
    const r = runFit(spec({ kind: "one-sample", estimator: "huber" }), d).regions[0];
    expect(r.converged).toBe(true);
    expect(r.df).toBe(19);
  });
});
