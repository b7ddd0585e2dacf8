/**
 * The results sentences and the number rules of contract/results-sentences.ts.
 *
 * Source of the rules in the table of cases: APA Publication Manual, 7th
 * ed. (2020), sections 6.36 (decimal fractions: leading zeros, two decimals
 * for r and t, exact p to three decimals, "p < .001"), 6.43 (statistics in
 * text: df in parentheses, "95% CI [LL, UL]") and 6.44 (italic symbols) —
 * section numbers and wording from memory. Where a case follows a decision
 * of ours instead of the manual, its comment says so.
 */
import { describe, expect, it } from "vitest";
import {
  type SentenceContext,
  type TextRun,
  escapeLatex,
  escapeMarkdown,
  formatBounded,
  formatDf,
  formatRaw,
  formatStat,
  pCell,
  pRelation,
  resultsSentence,
  runsLatex,
  runsMarkdown,
  runsPlain,
  sentenceContextOf,
  statisticRuns,
} from "../../../contract/results-sentences";
import { type FitData, type RegionResult, modelSpecSchema } from "../../../contract/spec";
import { createRng, normalDraw } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";

function region(fields: Partial<RegionResult>): RegionResult {
  return {
    region: "L_insula",
    n: 60,
    estimate: 0.42,
    se: 0.1,
    statistic: 2.5,
    df: 58,
    p: 0.016,
    pAdjusted: 0.016,
    ciLow: 0.1,
    ciHigh: 0.74,
    ...fields,
  };
}

const ctx = (fields: Partial<SentenceContext>): SentenceContext => ({
  kind: "association",
  estimator: "ols",
  inference: "parametric",
  correction: "none",
  weighted: false,
  adjusted: false,
  ...fields,
});

const plainOf = (r: RegionResult, c: SentenceContext) => runsPlain(resultsSentence(r, c));

describe("p-values (APA 7th ed., 6.36, from memory)", () => {
  const cases: [number, string, string][] = [
    // exact p to three decimals, no leading zero (6.36)
    [0.016, "= .016", "6.36"],
    [0.0164, "= .016", "6.36"],
    [0.05, "= .050", "6.36: three decimals kept"],
    // below .001: "p < .001" (6.36); the rule is applied to the exact value
    [0.0004, "< .001", "6.36"],
    [0.0005, "< .001", "ours: exact p below .001, though it would round to .001"],
    [0.000999, "< .001", "ours: exact p below .001"],
    [0, "< .001", "6.36"],
    [0.001, "= .001", "6.36"],
    [0.0015, "= .002", "6.36: rounding to three decimals"],
    // never "p = 1.000": common practice, no source
    [0.9995, "> .999", "common practice, no source"],
    [1, "> .999", "common practice, no source"],
    [0.9994, "= .999", "6.36"],
  ];
  for (const [p, expected, source] of cases) {
    it(`p = ${p} → "p ${expected}" (${source})`, () => {
      expect(pRelation(p)).toBe(expected);
    });
  }
  it("never writes p = .000 for any p from 0 to 1 in steps of 1e-5", () => {
    const zeros: number[] = [];
    for (let k = 0; k <= 100_000; k++) if (pRelation(k / 100_000) === "= .000") zeros.push(k);
    expect(zeros).toEqual([]);
  });
  it("table cells drop the equals sign", () => {
    expect(pCell(0.016)).toBe(".016");
    expect(pCell(0.0001)).toBe("< .001");
  });
  it("refuses a p outside [0, 1]", () => {
    expect(() => pRelation(1.2)).toThrow(RangeError);
    expect(() => pRelation(Number.NaN)).toThrow(RangeError);
  });
});

describe("numbers (APA 7th ed., 6.36, from memory)", () => {
  it("no leading zero for r; two decimals; the minus sign U+2212", () => {
    expect(formatBounded(0.3141)).toBe(".31");
    expect(formatBounded(-0.3141)).toBe("\u2212.31");
    expect(formatBounded(1)).toBe("1.00");
    expect(formatBounded(-0.001)).toBe(".00"); // never a negative zero (ours)
  });
  it("a leading zero for t and d, which can exceed 1", () => {
    expect(formatStat(0.456)).toBe("0.46");
    expect(formatStat(-2.874)).toBe("\u22122.87");
    expect(formatStat(1234.5)).toBe("1,234.50"); // commas in numbers of 1,000 or more (6.38, from memory)
  });
  it("whole df as whole numbers, Welch df to one decimal (the issue's convention)", () => {
    expect(formatDf(58)).toBe("58");
    expect(formatDf(41.2871)).toBe("41.3");
  });
  it("raw estimates: two decimals, two significant digits below 0.1 (common practice, no source)", () => {
    expect(formatRaw(0.4213)).toBe("0.42");
    expect(formatRaw(0.04213)).toBe("0.042");
    expect(formatRaw(-0.004213)).toBe("\u22120.0042");
    expect(formatRaw(12.345)).toBe("12.35");
  });
});

describe("results sentences (APA 7th ed., 6.36, 6.43, 6.44, from memory)", () => {
  const cases: { name: string; region: RegionResult; ctx: SentenceContext; text: string }[] = [
    {
      // The first example.
      name: "Pearson r with its interval",
      region: region({ r: 0.3127, rCiLow: 0.0624, rCiHigh: 0.5203, df: 58, p: 0.0163 }),
      ctx: ctx({}),
      text: "r(58) = .31, 95% CI [.06, .52], p = .016",
    },
    {
      name: "negative r: the minus sign U+2212",
      region: region({ r: -0.3127, rCiLow: -0.5203, rCiHigh: -0.0624, df: 58, p: 0.0163 }),
      ctx: ctx({}),
      text: "r(58) = \u2212.31, 95% CI [\u2212.52, \u2212.06], p = .016",
    },
    {
      // The second example: Welch df to one decimal; d without an interval.
      name: "Welch t with d",
      region: region({ statistic: 2.8712, df: 41.3, p: 0.0064, cohensD: { value: 0.8401 } }),
      ctx: ctx({ kind: "two-group", estimator: "welch" }),
      text: "t(41.3) = 2.87, p = .006, d = 0.84",
    },
    {
      name: "Student t with d and its interval",
      region: region({
        statistic: 2.8712,
        df: 58,
        p: 0.0064,
        cohensD: { value: 0.8401, ciLow: 0.2113, ciHigh: 1.4603 },
      }),
      ctx: ctx({ kind: "two-group" }),
      text: "t(58) = 2.87, p = .006, d = 0.84, 95% CI [0.21, 1.46]",
    },
    {
      name: "p below .001, with a Holm adjustment",
      region: region({ r: 0.52, rCiLow: 0.31, rCiHigh: 0.68, p: 0.0004, pAdjusted: 0.0048 }),
      ctx: ctx({ correction: "holm" }),
      text: "r(58) = .52, 95% CI [.31, .68], p < .001, p_adj = .005 (Holm)",
    },
    {
      name: "p of .0005 (would round to .001): still p < .001",
      region: region({ r: 0.45, rCiLow: 0.22, rCiHigh: 0.63, p: 0.0005, pAdjusted: 0.0005 }),
      ctx: ctx({}),
      text: "r(58) = .45, 95% CI [.22, .63], p < .001",
    },
    {
      name: "partial r with covariates, Benjamini–Hochberg (label from labels.ts)",
      region: region({ r: 0.29, rCiLow: 0.03, rCiHigh: 0.51, df: 55, p: 0.031, pAdjusted: 0.062 }),
      ctx: ctx({ adjusted: true, correction: "bh" }),
      text: "partial r(55) = .29, 95% CI [.03, .51], p = .031, p_adj = .062 (Benjamini–Hochberg)",
    },
    {
      name: "Spearman with an exact p leads with r_s and its df",
      region: region({
        estimate: 0.41,
        r: 0.41,
        rCiLow: 0.12,
        rCiHigh: 0.64,
        statistic: 2118,
        df: 18,
        p: 0.0723,
        method: "Spearman correlation, exact permutation p (S = Σd²)",
      }),
      ctx: ctx({ estimator: "rank" }),
      text: "r_s(18) = .41, 95% CI [.12, .64], p = .072",
    },
    {
      name: "missing interval and df are left out (percentage bend)",
      region: region({ estimate: 0.33, r: 0.33, ciLow: null, ciHigh: null, df: null }),
      ctx: ctx({ estimator: "bend" }),
      text: "r_pb = .33, p = .016",
    },
    {
      name: "Huber association: robust t first, r after p",
      region: region({ statistic: 2.61, df: 57, p: 0.0116, r: 0.327, rCiLow: 0.08, rCiHigh: 0.54 }),
      ctx: ctx({ estimator: "huber" }),
      text: "t(57) = 2.61, p = .012, r = .33, 95% CI [.08, .54]",
    },
    {
      name: "permutation p with max-T",
      region: region({
        r: 0.31,
        rCiLow: 0.06,
        rCiHigh: 0.52,
        p: 0.0162,
        pAdjusted: 0.0731,
        permutation: { scheme: "Freedman–Lane", exact: false, rearrangements: 10000 },
      }),
      ctx: ctx({ inference: "permutation", correction: "maxt" }),
      text: "r(58) = .31, 95% CI [.06, .52], permutation p = .016, p_adj = .073 (max-T)",
    },
    {
      name: "one-sample t with d",
      region: region({
        statistic: 4.1234,
        df: 69,
        p: 0.0001,
        cohensD: { value: 0.4929, ciLow: 0.2437, ciHigh: 0.7386 },
      }),
      ctx: ctx({ kind: "one-sample" }),
      text: "t(69) = 4.12, p < .001, d = 0.49, 95% CI [0.24, 0.74]",
    },
    {
      name: "Mann–Whitney U with its normal approximation",
      region: region({
        estimate: 0.318,
        statistic: 712.5,
        df: null,
        ciLow: 0.05,
        ciHigh: 0.59,
        p: 0.0214,
        exact: false,
        z: 2.3012,
      }),
      ctx: ctx({ kind: "two-group", estimator: "rank" }),
      text: "U = 712.5, z = 2.30, p = .021, Hodges–Lehmann shift = 0.32, 95% CI [0.05, 0.59]",
    },
    {
      name: "Wilcoxon signed-rank, exact: T+ without z",
      region: region({
        estimate: 0.21,
        statistic: 171,
        df: null,
        ciLow: 0.03,
        ciHigh: 0.4,
        p: 0.0266,
        exact: true,
        z: null,
      }),
      ctx: ctx({ kind: "one-sample", estimator: "rank" }),
      text: "T+ = 171, p = .027, pseudomedian = 0.21, 95% CI [0.03, 0.40]",
    },
    {
      name: "weighted fit without Knapp–Hartung: z, then b with its interval",
      region: region({
        statistic: 3.02,
        df: null,
        p: 0.0025,
        estimate: 0.0412,
        ciLow: 0.0145,
        ciHigh: 0.0679,
      }),
      ctx: ctx({ kind: "one-sample", weighted: true }),
      text: "z = 3.02, p = .003, b = 0.041, 95% CI [0.015, 0.068]",
    },
    {
      name: "bootstrap: the estimate and its interval lead",
      region: region({
        statistic: null,
        df: null,
        estimate: 0.52,
        ciLow: 0.11,
        ciHigh: 0.95,
        p: 0.012,
        bootstrap: { method: "bca", resamples: 2000 },
        cohensD: { value: 0.61, ciLow: 0.1, ciHigh: 1.1 },
      }),
      ctx: ctx({ kind: "two-group", inference: "bootstrap" }),
      text: "M_diff = 0.52, 95% CI [0.11, 0.95], bootstrap p = .012, d = 0.61",
    },
    {
      name: "reliability: ICC(2,1) with its F test",
      region: region({
        estimate: 0.7234,
        ciLow: 0.5512,
        ciHigh: 0.8349,
        statistic: 6.104,
        df: null,
        df1: 39,
        df2: 39,
        p: 0.00000012,
      }),
      ctx: ctx({ kind: "reliability", estimator: "ols" }),
      text: "ICC(2,1) = .72, 95% CI [.55, .83], F(39, 39) = 6.10, p < .001",
    },
  ];
  for (const c of cases) {
    it(c.name, () => {
      expect(plainOf(c.region, c.ctx)).toBe(c.text);
    });
  }

  it("marks the symbols italic: t, p, d; not CI", () => {
    const runs = resultsSentence(
      region({ statistic: 2.8712, df: 41.3, p: 0.0064, cohensD: { value: 0.8401 } }),
      ctx({ kind: "two-group", estimator: "welch" }),
    );
    expect(runs).toEqual<TextRun[]>([
      { text: "t", italic: true },
      { text: "(41.3) = 2.87, ", italic: false },
      { text: "p", italic: true },
      { text: " = .006, ", italic: false },
      { text: "d", italic: true },
      { text: " = 0.84", italic: false },
    ]);
    expect(runsMarkdown(runs)).toBe("*t*(41.3) = 2.87, *p* = .006, *d* = 0.84");
    expect(runsLatex(runs)).toBe(
      "\\textit{t}(41.3) = 2.87, \\textit{p} = .006, \\textit{d} = 0.84",
    );
  });

  it("LaTeX keeps an ASCII minus in math mode and escapes subscripts", () => {
    const runs = resultsSentence(
      region({ r: -0.31, rCiLow: -0.52, rCiHigh: -0.06, p: 0.016, pAdjusted: 0.048 }),
      ctx({ correction: "holm" }),
    );
    expect(runsLatex(runs)).toBe(
      "\\textit{r}(58) = $-$.31, 95\\% CI [$-$.52, $-$.06], \\textit{p} = .016, \\textit{p}\\textsubscript{adj} = .048 (Holm)",
    );
    expect(runsMarkdown(runs)).toContain("*p*<sub>adj</sub> = .048 (Holm)");
  });

  it("the table's statistic cell names the df", () => {
    const runs = statisticRuns(region({ statistic: 2.87, df: 41.3 }), ctx({ kind: "two-group" }));
    expect(runsPlain(runs ?? [])).toBe("t(41.3) = 2.87");
    expect(statisticRuns(region({ statistic: null }), ctx({}))).toBeNull();
  });

  it("reads the context from a fit's result and recipe", () => {
    expect(
      sentenceContextOf(
        { kind: "association", estimator: "ols", inference: "permutation", correction: "maxt" },
        { covariates: ["age"], weights: "none" },
      ),
    ).toEqual(
      ctx({ inference: "permutation", correction: "maxt", adjusted: true, weighted: false }),
    );
    // A two-group fit's group is what it compares, not an adjustment.
    expect(
      sentenceContextOf(
        { kind: "two-group", estimator: "ols", inference: "bootstrap", correction: "none" },
        { kind: "two-group", group: "group", covariates: [] },
      ).adjusted,
    ).toBe(false);
  });
});

describe("every kind and estimator of the engine gives a sentence by the rules", () => {
  // Invented data from a seeded generator; the engine's own numbers, checked only for the style rules.
  const rng = createRng(7);
  const n = 30;
  const age = Array.from({ length: n }, () => 20 + Math.floor(rng.next() * 40));
  const data: FitData = {
    participants: age.map((_, i) => `s${i}`),
    regions: ["A", "B"],
    values: [0, 1].map(() =>
      Float64Array.from(age, (a, i) => 0.02 * a + (i % 2) * 0.5 + normalDraw(rng)),
    ),
    standardErrors: [0, 1].map(() => Float64Array.from(age, () => 0.2 + 0.1 * rng.next())),
    numericColumns: { age, motion: age.map(() => rng.next()) },
    categoricalColumns: { group: age.map((_, i) => (i % 2 ? "patient" : "control")) },
  };
  const groups = { group: "group", levels: ["patient", "control"] };
  const cases: [Record<string, unknown>, RegExp][] = [
    [{ kind: "one-sample" }, /^t\(29\) = \d+\.\d\d, p [<=] \.\d{3}, d = \d\.\d\d, 95% CI \[/],
    [{ kind: "one-sample", estimator: "rank" }, /^T\+ = \d+, p [<=] \.\d{3}, pseudomedian = /],
    [{ kind: "one-sample", estimator: "huber" }, /^t\(29\) = .*, b = \d\.\d\d, 95% CI/],
    [{ kind: "two-group", ...groups, estimator: "welch" }, /^t\(\d+\.\d\) = .*, d = /],
    [
      { kind: "two-group", ...groups, estimator: "rank" },
      /^U = [\d.]+, (z = .*, )?p .*Hodges–Lehmann shift = /,
    ],
    [{ kind: "two-group", ...groups, covariates: ["age"] }, /^t\(27\) = .*, d = /],
    [
      { kind: "association", predictor: "age" },
      /^r\(28\) = −?\.\d\d, 95% CI \[−?\.\d\d, −?\.\d\d\], p /,
    ],
    [{ kind: "association", predictor: "age", estimator: "rank" }, /^r_s\(28\) = /],
    [{ kind: "association", predictor: "age", estimator: "skipped" }, /^skipped r\(\d+\) = /],
    [{ kind: "association", predictor: "age", estimator: "bend" }, /^r_pb\(28\) = −?\.\d\d, p /],
    [
      { kind: "association", predictor: "age", estimator: "bisquare" },
      /^t\(28\) = .*, r = −?\.\d\d/,
    ],
    [
      { kind: "association", predictor: "age", covariates: ["motion"], estimator: "rank" },
      /^partial r_s\(27\) = /,
    ],
    [
      { kind: "association", predictor: "age", ...groups, interaction: true },
      /^partial r\(26\) = /,
    ],
    [{ kind: "one-sample", weights: "first-level-se" }, /^z = .*, b = /],
    [
      { kind: "one-sample", weights: "first-level-se", smallSample: "knapp-hartung" },
      /^t\(29\) = .*, b = /,
    ],
    [
      {
        kind: "association",
        predictor: "age",
        inference: "permutation",
        resamples: 200,
        correction: "maxt",
      },
      /, permutation p [<=>] \.\d{3}, p_adj [<=>] \.\d{3} \(max-T\)$/,
    ],
    [
      { kind: "two-group", ...groups, inference: "bootstrap", resamples: 200, correction: "bh" },
      /^M_diff = \d\.\d\d, 95% CI \[.*\], bootstrap p .*\(Benjamini–Hochberg\), d = /,
    ],
  ];
  for (const [fields, shape] of cases) {
    it(JSON.stringify(fields), () => {
      const spec = modelSpecSchema.parse(fields);
      const result = runFit(spec, data);
      const c = sentenceContextOf(result, spec);
      for (const r of result.regions) {
        const text = runsPlain(resultsSentence(r, c));
        expect(text).toMatch(shape);
        expect(text).not.toMatch(/NaN|undefined|null|Infinity|= \.000|-[\d.]/); // minus is U+2212
        // No leading zero before r, r_s, r_pb, p or p_adj (6.36, from memory).
        expect(text).not.toMatch(/\b(r|p)(_\w+)?(\([\d.]+\))? [=<>] −?0\./);
      }
    });
  }
});

describe("Markdown escapes (common practice, no source)", () => {
  it("leaves p < .001 alone and escapes marks in region names", () => {
    const runs = resultsSentence(
      region({ r: 0.52, rCiLow: 0.31, rCiHigh: 0.68, p: 0.0004 }),
      ctx({}),
    );
    expect(runsMarkdown(runs)).toBe("*r*(58) = .52, 95% CI [.31, .68], *p* < .001");
    expect(escapeMarkdown("L_a*b|c [d] <em>")).toBe("L\\_a\\*b\\|c \\[d\\] \\<em>");
    expect(escapeMarkdown("# top")).toBe("\\# top");
  });
});

describe("LaTeX escapes (common practice, no source)", () => {
  it("escapes & % $ # _ { } ~ ^ \\", () => {
    expect(escapeLatex("a&b%c$d#e_f{g}h~i^j\\k")).toBe(
      "a\\&b\\%c\\$d\\#e\\_f\\{g\\}h\\textasciitilde{}i\\textasciicircum{}j\\textbackslash{}k",
    );
  });
  it("writes dashes, the minus sign, curly quotes and the engine's symbols for pdfLaTeX", () => {
    expect(escapeLatex("Benjamini–Hochberg — “age” − τ² × Σ ≤ ≥")).toBe(
      "Benjamini--Hochberg --- ``age'' $-$ $\\tau$\\textsuperscript{2} $\\times$ $\\Sigma$ $\\le$ $\\ge$",
    );
  });
});
