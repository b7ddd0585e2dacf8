/**
 * The methods paragraph reads as grammatical English for every combination
 * of kind × estimator × inference × correction × weights (the valid ones,
 * as the model form's rules decide) × set-aside shape × N, checked sentence
 * by sentence against simple rules. The style it enforces (journals'
 * statistics style; common practice, no source): counts are numerals and no
 * sentence starts with one; a count noun agrees with its count and a verb
 * with its subject; lists take the serial comma.
 *
 * Inputs are invented (only counts, flags and names matter here).
 */
import type { PredictionBlock } from "../../../contract/prediction";
import { describe, expect, it } from "vitest";
import {
  estimatorsByKind,
  modelSpecProblems,
  regionSelections,
} from "../../../contract/model-form";
import { type MethodsInput, buildMethodsText, list } from "../../../contract/methods-text";
import {
  type ModelSpec,
  type ModelSpecInput,
  type RegionResult,
  corrections,
  estimators,
  inferences,
  modelKinds,
  modelSpecSchema,
} from "../../../contract/spec";

// ─── The rules ───

/** Verbs a sentence of the paragraph may carry; a sentence without one of them is a fragment. */
const knownVerbs = [
  "was",
  "were",
  "is",
  "are",
  "has",
  "have",
  "holds",
  "applies",
  "records",
  "reproduces",
  "come",
  "set",
  "did",
  "started",
  "inflates",
];
/** Nouns that are counted (longest first, so "participant–region pair" wins over "participant"). */
const countNouns =
  "participant–region pair|participant|region|rearrangement|session|resample|identifier|mapping|person";
const numberWords = "one|two|three|four|five|six|seven|eight|nine|ten|eleven|twelve";
const singularVerbs = new Set(["was", "is", "has"]);

/** The paragraph's sentences ("et al. 2009" does not end one: a sentence starts with a capital or a quote). */
function sentencesOf(text: string): string[] {
  return text.split(/(?<=\.)\s+(?=[A-Z“])/);
}

function toNumber(numeral: string): number {
  return Number(numeral.replaceAll(",", ""));
}

const brokenClause = new RegExp(`, (?:the|a|an) [^,;()]{1,40}, (?:${knownVerbs.join("|")})\\b`);
const countInWords = new RegExp(
  `\\b(?:${numberWords})\\s+(?:[a-z]+\\s+)?(?:${countNouns})s?\\b`,
  "i",
);
const countedNoun = new RegExp(
  `(?<![\\d.,])(\\d[\\d,]*) (?:(?:random|bootstrap|duplicated) )?(${countNouns})(s?)\\b`,
  "g",
);
const countedSubject = new RegExp(
  `(?<![\\d.,])(\\d[\\d,]*)(?: (?:random|bootstrap|duplicated))?(?: (?:${countNouns})s?)?(?: only in the (?:brain table|participant sheet))? (was|were|is|are|has|have)\\b`,
  "g",
);
/** Words that may come back within two words ("for every participant in every region"). */
const echoEvery = new Set(["every", "each"]);
const partOf = /(\d[\d,]*) of the \d[\d,]* \w+ (was|were)\b/g;

/** Every rule a sentence breaks, as "rule: sentence" strings (empty when it reads well). */
function sentenceProblems(sentence: string): string[] {
  const out: string[] = [];
  const fail = (rule: string) => out.push(`${rule}: ${sentence}`);
  if (!sentence.endsWith(".")) fail("does not end with a period");
  if (/^\d/.test(sentence)) fail("starts with a digit");
  if (!/^[A-Z“]/.test(sentence)) fail("does not start with a capital letter");
  if (/ {2}/.test(sentence)) fail("double space");
  const words = sentence.toLowerCase().match(/[a-z]+/g) ?? [];
  if (!words.some((w) => knownVerbs.includes(w))) fail("no verb from the known list");
  // "…, the model, reproduces": a short noun phrase between commas followed by the verb.
  if (brokenClause.test(sentence)) fail("broken clause");
  const doubled = /\b([A-Za-z]+)[\s,;:]+\1\b/i.exec(sentence);
  if (doubled) fail(`doubled word "${doubled[1]}"`);
  // "between the levels its two levels of": a content word again within two words.
  const echoed = /\b([a-z]{4,})\b(?:[\s,]+[\w“”-]+){1,2}[\s,]+\1\b/i.exec(sentence);
  if (echoed && !echoEvery.has(echoed[1].toLowerCase()))
    fail(`"${echoed[1]}" repeated within two words`);
  let depth = 0;
  for (const ch of sentence) {
    if (ch === "(") depth++;
    if (ch === ")") depth--;
    if (depth < 0) break;
  }
  if (depth !== 0) fail("unbalanced parentheses");
  if ((sentence.match(/“/g) ?? []).length !== (sentence.match(/”/g) ?? []).length)
    fail("unbalanced quotation marks");
  if (countInWords.test(sentence)) fail("count in words");
  if (/\ba (?=[aeiou])(?!one|uni|use)/i.test(sentence) || /\ban (?![aeiou])/i.test(sentence))
    fail("a/an");
  // A counted noun agrees with its numeral: "1 region", "2 regions".
  for (const m of sentence.matchAll(countedNoun)) {
    if ((toNumber(m[1]) === 1) !== (m[3] === "")) fail(`"${m[0]}" does not agree`);
  }
  // A verb agrees with a counted subject: "1 participant was", "2 participants were", "70 were matched";
  // a subject joined by "and" is plural; "1 of the 3 regions was" agrees with the first count.
  for (const m of sentence.matchAll(countedSubject)) {
    const before = sentence.slice(0, m.index);
    // The object of a preposition is not the subject ("over the 12 regions was controlled"; "1 of the 3 regions" below).
    if (/\b(?:of|over|in|from|for|across|with)(?: the| all)? $/i.test(before)) continue;
    const plural = toNumber(m[1]) !== 1 || /\band $/.test(before);
    if (plural === singularVerbs.has(m[2])) fail(`"${m[0]}" does not agree`);
  }
  for (const m of sentence.matchAll(partOf)) {
    if ((toNumber(m[1]) === 1) !== (m[2] === "was")) fail(`"${m[0]}" does not agree`);
  }
  return out;
}

const checked = new Map<string, string[]>();

/** `sentenceProblems`, remembered (the paragraphs repeat most sentences). */
function checkedSentence(sentence: string): string[] {
  let problems = checked.get(sentence);
  if (!problems) {
    problems = sentenceProblems(sentence);
    checked.set(sentence, problems);
  }
  return problems;
}

/** Every rule the paragraph breaks: each sentence's, and a count noun written both in words and as a numeral. */
function paragraphProblems(text: string): string[] {
  const out = sentencesOf(text).flatMap(checkedSentence);
  if (/ {2}/.test(text)) out.push("double space between sentences");
  const inWords = new Set(
    [...text.matchAll(new RegExp(`\\b(?:${numberWords})\\s+(${countNouns})`, "gi"))].map((m) =>
      m[1].toLowerCase(),
    ),
  );
  const asNumerals = new Set(
    [...text.matchAll(new RegExp(`\\d (${countNouns})`, "g"))].map((m) => m[1]),
  );
  for (const noun of inWords)
    if (asNumerals.has(noun)) out.push(`"${noun}" counted both in words and as a numeral`);
  return out;
}

describe("the sentence rules catch what they are for", () => {
  it.each([
    [
      "Analyses were run; the fit's recipe, which records the data files' SHA-256 hashes, the model, reproduces every number exactly.",
      "broken clause",
    ],
    ["p-values were corrected over the 3 regions.", "does not start with a capital letter"],
    ["12 participants were matched.", "starts with a digit"],
    ["The team set aside 1 participants.", "does not agree"],
    ["The team set aside 2 region from every region.", "does not agree"],
    ["Of 3 participants, 1 were matched.", "does not agree"],
    ["Of 3 participants, 2 was matched.", "does not agree"],
    ["The regions, 1 participant only in the brain table were not analysed.", "does not agree"],
    [
      "Caution: 1 of the 3 regions were analysed with fewer than 20 participants.",
      "does not agree",
    ],
    ["The team set aside one participant from 2 regions.", "count in words"],
    ["The p-values were corrected over the the regions.", "doubled word"],
    ["The estimate was computed (Holm 1979.", "unbalanced parentheses"],
    ["The contrast value from “a.csv was used.", "unbalanced quotation marks"],
    ["In each region, the estimate by least squares.", "no verb from the known list"],
    ["All p-values are two-sided", "does not end with a period"],
    ["All p-values are  two-sided.", "double space"],
    ["Identifiers were matched through a identifier mapping.", "a/an"],
    [
      "Contrast values were compared between the levels its two levels of “group”.",
      "repeated within two words",
    ],
  ])("%s → %s", (sentence, rule) => {
    expect(sentenceProblems(sentence).join("\n")).toContain(rule);
  });

  it("a compound subject with 'and' takes a plural verb; '1 of the 3 regions' agrees with the 1", () => {
    expect(
      sentenceProblems(
        "Of 5 participants, 3 were matched; 1 participant only in the brain table and 1 duplicated identifier were not analysed.",
      ),
    ).toEqual([]);
    expect(
      sentenceProblems(
        "Of 5 participants, 4 were matched; 1 participant only in the brain table was not analysed.",
      ),
    ).toEqual([]);
    expect(
      sentenceProblems("Caution: 1 of the 3 regions was analysed with fewer than 20 participants."),
    ).toEqual([]);
  });

  it("flags a count noun written both in words and as a numeral in one paragraph", () => {
    expect(
      paragraphProblems("One participant was set aside. Of 3 participants, 2 were matched."),
    ).toContain('"participant" counted both in words and as a numeral');
  });

  it("lists take the serial comma and 'and' (or 'or') before the last item", () => {
    expect(list([])).toBe("");
    expect(list(["a"])).toBe("a");
    expect(list(["a", "b"])).toBe("a and b");
    expect(list(["a", "b", "c"])).toBe("a, b, and c");
    expect(list(["a", "b", "c", "d"], "or")).toBe("a, b, c, or d");
  });
});

// ─── The combinations ───

type Variant = Pick<
  ModelSpecInput,
  | "covariates"
  | "group"
  | "levels"
  | "interaction"
  | "predictor"
  | "tau2Method"
  | "smallSample"
  | "folds"
  | "repeats"
  | "lambda"
  | "specifications"
  | "regions"
>;

/** The model fields besides the enumerated five that a kind can take (every one is tried where valid). */
function variantsOf(kind: ModelSpec["kind"]): Variant[] {
  const covariateSets = [[], ["age"], ["age", "mean_fd"]];
  const out: Variant[] = [];
  for (const covariates of covariateSets) {
    for (const weighting of [
      { tau2Method: "reml", smallSample: "none" },
      { tau2Method: "dl", smallSample: "knapp-hartung" },
    ] as const) {
      if (kind === "one-sample") out.push({ covariates, ...weighting });
      if (kind === "two-group") {
        out.push({ covariates, group: "group", levels: ["patient", "control"], ...weighting });
        out.push({ covariates, group: "group", ...weighting });
      }
      if (kind === "association") {
        out.push({ covariates, predictor: "accuracy", ...weighting });
        out.push({ covariates, predictor: "accuracy", group: "group", ...weighting });
        out.push({
          covariates,
          predictor: "accuracy",
          group: "group",
          interaction: true,
          ...weighting,
        });
      }
      if (kind === "reliability" && covariates.length === 0) out.push({ ...weighting });
      if (kind === "prediction" && weighting.tau2Method === "reml") {
        out.push({ covariates, predictor: "accuracy", folds: 5, repeats: 2 });
        out.push({ covariates, predictor: "accuracy", group: "group", folds: "leave-one-out" });
        out.push({ covariates, predictor: "accuracy", lambda: 2.5 });
      }
      if (kind === "specification-curve" && weighting.tau2Method === "reml") {
        const exclusionRules = [
          { column: "mean_fd", op: ">", value: 0.5, reason: "motion" },
          { column: "group", op: "==", value: "patient", reason: "diagnosis unclear" },
        ] as const;
        out.push({
          regions: ["region_1"],
          predictor: "accuracy",
          specifications: {
            covariateSets: covariates.length > 0 ? [[], covariates] : [[]],
            exclusionRules: [...exclusionRules],
          },
        });
        out.push({
          regions: ["region_1"],
          group: "group",
          levels: ["patient", "control"],
          specifications: covariates.length === 0 ? {} : { exclusionRules: [exclusionRules[0]] },
        });
      }
    }
  }
  return out;
}

interface Combination {
  label: string;
  specs: ModelSpec[];
}

/** Every kind × estimator × inference × correction × weights that the model form accepts, with the valid variants of the other fields. */
function validCombinations(): Combination[] {
  const out: Combination[] = [];
  for (const kind of modelKinds)
    for (const estimator of estimators)
      for (const inference of inferences)
        for (const correction of corrections)
          for (const weights of ["none", "first-level-se"] as const) {
            const specs = variantsOf(kind)
              .map((v) =>
                modelSpecSchema.parse({ kind, estimator, inference, correction, weights, ...v }),
              )
              .filter((spec) => modelSpecProblems(spec).length === 0);
            if (specs.length > 0)
              out.push({
                label: `${kind} × ${estimator} × ${inference} × ${correction} × ${weights}`,
                specs,
              });
          }
  return out;
}

const sizes = [1, 2, 3, 4, 5, 6, 7, 8, 9, 12, 1500];

type Shape =
  | "none"
  | "one from every region"
  | "one from one region"
  | "one from two regions"
  | "several from one region each"
  | "several from several regions"
  | "several from every region and some from one";

const shapes: Shape[] = [
  "none",
  "one from every region",
  "one from one region",
  "one from two regions",
  "several from one region each",
  "several from several regions",
  "several from every region and some from one",
];

function setAsidesOf(
  shape: Shape,
  n: number,
  regionNames: readonly string[],
): ModelSpec["setAside"] {
  const reason = "decided before the fit";
  const at = (i: number) => regionNames[i % regionNames.length];
  const several = Math.max(2, Math.min(n, 9));
  switch (shape) {
    case "none":
      return [];
    case "one from every region":
      return [{ participant: "p-1", reason }];
    case "one from one region":
      return [{ participant: "p-1", region: at(0), reason }];
    case "one from two regions":
      return [
        { participant: "p-1", region: at(0), reason },
        { participant: "p-1", region: at(1), reason },
      ];
    case "several from one region each":
      return Array.from({ length: several }, (_, i) => ({
        participant: `p-${i + 1}`,
        region: at(i),
        reason,
      }));
    case "several from several regions":
      return Array.from({ length: several }, (_, i) => [
        { participant: `p-${i + 1}`, region: at(i), reason },
        ...(i % 2 === 0 ? [{ participant: `p-${i + 1}`, region: at(i + 1), reason }] : []),
      ]).flat();
    case "several from every region and some from one":
      return [
        ...Array.from({ length: several }, (_, i) => ({ participant: `all-${i + 1}`, reason })),
        ...Array.from({ length: several }, (_, i) => ({
          participant: `p-${i + 1}`,
          region: at(i),
          reason,
        })),
      ];
  }
}

function factorial(n: number): number {
  return n <= 1 ? 1 : n * factorial(n - 1);
}

const brain = {
  fileName: "harbor_brain-table.csv",
  version: 3,
  sha256: "0123456789abcdef".repeat(4),
};
const sheet = {
  fileName: "harbor_participants.tsv",
  version: 2,
  sha256: "fedcba9876543210".repeat(4),
};

/** The paragraph's input for one combination, shape and size; `turn` varies everything else from case to case. */
function inputOf(model: ModelSpec, shape: Shape, n: number, turn: number): MethodsInput {
  const spec = { ...model, resamples: [10000, 1, 5000][Math.floor(turn / 3) % 3] };
  const regionCount = n === 1500 ? 1200 : n;
  const regionNames = Array.from({ length: regionCount }, (_, r) => `region_${r + 1}`);
  const regions: RegionResult[] = regionNames.map((region, r) => {
    const nr = n + (turn % 2 === 0 ? 0 : r % 2);
    const extra: Record<string, unknown> = {};
    if (spec.inference === "permutation") {
      const distinct =
        nr > 20 ? Number.POSITIVE_INFINITY : spec.kind === "one-sample" ? 2 ** nr : factorial(nr);
      const exact = distinct <= spec.resamples && (turn % 3 !== 1 || r === 0);
      extra.permutation = { exact, rearrangements: exact ? distinct : spec.resamples, observed: 1 };
    }
    if (spec.estimator === "rank") {
      const exact = turn % 3 === 0 || (turn % 3 === 1 && r === 0);
      extra.method = exact
        ? "Wilcoxon signed-rank test (exact), Hodges–Lehmann pseudomedian"
        : "Wilcoxon signed-rank test (normal approximation with tie and continuity correction), Hodges–Lehmann pseudomedian";
    }
    return {
      region,
      n: nr,
      estimate: 0.1,
      se: 0.05,
      statistic: 2,
      df: nr - 1,
      p: 0.05,
      pAdjusted: 0.1,
      ciLow: 0,
      ciHigh: 0.2,
      ...extra,
    };
  });
  const withSheet =
    spec.kind === "two-group" ||
    spec.kind === "association" ||
    spec.kind === "prediction" ||
    turn % 2 === 1;
  const unmatched = [0, 1, n][turn % 3];
  return {
    recipe: {
      ...spec,
      setAside: setAsidesOf(shape, n, regionNames),
      brainTable: brain.fileName,
      idColumn: "participant_id",
      softwareVersion: turn % 4 === 3 ? undefined : "1.2.0",
    },
    result:
      spec.kind === "prediction"
        ? { regions: [], prediction: predictionOf(spec, n), n }
        : { regions },
    datasets: { brain, participants: withSheet ? sheet : null },
    regionSelection: regionSelections[turn % regionSelections.length],
    roster: withSheet
      ? {
          brainParticipants: n + unmatched,
          sheetParticipants: n + [0, 1, n][(turn + 1) % 3],
          matched: n,
          matchedByMapping: [0, 1, n][(turn + 2) % 3],
          onlyInBrainTable: unmatched,
          onlyInParticipantSheet: [0, 1, n][(turn + 1) % 3],
          duplicateIds: [0, 0, 1, n][turn % 4],
        }
      : null,
    brainParticipants: n,
    session: [null, { label: "1", of: 2 }, { label: "baseline", of: n }][turn % 3],
    singlePersonSignOff: turn % 2 === 0,
  };
}

/** A prediction block of the shape the engine returns (the paragraph reads its folds, choice of λ and test). */
function predictionOf(spec: ModelSpec, n: number): PredictionBlock {
  const regionCount = n === 1500 ? 1200 : Math.max(1, n % 7);
  const folds = spec.folds ?? 10;
  const repeats = spec.repeats ?? 10;
  return {
    folds,
    repeats,
    seed: spec.seed,
    lambdaChoice: spec.lambda === undefined ? "inner-cv" : "fixed",
    r: 0.3,
    r2: 0.08,
    mae: 1.2,
    spread: { r: repeats > 1 ? 0.02 : null, r2: repeats > 1 ? 0.01 : null, mae: null },
    perRepeat: [],
    participants: [],
    regions: Array.from({ length: regionCount }, (_, r) => ({
      region: `region_${r + 1}`,
      weight: 0.1,
      signConsistency: 1,
    })),
    lambdas: [{ repeat: 0, fold: 0, lambda: spec.lambda ?? 10 }],
    permutation:
      spec.inference === "permutation" ? { resamples: spec.resamples, pR: 0.01, pR2: 0.01 } : null,
    learningCurve: null,
  };
}

describe("methods paragraph: every combination reads as grammatical English", () => {
  const combinations = validCombinations();

  it("enumerates every estimator each kind accepts, with every inference and correction the rules allow", () => {
    for (const kind of modelKinds) {
      const used = new Set(
        combinations.filter((c) => c.specs[0].kind === kind).map((c) => c.specs[0].estimator),
      );
      expect([...used].sort()).toEqual([...estimatorsByKind[kind]].sort());
    }
    const seen = (pick: (s: ModelSpec) => string) =>
      new Set(combinations.map((c) => pick(c.specs[0])));
    expect(seen((s) => s.inference)).toEqual(new Set(inferences));
    expect(seen((s) => s.correction)).toEqual(new Set(corrections));
    expect(seen((s) => s.weights)).toEqual(new Set(["none", "first-level-se"]));
  });

  it.each(combinations.map((c) => [c.label, c] as const))(
    "%s",
    (_label, combination) => {
      const problems = new Set<string>();
      let turn = 0;
      for (const shape of shapes)
        for (const n of sizes) {
          const spec = combination.specs[turn % combination.specs.length];
          const out = buildMethodsText(inputOf(spec, shape, n, turn));
          for (const p of paragraphProblems(out.text)) problems.add(p);
          turn++;
        }
      expect([...problems]).toEqual([]);
      // 77 paragraphs per combination: a generous time-out for a shared machine (not a timing check).
    },
    60_000,
  );
});
