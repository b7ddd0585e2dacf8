/**
 * The methods paragraph: what it states for each kind of fit, which
 * references it cites, and the cautions. Inputs are small hand-made recipes
 * and results (invented numbers; only counts, flags and names matter here).
 */
import { describe, expect, it } from "vitest";
import {
  type MethodsInput,
  MethodsTextError,
  buildMethodsText,
  methodReferences,
} from "../../../contract/methods-text";
import type { RegionResult } from "../../../contract/spec";

function region(name: string, n: number, extra: Record<string, unknown> = {}): RegionResult {
  return {
    region: name,
    n,
    estimate: 0.1,
    se: 0.05,
    statistic: 2,
    df: n - 2,
    p: 0.05,
    pAdjusted: 0.1,
    ciLow: 0,
    ciHigh: 0.2,
    ...extra,
  };
}

const brain = {
  fileName: "lantern_brain-table.csv",
  version: 2,
  sha256: "0123456789abcdef".repeat(4),
};
const sheet = {
  fileName: "lantern_participants.tsv",
  version: 1,
  sha256: "fedcba9876543210".repeat(4),
};

function input(
  recipe: Record<string, unknown>,
  regions: RegionResult[],
  extra: Partial<MethodsInput> = {},
): MethodsInput {
  return {
    recipe: {
      brainTable: brain.fileName,
      participantSheet: sheet.fileName,
      idColumn: "participant_id",
      mappings: [],
      softwareVersion: "0.1.0",
      ...recipe,
    },
    result: { regions },
    datasets: { brain, participants: sheet },
    regionSelection: "anatomical-or-prior",
    roster: {
      brainParticipants: 71,
      sheetParticipants: 72,
      matched: 70,
      matchedByMapping: 1,
      onlyInBrainTable: 1,
      onlyInParticipantSheet: 2,
      duplicateIds: 0,
    },
    brainParticipants: 71,
    ...extra,
  };
}

/** Every "(Author Year; …)" key cited in the text. */
function citedKeys(text: string): string[] {
  return Object.keys(methodReferences).filter((k) => text.includes(k));
}

const association = {
  kind: "association",
  predictor: "accuracy",
  covariates: ["age", "mean_fd"],
  inference: "permutation",
  resamples: 5000,
  seed: 7,
  correction: "holm",
  setAside: [
    { participant: "sub-03", reason: "motion above the preregistered limit" },
    { participant: "sub-09", region: "L_insula", reason: "signal dropout" },
    { participant: "sub-11", region: "L_insula", reason: "signal dropout" },
    { participant: "sub-11", region: "R_insula", reason: "signal dropout" },
  ],
};
const monteCarlo = {
  permutation: { scheme: "Freedman–Lane", exact: false, rearrangements: 5000, observed: 2 },
};

describe("methods paragraph", () => {
  it("states the data, matching, set-asides, N range, estimator, inference, correction, diagnostics and software of an association fit", () => {
    const out = buildMethodsText(
      input(association, [
        region("L_insula", 66, monteCarlo),
        region("R_insula", 68, monteCarlo),
        region("L_dlpfc", 69, monteCarlo),
      ]),
    );
    const t = out.text;
    expect(t).toContain("“lantern_brain-table.csv” (version 2, SHA-256 0123456789ab…)");
    expect(t).toContain("“lantern_participants.tsv” (version 1, SHA-256 fedcba987654…)");
    expect(t).not.toContain("0123456789abcdef0"); // hashes are shortened to 12 hex digits
    expect(t).toContain(
      "Of 71 participants in the brain table and 72 in the participant sheet, 70 were matched (1 through an identifier mapping confirmed by a team member); 1 participant only in the brain table and 2 participants only in the participant sheet were not analysed.",
    );
    expect(t).toContain(
      "The team set aside 1 participant from every region and 2 participants from some regions only (3 participant–region pairs); every set-aside has a written reason recorded in the study's audit log, and no participant was excluded automatically.",
    );
    expect(t).toContain("leaving N = 66–69 per region.");
    expect(t).toContain(
      "In each of the 3 regions, the association between the contrast value and “accuracy”, adjusting for “age” and “mean_fd”, was estimated as the least-squares slope",
    );
    expect(t).toContain("the Freedman–Lane procedure (Freedman & Lane 1983; Winkler et al. 2014)");
    expect(t).toContain("5,000 random rearrangements were drawn with a seeded generator (seed 7)");
    expect(t).toContain("Monte Carlo");
    expect(t).toContain("Holm's step-down procedure (Holm 1979)");
    expect(t).toContain("Cook's distance");
    expect(t).toContain("Flags did not remove anyone from the reported estimates.");
    expect(t).toContain("Analyses were run in Covarion version 0.1.0.");
    // Circularity is not claimed for regions chosen from anatomy; the small-sample caution applies to associations.
    expect(t).not.toContain("exploratory");
    expect(out.cautions).toHaveLength(1);
    expect(out.cautions[0]).toContain("(Marek et al. 2022)");
    expect(t.endsWith(out.cautions[0])).toBe(true);
  });

  it("cites exactly the references it lists, each with its full citation, in reference-list order", () => {
    const out = buildMethodsText(
      input(association, [region("L_insula", 66, monteCarlo)], { regionSelection: "same-data" }),
    );
    expect(out.references.map((r) => r.key).sort()).toEqual(citedKeys(out.text).sort());
    for (const r of out.references) expect(r.citation).toBe(methodReferences[r.key]);
    const citations = out.references.map((r) => r.citation);
    expect(citations).toEqual([...citations].sort());
    // "Cook, R. D. (1977)" sorts before "Cook, R. D., & Weisberg, S. (1982)", as in a reference list.
    expect(out.references.findIndex((r) => r.key === "Cook 1977")).toBeLessThan(
      out.references.findIndex((r) => r.key === "Cook & Weisberg 1982"),
    );
  });

  it("warns about circular region selection with Vul et al. and Kriegeskorte et al.", () => {
    const out = buildMethodsText(
      input({ kind: "one-sample" }, [region("L_insula", 70)], { regionSelection: "same-data" }),
    );
    expect(out.cautions).toEqual([
      expect.stringContaining("chosen from the same data that were tested"),
    ]);
    expect(out.text).toContain("exploratory (Vul et al. 2009; Kriegeskorte et al. 2009)");
    expect(out.references.map((r) => r.key)).toEqual(
      expect.arrayContaining(["Vul et al. 2009", "Kriegeskorte et al. 2009"]),
    );
  });

  it("says when every rearrangement was enumerated (exact p-values)", () => {
    const exact = {
      permutation: { scheme: "sign flipping", exact: true, rearrangements: 256, observed: 1 },
    };
    const out = buildMethodsText(
      input({ kind: "one-sample", inference: "permutation", resamples: 10000, seed: 3 }, [
        region("a", 8, exact),
        region("b", 8, exact),
      ]),
    );
    expect(out.text).toContain("by sign flipping of the contrast values");
    expect(out.text).toContain(
      "every distinct rearrangement was enumerated (256 rearrangements), so the p-values are exact",
    );
    expect(out.text).not.toContain("Monte Carlo");
  });

  it("one-sample t test without a participant sheet, one region, no correction needed", () => {
    const out = buildMethodsText(
      input(
        { kind: "one-sample", participantSheet: undefined, correction: "holm" },
        [region("L_insula", 71)],
        {
          datasets: { brain, participants: null },
          roster: null,
        },
      ),
    );
    expect(out.text).toContain(
      "Contrast values were read from the brain table “lantern_brain-table.csv” (version 2, SHA-256 0123456789ab…) for 71 participants; no participant sheet was used.",
    );
    expect(out.text).toContain("No participant was set aside.");
    expect(out.text).toContain("leaving N = 71 per region.");
    expect(out.text).toContain("with a one-sample t test (Student 1908)");
    expect(out.text).toContain("With 1 region, no correction over regions applies.");
    expect(out.text).not.toContain("Holm");
    expect(out.cautions).toEqual([]);
  });

  it("two groups with Welch's t test and BCa bootstrap intervals", () => {
    const out = buildMethodsText(
      input(
        {
          kind: "two-group",
          group: "group",
          levels: ["patient", "control"],
          estimator: "welch",
          inference: "bootstrap",
          resamples: 2000,
          seed: 11,
          correction: "bh",
        },
        [region("a", 70), region("b", 70)],
      ),
    );
    expect(out.text).toContain(
      "compared between the levels “patient” and “control” of “group” with Welch's t test and Welch–Satterthwaite degrees of freedom (Welch 1947); the estimate is “patient” minus “control”.",
    );
    expect(out.text).toContain(
      "bias-corrected and accelerated (BCa) intervals (Efron 1987; Efron & Tibshirani 1993) from 2,000 bootstrap resamples of participants drawn with a seeded generator (seed 11)",
    );
    expect(out.text).toContain("to control the false discovery rate (Benjamini & Hochberg 1995)");
  });

  it("two groups without named levels: 'between the two levels of'", () => {
    const out = buildMethodsText(input({ kind: "two-group", group: "group" }, [region("a", 70)]));
    expect(out.text).toContain(
      "contrast values were compared between the two levels of “group” with Student's t test with pooled variance (Student 1908); the estimate is the first level minus the second.",
    );
  });

  it("robust estimators name Huber (1964) and, for the bisquare, Beaton & Tukey (1974)", () => {
    const huber = buildMethodsText(
      input({ kind: "one-sample", estimator: "huber" }, [region("a", 70)]),
    );
    expect(huber.text).toContain("Huber's ψ (k = 1.345) (Huber 1964)");
    const bisquare = buildMethodsText(
      input(
        { kind: "association", predictor: "age", estimator: "bisquare", correction: "bonferroni" },
        [region("a", 70), region("b", 70)],
      ),
    );
    expect(bisquare.text).toContain(
      "Tukey's bisquare ψ (c = 4.685) (Beaton & Tukey 1974), started from the Huber estimate (Huber 1964)",
    );
    expect(bisquare.text).toContain("by the Bonferroni method (Dunn 1961)");
  });

  it("max-T correction cites Westfall & Young; a generic rearrangement test names what it permutes", () => {
    const out = buildMethodsText(
      input(
        {
          kind: "association",
          predictor: "accuracy",
          estimator: "rank",
          inference: "permutation",
          resamples: 1000,
          correction: "maxt",
        },
        [
          region("a", 70, {
            permutation: { scheme: "Spearman rho", exact: false, rearrangements: 1000 },
          }),
          region("b", 70, {
            permutation: { scheme: "Spearman rho", exact: false, rearrangements: 1000 },
          }),
        ],
      ),
    );
    expect(out.text).toContain("by Spearman's rank correlation (Spearman 1904)");
    expect(out.text).toContain(
      "by permuting the values of “accuracy” and recomputing the estimator's statistic",
    );
    expect(out.text).toContain(
      "maximum absolute statistic across regions in the same rearrangements (Westfall & Young 1993)",
    );
  });

  it("weighted fits state the weights, the τ² method and the small-sample adjustment", () => {
    const out = buildMethodsText(
      input(
        {
          kind: "one-sample",
          weights: "first-level-se",
          tau2Method: "dl",
          smallSample: "knapp-hartung",
        },
        [region("a", 40)],
      ),
    );
    expect(out.text).toContain("weighted by 1/(se² + τ²)");
    expect(out.text).toContain(
      "the DerSimonian–Laird method of moments (DerSimonian & Laird 1986)",
    );
    expect(out.text).toContain(
      "Knapp–Hartung adjusted standard error with a t reference on n − p degrees of freedom (Knapp & Hartung 2003)",
    );
    expect(out.text).toContain("(Higgins & Thompson 2002)");
    expect(out.text).not.toContain("refitted without participants flagged"); // no unweighted sensitivity refit on weighted fits
    const reml = buildMethodsText(
      input({ kind: "one-sample", weights: "first-level-se" }, [region("a", 40)]),
    );
    expect(reml.text).toContain("restricted maximum likelihood (Viechtbauer 2005)");
  });

  it("reliability fits name ICC(2,1) after Shrout & Fleiss and no participant diagnostics", () => {
    const out = buildMethodsText(
      input(
        { kind: "reliability", participantSheet: undefined },
        [region("a", 16), region("b", 15)],
        { datasets: { brain, participants: null }, roster: null },
      ),
    );
    expect(out.text).toContain("intraclass correlation ICC(2,1)");
    expect(out.text).toContain("(Shrout & Fleiss 1979)");
    expect(out.text).toContain(
      "Participants without a value in every session were left out of that region, leaving N = 15–16 per region.",
    );
    expect(out.text).not.toContain("Cook's distance");
  });

  it("rank tests say whether their p-values were exact", () => {
    const out = buildMethodsText(
      input({ kind: "one-sample", estimator: "rank" }, [
        region("a", 20, {
          method: "Wilcoxon signed-rank test (exact), Hodges–Lehmann pseudomedian",
        }),
        region("b", 20, {
          method:
            "Wilcoxon signed-rank test (normal approximation with tie and continuity correction), Hodges–Lehmann pseudomedian",
        }),
      ]),
    );
    expect(out.text).toContain(
      "with the Wilcoxon signed-rank test (Wilcoxon 1945), the estimate being the Hodges–Lehmann pseudomedian (Hodges & Lehmann 1963)",
    );
    expect(out.text).toContain(
      "The rank tests' p-values are exact in 1 region and come from the normal approximation with tie and continuity correction in 1 region.",
    );
  });

  it("Spearman p-values from the Edgeworth series cite it, beside exact and t ones", () => {
    const out = buildMethodsText(
      input({ kind: "association", predictor: "age", estimator: "rank" }, [
        region("a", 9, { method: "Spearman correlation, exact permutation p (S = Σd²)" }),
        region("b", 40, {
          method: "Spearman correlation, Edgeworth series p (S = Σd², Best & Roberts 1975)",
        }),
        region("c", 40, { method: "Spearman correlation, t approximation" }),
      ]),
    );
    expect(out.text).toContain(
      "The rank tests' p-values are exact in 1 region and come from the Edgeworth series for Spearman's S = Σd² (Best & Roberts 1975) or the t approximation in 2 regions.",
    );
    expect(out.references.map((r) => r.citation)).toContain(
      methodReferences["Best & Roberts 1975"],
    );
  });

  it("no imprecision caution for associations from 1,000 participants up", () => {
    const out = buildMethodsText(
      input({ kind: "association", predictor: "age" }, [region("a", 999), region("b", 1000)]),
    );
    expect(out.cautions).toEqual([]);
    const small = buildMethodsText(
      input({ kind: "association", predictor: "age" }, [region("a", 999)]),
    );
    expect(small.cautions).toHaveLength(1);
  });

  it("is deterministic", () => {
    const a = input(association, [region("L_insula", 66, monteCarlo)]);
    expect(buildMethodsText(a)).toEqual(buildMethodsText(structuredClone(a)));
  });

  it("refuses a malformed recipe, naming the field, and a result without regions", () => {
    expect(() =>
      buildMethodsText(input({ kind: "one-sample", estimator: "median" }, [region("a", 10)])),
    ).toThrow(MethodsTextError);
    expect(() =>
      buildMethodsText(input({ kind: "one-sample", estimator: "median" }, [region("a", 10)])),
    ).toThrow(/recipe field 'estimator'/);
    expect(() => buildMethodsText(input({ kind: "one-sample" }, []))).toThrow(
      "the fit's result has no regions",
    );
  });
});

describe("methods paragraph: sessions", () => {
  it("names the session analysed when the brain table holds several, and not otherwise", () => {
    const two = buildMethodsText(
      input({ kind: "one-sample" }, [region("a", 70)], { session: { label: "1", of: 2 } }),
    );
    expect(two.text).toContain(
      "The brain table holds 2 sessions; values from session “1” were analysed.",
    );
    const one = buildMethodsText(
      input({ kind: "one-sample" }, [region("a", 70)], { session: { label: "1", of: 1 } }),
    );
    expect(one.text).not.toContain("session");
    const reliability = buildMethodsText(
      input({ kind: "reliability" }, [region("a", 16)], { session: { label: "1", of: 2 } }),
    );
    expect(reliability.text).not.toContain("values from session");
  });
});

describe("methods paragraph: sign-off and small samples", () => {
  it("says when one person started, approved and sealed the fit, and only then", () => {
    const single = buildMethodsText(
      input({ kind: "one-sample" }, [region("a", 70)], { singlePersonSignOff: true }),
    );
    expect(single.text).toContain(
      "The same person started, approved, and sealed this fit; the study's setting “A second person signs off” was turned off.",
    );
    expect(single.cautions).toEqual([]);
    for (const singlePersonSignOff of [false, undefined]) {
      const two = buildMethodsText(
        input({ kind: "one-sample" }, [region("a", 70)], { singlePersonSignOff }),
      );
      expect(two.text).not.toContain("same person");
    }
  });

  it("cautions about regions with fewer than 20 participants (common practice, no source; after Marek et al. 2022)", () => {
    const some = buildMethodsText(
      input({ kind: "one-sample", correction: "holm" }, [
        region("a", 19),
        region("b", 20),
        region("c", 40),
      ]),
    );
    expect(some.cautions).toEqual([
      expect.stringContaining(
        "Caution: 1 of the 3 regions was analysed with fewer than 20 participants;",
      ),
    ]);
    expect(some.cautions[0]).toContain("(Marek et al. 2022)");
    expect(some.references.map((r) => r.key)).toContain("Marek et al. 2022");
    const all = buildMethodsText(
      input({ kind: "two-group", group: "group" }, [region("a", 12), region("b", 9)]),
    );
    expect(all.cautions).toEqual([
      expect.stringContaining(
        "Caution: all 2 regions were analysed with fewer than 20 participants;",
      ),
    ]);
    const one = buildMethodsText(input({ kind: "reliability" }, [region("a", 5)]));
    expect(one.cautions).toEqual([
      expect.stringContaining("Caution: the region was analysed with fewer than 20 participants;"),
    ]);
    const none = buildMethodsText(
      input({ kind: "one-sample" }, [region("a", 20), region("b", 20)]),
    );
    expect(none.cautions).toEqual([]);
    expect(none.references.map((r) => r.key)).not.toContain("Marek et al. 2022");
  });

  it("a small association fit carries both the small-sample and the imprecision caution, circularity first", () => {
    const out = buildMethodsText(
      input({ kind: "association", predictor: "age" }, [region("a", 15)], {
        regionSelection: "same-data",
      }),
    );
    expect(out.cautions).toHaveLength(3);
    expect(out.cautions[0]).toContain("chosen from the same data");
    expect(out.cautions[1]).toContain("fewer than 20 participants");
    expect(out.cautions[2]).toContain("fewer than 1,000 participants are imprecise");
    expect(out.text.endsWith(out.cautions.join(" "))).toBe(true);
  });
});

describe("methods paragraph: counts and lists", () => {
  it("writes counts as numerals that agree with their nouns and verbs, and lists with the serial comma", () => {
    const one = buildMethodsText(
      input(
        {
          kind: "one-sample",
          setAside: [{ participant: "sub-03", region: "a", reason: "dropout" }],
        },
        [region("a", 1)],
        {
          roster: {
            brainParticipants: 1,
            sheetParticipants: 2,
            matched: 1,
            matchedByMapping: 1,
            onlyInBrainTable: 0,
            onlyInParticipantSheet: 1,
            duplicateIds: 0,
          },
        },
      ),
    );
    expect(one.text).toContain(
      "Of 1 participant in the brain table and 2 in the participant sheet, 1 was matched (1 through an identifier mapping confirmed by a team member); 1 participant only in the participant sheet was not analysed.",
    );
    expect(one.text).toContain("The team set aside 1 participant from 1 region;");
    expect(one.text).toContain("In the region “a”, the mean contrast value");
    expect(one.text).toContain("leaving N = 1 per region.");
    const many = buildMethodsText(
      input(
        {
          kind: "one-sample",
          setAside: [
            { participant: "sub-01", region: "a", reason: "dropout" },
            { participant: "sub-02", region: "b", reason: "dropout" },
          ],
        },
        [region("a", 1500), region("b", 1500)],
        {
          roster: {
            brainParticipants: 1502,
            sheetParticipants: 1500,
            matched: 1499,
            matchedByMapping: 2,
            onlyInBrainTable: 3,
            onlyInParticipantSheet: 1,
            duplicateIds: 2,
          },
        },
      ),
    );
    expect(many.text).toContain(
      "Of 1,502 participants in the brain table and 1,500 in the participant sheet, 1,499 were matched (2 through identifier mappings confirmed by a team member); 3 participants only in the brain table, 1 participant only in the participant sheet, and 2 duplicated identifiers were not analysed.",
    );
    expect(many.text).toContain("The team set aside 2 participants from 1 region each;");
    expect(many.text).toContain("leaving N = 1,500 per region.");
    expect(many.text).toContain(
      "The fit's recipe records the SHA-256 hashes of the data files, the model, and the software version; running the recipe again reproduces every number exactly.",
    );
  });

  it("one participant from several regions, and exact enumeration with a single rearrangement count", () => {
    const out = buildMethodsText(
      input(
        {
          kind: "two-group",
          group: "group",
          inference: "permutation",
          resamples: 1000,
          setAside: [
            { participant: "sub-01", region: "a", reason: "dropout" },
            { participant: "sub-01", region: "b", reason: "dropout" },
          ],
        },
        [
          region("a", 4, { permutation: { exact: true, rearrangements: 24 } }),
          region("b", 5, { permutation: { exact: true, rearrangements: 120 } }),
        ],
      ),
    );
    expect(out.text).toContain("The team set aside 1 participant from 2 regions;");
    expect(out.text).toContain(
      "every distinct rearrangement was enumerated (24 to 120 rearrangements, depending on the region), so the p-values are exact",
    );
    const single = buildMethodsText(
      input({ kind: "one-sample", inference: "permutation", resamples: 1 }, [
        region("a", 30, { permutation: { exact: false, rearrangements: 1 } }),
      ]),
    );
    expect(single.text).toContain(
      "1 random rearrangement was drawn with a seeded generator (seed 1) and the p-values are Monte Carlo estimates.",
    );
    expect(single.text).not.toContain("the same in every region");
  });

  it("states a model's exclusion rules with how many each left out, and no longer says no one was excluded automatically", () => {
    const rules = [
      { column: "mean_fd", op: ">", value: 0.5, reason: "motion" },
      { column: "accuracy", op: "<", value: 0.6, reason: "task not done" },
    ];
    const base = input({ ...association, exclusionRules: rules }, [
      region("L_insula", 60, monteCarlo),
    ]);
    const t = buildMethodsText({
      ...base,
      result: {
        ...base.result,
        ruleExclusions: [
          { rule: rules[0] as never, participants: ["sub-01", "sub-02", "sub-05"] },
          { rule: rules[1] as never, participants: ["sub-07"] },
        ],
      },
    }).text;
    // Counts as the result lists them (3 and 1).
    expect(t).toContain(
      "The model's exclusion rules, part of the model before it was fitted, left out every participant meeting one of them: mean_fd > 0.5 (motion), 3 participants; accuracy < 0.6 (task not done), 1 participant; a participant with a missing value in a rule's column was not left out by that rule.",
    );
    expect(t).toContain("recorded in the study's audit log.");
    expect(t).not.toContain("no participant was excluded automatically");
  });
});
