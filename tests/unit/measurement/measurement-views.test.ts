/**
 * The measurement views' plain logic: variance-share bars, the attenuation
 * note's words, the brain-reliability rows and the trait-reliability form's
 * checks (the same rules as the API).
 */
import { describe, expect, it } from "vitest";
import { ChartInputError } from "../../../components/charts/chart-input-error";
import { type AttenuationInput, attenuationWords } from "../../../components/fit/attenuation-words";
import {
  type VarianceShareInput,
  tau2MethodName,
  varianceShareRows,
  varianceSharesMethod,
} from "../../../components/fit/variance-shares-layout";
import {
  checkTraitDrafts,
  intervalText,
  parseReliability,
  problemsFromDetails,
  reliabilityRows,
} from "../../../components/measurement/reliability-rows";
import { ApiError } from "../../../hooks/api";
import { fetchBrainReliability } from "../../../hooks/use-reliability";

describe("variance shares", () => {
  const region: VarianceShareInput = {
    region: "L_insula",
    tau2: 0.0312,
    i2: 0.41,
    noiseShare: 0.62,
    trueShare: 0.38,
    tau2Method: "reml",
  };

  it("words each bar and names the method under it", () => {
    const [row] = varianceShareRows([region]);
    expect(row).toEqual({
      region: "L_insula",
      noiseShare: 0.62,
      trueShare: 0.38,
      words: "62% noise · 38% true differences",
      detail: "τ² = 0.0312 · I² = 41%",
    });
    expect(varianceSharesMethod([region])).toMatch(
      /τ² estimated by restricted maximum likelihood \(REML\)\. I² after Higgins & Thompson \(2002\)\.$/,
    );
    expect(varianceSharesMethod([region, { ...region, tau2Method: "dl" }])).toMatch(
      /restricted maximum likelihood \(REML\) and DerSimonian–Laird/,
    );
    expect(tau2MethodName("dl")).toBe("DerSimonian–Laird");
  });

  it("draws all noise when τ² is 0", () => {
    const [row] = varianceShareRows([{ ...region, tau2: 0, i2: 0, noiseShare: 1, trueShare: 0 }]);
    expect(row.words).toBe("100% noise · 0% true differences");
  });

  it("refuses shares that are not shares, naming the field and region position", () => {
    const bad = (patch: Partial<typeof region>) => () =>
      varianceShareRows([region, { ...region, ...patch }]);
    expect(bad({ noiseShare: 1.2, trueShare: -0.2 })).toThrow(
      "noiseShare[1]: must lie between 0 and 1 (got 1.2)",
    );
    expect(bad({ noiseShare: 0.5, trueShare: 0.4 })).toThrow(
      "trueShare[1]: noiseShare and trueShare must add to 1 (got 0.5 + 0.4)",
    );
    expect(bad({ tau2: Number.NaN })).toThrow("tau2[1]: must be a finite number (got NaN)");
    expect(bad({ tau2: -0.1 })).toThrow("tau2[1]: must not be negative");
    expect(bad({ tau2Method: "ml" as "dl" })).toThrow(
      'tau2Method[1]: must be "dl" or "reml" (got "ml")',
    );
    expect(() => varianceShareRows([])).toThrow(ChartInputError);
  });
});

describe("attenuation note", () => {
  // Reliabilities .64 and .81: ceiling √(.64 × .81) = .8 × .9 = .72 (exact algebra).
  const a: AttenuationInput = {
    reliabilityBrain: 0.64,
    reliabilityBrainForm: "ICC(3,1)",
    reliabilityTrait: 0.81,
    traitSource: "test–retest r = .81, task manual",
    traitStatedAt: "2026-11-20T09:00:00.000Z",
    trait: "accuracy",
    observed: 0.36,
    observedCiLow: 0.12,
    observedCiHigh: 0.56,
    ceiling: 0.72,
    disattenuated: 0.5,
    disattenuatedCiLow: 0.12 / 0.72,
    disattenuatedCiHigh: 0.56 / 0.72,
    caution: null,
  };

  it("words the observed r, the ceiling with its working, the corrected r and the sources", () => {
    const w = attenuationWords(a);
    expect(w.observed).toBe("Observed r = 0.36 (95% CI 0.12 to 0.56)");
    expect(w.ceiling).toBe("Largest r these measures allow: 0.72");
    expect(w.ceilingWorking).toBe("√(0.64 × 0.81) = 0.72");
    expect(w.corrected).toBe("Corrected for unreliability: r = 0.50 (95% CI 0.17 to 0.78)");
    expect(w.reliabilities).toBe(
      "Brain: ICC(3,1) = 0.64 across sessions. accuracy: 0.81, as stated (test–retest r = .81, task manual).",
    );
    expect(w.caution).toBeNull();
    expect(w.method).toMatch(/^Spearman's correction for attenuation \(1904\)/);
  });

  it("keeps a corrected value beyond 1 visible, with the minus sign for negative values, and passes the caution on", () => {
    const w = attenuationWords({
      ...a,
      observed: -0.7,
      observedCiLow: -0.8,
      observedCiHigh: -0.55,
      disattenuated: -0.7 / 0.72 - 0.1,
      disattenuatedCiLow: -1,
      disattenuatedCiHigh: -0.76,
      caution: "The corrected correlation is larger than 1 in size.",
    });
    expect(w.corrected).toBe("Corrected for unreliability: r = −1.07 (95% CI −1.00 to −0.76)");
    expect(w.caution).toBe("The corrected correlation is larger than 1 in size.");
  });

  it("refuses impossible inputs, naming the field", () => {
    expect(() => attenuationWords({ ...a, reliabilityBrain: 0 })).toThrow(
      "reliabilityBrain: must be greater than 0 and at most 1 (got 0)",
    );
    expect(() => attenuationWords({ ...a, reliabilityTrait: 1.1 })).toThrow("reliabilityTrait");
    expect(() => attenuationWords({ ...a, observed: 1.2 })).toThrow(
      "observed: must lie between −1 and 1 (got 1.2)",
    );
    expect(() => attenuationWords({ ...a, observedCiLow: 0.4 })).toThrow(
      "observedCiLow: the interval 0.4 to 0.56 must hold the observed r 0.36",
    );
    expect(() => attenuationWords({ ...a, ceiling: Number.NaN })).toThrow(
      "ceiling: must be a finite number",
    );
  });
});

describe("brain reliability rows", () => {
  it("shows ICC(3,1) and ICC(2,1) with their intervals, an unbounded bound in words, and a region's reason when it has no values", () => {
    const rows = reliabilityRows([
      {
        region: "dACC",
        n: 16,
        sessions: 2,
        icc21: { value: 0.412, ciLow: -0.05, ciHigh: 0.74 },
        icc31: { value: 0.455, ciLow: null, ciHigh: 0.77 },
      },
      {
        region: "R_caudate",
        error: "too few participants with every session (n = 1; at least 2 needed)",
      },
    ]);
    expect(rows[0]).toEqual({
      region: "dACC",
      n: 16,
      sessions: 2,
      icc31: 0.455,
      icc31Interval: "unbounded below to 0.77",
      icc21: 0.412,
      icc21Interval: "−0.05 to 0.74",
      problem: null,
    });
    expect(rows[1]).toMatchObject({
      region: "R_caudate",
      icc31: null,
      icc31Interval: "n/a",
      problem: expect.stringMatching(/^too few/),
    });
    expect(intervalText({ value: 0.5, ciLow: 0.1, ciHigh: null })).toBe("0.10 to unbounded");
  });
});

describe("trait reliability form", () => {
  it("reads reliabilities as the API does", () => {
    expect(parseReliability(".82")).toEqual({ value: 0.82 });
    expect(parseReliability(" 1 ")).toEqual({ value: 1 });
    expect(parseReliability("0,82")).toEqual({
      problem: "Use a point as the decimal mark (for example 0.82).",
    });
    expect(parseReliability("0")).toEqual({ problem: "A reliability must be greater than 0." });
    expect(parseReliability("-0.3")).toEqual({ problem: "A reliability must be greater than 0." });
    expect(parseReliability("1.2")).toEqual({ problem: "A reliability is at most 1." });
    expect(parseReliability("high")).toEqual({ problem: '"high" is not a number.' });
    expect(parseReliability("")).toMatchObject({
      problem: expect.stringMatching(/^Give the reliability/),
    });
  });

  it("checks every row and returns the entries only when all are right", () => {
    const numeric = ["accuracy", "age", "symptom_score"];
    const ok = checkTraitDrafts(
      [
        {
          key: "a",
          column: "accuracy",
          reliability: "0.82",
          source: "  test–retest, task manual ",
        },
        { key: "b", column: "symptom_score", reliability: ".9", source: "α = .90, scale manual" },
      ],
      numeric,
    );
    expect(ok).toEqual({
      entries: [
        { column: "accuracy", reliability: 0.82, source: "test–retest, task manual" },
        { column: "symptom_score", reliability: 0.9, source: "α = .90, scale manual" },
      ],
      problems: {},
    });
    const bad = checkTraitDrafts(
      [
        { key: "a", column: "accuracy", reliability: "0.82", source: "manual" },
        { key: "b", column: "accuracy", reliability: "2", source: "" },
        { key: "c", column: "sex", reliability: "0.5", source: "manual" },
        { key: "d", column: "", reliability: "0.5", source: "manual" },
      ],
      numeric,
    );
    expect(bad.entries).toBeNull();
    expect(bad.problems).toEqual({
      b: {
        column: '"accuracy" is listed twice.',
        reliability: "A reliability is at most 1.",
        source: expect.stringMatching(/^Say where the value comes from/),
      },
      c: { column: '"sex" is not a numeric column of the current participant sheet.' },
      d: { column: "Choose a trait of the participant sheet." },
    });
  });

  it("puts the API's field problems beside the right rows", () => {
    const drafts = [
      { key: "x", column: "accuracy", reliability: "0.8", source: "m" },
      { key: "y", column: "shoe_size", reliability: "0.8", source: "m" },
    ];
    expect(
      problemsFromDetails(drafts, [
        { field: "body.1.column", message: 'participants.tsv has no column "shoe_size"' },
        { field: "body", message: "x" },
      ]),
    ).toEqual({
      y: { column: 'participants.tsv has no column "shoe_size"' },
    });
    expect(problemsFromDetails(drafts, undefined)).toEqual({});
  });
});

describe("brain reliability query", () => {
  it("turns the API's 409 (no sessions to compare) into a state, and lets other failures through", async () => {
    const conflict = async () => {
      throw new ApiError(409, "conflict", "The brain table b.csv has no session column.");
    };
    await expect(fetchBrainReliability("s1", conflict as never)).resolves.toEqual({
      available: false,
      reason: "The brain table b.csv has no session column.",
    });
    const failing = async () => {
      throw new ApiError(500, "internal", "boom");
    };
    await expect(fetchBrainReliability("s1", failing as never)).rejects.toThrow("boom");
    const paths: string[] = [];
    const answering = async (path: string) => {
      paths.push(path);
      return { sessions: ["1", "2"] };
    };
    await expect(fetchBrainReliability("a b", answering as never)).resolves.toMatchObject({
      available: true,
      reliability: { sessions: ["1", "2"] },
    });
    expect(paths).toEqual(["/api/studies/a%20b/reliability"]);
  });
});
