/**
 * The methods paragraph of a fit: plain academic English generated from the
 * fit's recipe and result, with the published references of the methods it
 * used and the cautions that apply.
 *
 * Pure: no I/O, no framework imports; the same input gives the same text.
 * The paragraph states, in order: the data (file names, shortened SHA-256,
 * how participants were matched, how many were set aside and that each
 * reason is logged, listwise deletion, N per region), the question and the
 * estimator, the inference (resamples, seed, exact or Monte Carlo), the
 * correction over regions, the weighting, the diagnostics, the software and
 * its version, who signed the fit off when one person did it all, then the
 * cautions (texts and thresholds in `cautions.ts`, shared with the screens).
 *
 * Style: counts of participants, regions, rearrangements and everything
 * else are numerals ("1 participant", "12 regions"; journals' statistics
 * style), and no sentence starts with one; nouns and verbs agree with the
 * count; lists take the serial comma ("a, b, and c").
 *
 * Cost O(regions + set-asides). Throws `MethodsTextError` when the recipe's
 * model fields are malformed.
 */
import {
  associationPaperCaution,
  circularityPaperCaution,
  type PaperCaution,
  smallSamplePaperCaution,
} from "./cautions";
import { dateWords } from "./dates";
import { type RuleExclusion, ruleText } from "./exclusion-rules";
import { estimatorWords } from "./labels";
import { curveChoices } from "./specification-curve";
import { secondPersonSignOffLabel } from "./sign-off";
import type { PredictionBlock } from "./prediction";
import { RecipeSpecError, specOfRecipe } from "./recipe";
import type { ModelSpec, RegionResult } from "./spec";

/** Published references, keyed by the short form used in the text. */
export const methodReferences = {
  "Beaton & Tukey 1974":
    "Beaton, A. E., & Tukey, J. W. (1974). The fitting of power series, meaning polynomials, illustrated on band-spectroscopic data. Technometrics, 16(2), 147–185.",
  "Benjamini & Hochberg 1995":
    "Benjamini, Y., & Hochberg, Y. (1995). Controlling the false discovery rate: a practical and powerful approach to multiple testing. Journal of the Royal Statistical Society, Series B, 57(1), 289–300.",
  "Hoerl & Kennard 1970":
    "Hoerl, A. E., & Kennard, R. W. (1970). Ridge regression: biased estimation for nonorthogonal problems. Technometrics, 12(1), 55–67.",
  "Phipson & Smyth 2010":
    "Phipson, B., & Smyth, G. K. (2010). Permutation p-values should never be zero: calculating exact p-values when permutations are randomly drawn. Statistical Applications in Genetics and Molecular Biology, 9(1), Article 39.",
  "Poldrack et al. 2020":
    "Poldrack, R. A., Huckins, G., & Varoquaux, G. (2020). Establishment of best practices for evidence for prediction: a review. JAMA Psychiatry, 77(5), 534–540.",
  "Simonsohn et al. 2020":
    "Simonsohn, U., Simmons, J. P., & Nelson, L. D. (2020). Specification curve analysis. Nature Human Behaviour, 4(11), 1208–1214.",
  "Steegen et al. 2016":
    "Steegen, S., Tuerlinckx, F., Gelman, A., & Vanpaemel, W. (2016). Increasing transparency through a multiverse analysis. Perspectives on Psychological Science, 11(5), 702–712.",
  "Snoek et al. 2019":
    "Snoek, L., Miletić, S., & Scholte, H. S. (2019). How to control for confounds in decoding analyses of neuroimaging data. NeuroImage, 184, 741–760.",
  "Best & Roberts 1975":
    "Best, D. J., & Roberts, D. E. (1975). Algorithm AS 89: The upper tail probabilities of Spearman's rho. Journal of the Royal Statistical Society, Series C (Applied Statistics), 24(3), 377–379.",
  "Bollen & Jackman 1990":
    "Bollen, K. A., & Jackman, R. W. (1990). Regression diagnostics: an expository treatment of outliers and influential cases. In J. Fox & J. S. Long (Eds.), Modern Methods of Data Analysis (pp. 257–291). Newbury Park, CA: Sage.",
  "Cook 1977":
    "Cook, R. D. (1977). Detection of influential observation in linear regression. Technometrics, 19(1), 15–18.",
  "Cook & Weisberg 1982":
    "Cook, R. D., & Weisberg, S. (1982). Residuals and Influence in Regression. New York: Chapman & Hall.",
  "DerSimonian & Laird 1986":
    "DerSimonian, R., & Laird, N. (1986). Meta-analysis in clinical trials. Controlled Clinical Trials, 7(3), 177–188.",
  "Dunn 1961":
    "Dunn, O. J. (1961). Multiple comparisons among means. Journal of the American Statistical Association, 56(293), 52–64.",
  "Efron 1987":
    "Efron, B. (1987). Better bootstrap confidence intervals. Journal of the American Statistical Association, 82(397), 171–185.",
  "Efron & Tibshirani 1993":
    "Efron, B., & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. New York: Chapman & Hall.",
  "Fisher 1921":
    "Fisher, R. A. (1921). On the “probable error” of a coefficient of correlation deduced from a small sample. Metron, 1, 3–32.",
  "Freedman & Lane 1983":
    "Freedman, D., & Lane, D. (1983). A nonstochastic interpretation of reported significance levels. Journal of Business & Economic Statistics, 1(4), 292–298.",
  "Higgins & Thompson 2002":
    "Higgins, J. P. T., & Thompson, S. G. (2002). Quantifying heterogeneity in a meta-analysis. Statistics in Medicine, 21(11), 1539–1558.",
  "Hoaglin & Welsch 1978":
    "Hoaglin, D. C., & Welsch, R. E. (1978). The hat matrix in regression and ANOVA. The American Statistician, 32(1), 17–22.",
  "Hodges & Lehmann 1963":
    "Hodges, J. L., & Lehmann, E. L. (1963). Estimates of location based on rank tests. Annals of Mathematical Statistics, 34(2), 598–611.",
  "Holm 1979":
    "Holm, S. (1979). A simple sequentially rejective multiple test procedure. Scandinavian Journal of Statistics, 6(2), 65–70.",
  "Huber 1964":
    "Huber, P. J. (1964). Robust estimation of a location parameter. Annals of Mathematical Statistics, 35(1), 73–101.",
  "Knapp & Hartung 2003":
    "Knapp, G., & Hartung, J. (2003). Improved tests for a random effects meta-regression with a single covariate. Statistics in Medicine, 22(17), 2693–2710.",
  "Kriegeskorte et al. 2009":
    "Kriegeskorte, N., Simmons, W. K., Bellgowan, P. S. F., & Baker, C. I. (2009). Circular analysis in systems neuroscience: the dangers of double dipping. Nature Neuroscience, 12(5), 535–540.",
  "Mann & Whitney 1947":
    "Mann, H. B., & Whitney, D. R. (1947). On a test of whether one of two random variables is stochastically larger than the other. Annals of Mathematical Statistics, 18(1), 50–60.",
  "Marek et al. 2022":
    "Marek, S., Tervo-Clemmens, B., Calabro, F. J., et al. (2022). Reproducible brain-wide association studies require thousands of individuals. Nature, 603, 654–660.",
  "Rousselet & Pernet 2012":
    "Rousselet, G. A., & Pernet, C. R. (2012). Improving standards in brain-behavior correlation analyses. Frontiers in Human Neuroscience, 6, 119.",
  "Shrout & Fleiss 1979":
    "Shrout, P. E., & Fleiss, J. L. (1979). Intraclass correlations: uses in assessing rater reliability. Psychological Bulletin, 86(2), 420–428.",
  "Spearman 1904":
    "Spearman, C. (1904). The proof and measurement of association between two things. American Journal of Psychology, 15(1), 72–101.",
  "Student 1908": "Student (1908). The probable error of a mean. Biometrika, 6(1), 1–25.",
  "Viechtbauer 2005":
    "Viechtbauer, W. (2005). Bias and efficiency of meta-analytic variance estimators in the random-effects model. Journal of Educational and Behavioral Statistics, 30(3), 261–293.",
  "Vul et al. 2009":
    "Vul, E., Harris, C., Winkielman, P., & Pashler, H. (2009). Puzzlingly high correlations in fMRI studies of emotion, personality, and social cognition. Perspectives on Psychological Science, 4(3), 274–290.",
  "Welch 1947":
    "Welch, B. L. (1947). The generalization of “Student's” problem when several different population variances are involved. Biometrika, 34(1–2), 28–35.",
  "Westfall & Young 1993":
    "Westfall, P. H., & Young, S. S. (1993). Resampling-Based Multiple Testing: Examples and Methods for p-Value Adjustment. New York: Wiley.",
  "Wilcox 1994":
    "Wilcox, R. R. (1994). The percentage bend correlation coefficient. Psychometrika, 59(4), 601–616.",
  "Wilcox 2004":
    "Wilcox, R. R. (2004). Inferences based on a skipped correlation coefficient. Journal of Applied Statistics, 31(2), 131–143.",
  "Wilcoxon 1945":
    "Wilcoxon, F. (1945). Individual comparisons by ranking methods. Biometrics Bulletin, 1(6), 80–83.",
  "Winkler et al. 2014":
    "Winkler, A. M., Ridgway, G. R., Webster, M. A., Smith, S. M., & Nichols, T. E. (2014). Permutation inference for the general linear model. NeuroImage, 92, 381–397.",
} as const;

export type ReferenceKey = keyof typeof methodReferences;

export interface MethodsReference {
  /** Short form as cited in the text, e.g. "Holm 1979". */
  key: ReferenceKey;
  /** Full citation. */
  citation: string;
}

export interface MethodsDataFile {
  fileName: string;
  version: number;
  sha256: string;
}

export interface MethodsInput {
  /** The fit's recipe as stored (model fields at the top level, mappings, set-asides, software version). */
  recipe: Readonly<Record<string, unknown>>;
  /** The fit's result (its regions, in fit order; a prediction's block and N instead). */
  result: {
    readonly regions: readonly RegionResult[];
    readonly prediction?: PredictionBlock;
    readonly n?: number;
    /** The participants each of the model's exclusion rules left out (an association or two-group model with rules). */
    readonly ruleExclusions?: readonly RuleExclusion[];
  };
  /** The data versions the fit ran on. */
  datasets: { brain: MethodsDataFile; participants: MethodsDataFile | null };
  /** How the model's regions were chosen, and whether that was from the same data. */
  regionSelection: "anatomical-or-prior" | "independent-data" | "same-data" | null;
  /** The join of the two files, or null without a participant sheet. */
  roster: {
    brainParticipants: number;
    sheetParticipants: number;
    matched: number;
    /** Of the matched: through a confirmed mapping. */
    matchedByMapping: number;
    onlyInBrainTable: number;
    onlyInParticipantSheet: number;
    /** Ids sharing a normalised form with another id of the same file (not matched). */
    duplicateIds: number;
  } | null;
  /** Participants in the brain table (used without a sheet). */
  brainParticipants: number;
  /** The session whose values were fitted when the brain table has several, else null. */
  session?: { label: string; of: number } | null;
  /** The program's name (default "Covarion"). */
  softwareName?: string;
  /**
   * True when the seal records that one person started, approved and sealed
   * the fit (the study had turned off "A second person signs off"); the
   * paragraph then says so.
   */
  singlePersonSignOff?: boolean;
  /** The fit compared with the study's plan current when it was created (contract/plans.ts), or null/absent without one. */
  plan?: {
    registeredAt: string;
    sha256: string;
    asPlanned: boolean;
    deviations: readonly string[];
  } | null;
}

export interface MethodsText {
  /** The paragraph, cautions last. */
  text: string;
  /** References cited in the text, in reference-list order (by full citation). */
  references: MethodsReference[];
  /** The cautions that apply (also at the end of `text`). */
  cautions: string[];
}

/** The recipe's model fields are not a valid model. */
export class MethodsTextError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "MethodsTextError";
  }
}

/** A count as a numeral with thousands separators: "7", "1,500". */
export function numeral(n: number): string {
  return n.toLocaleString("en");
}

/** "1 participant", "12 participants", "1,500 participants". */
export function count(n: number, singular: string, plural = `${singular}s`): string {
  return `${numeral(n)} ${n === 1 ? singular : plural}`;
}

/** "was" for a count of 1, "were" otherwise. */
function was(n: number): string {
  return n === 1 ? "was" : "were";
}

/** "a", "a and b", "a, b, and c" (serial comma; or with "or"). */
export function list(items: readonly string[], joiner: "and" | "or" = "and"): string {
  if (items.length <= 1) return items.join("");
  if (items.length === 2) return `${items[0]} ${joiner} ${items[1]}`;
  return `${items.slice(0, -1).join(", ")}, ${joiner} ${items[items.length - 1]}`;
}

function quoted(name: string): string {
  return `“${name}”`;
}

/** A shortened SHA-256 as printed in the paragraph (first 12 hex digits). */
export function shortHash(sha256: string): string {
  return sha256.slice(0, 12);
}

function specOf(recipe: Readonly<Record<string, unknown>>): ModelSpec {
  try {
    return specOfRecipe(recipe);
  } catch (error) {
    if (error instanceof RecipeSpecError) throw new MethodsTextError(error.message);
    throw error;
  }
}

class Citations {
  readonly used = new Set<ReferenceKey>();
  /** "(Holm 1979)" or "(Freedman & Lane 1983; Winkler et al. 2014)", recording each key. */
  cite(...keys: ReferenceKey[]): string {
    return `(${this.name(...keys)})`;
  }
  /** "Holm 1979" without parentheses, recording each key. */
  name(...keys: ReferenceKey[]): string {
    for (const k of keys) this.used.add(k);
    return keys.join("; ");
  }
  /** A caution's text, recording the references it cites. */
  caution(caution: PaperCaution): string {
    for (const k of caution.references) this.used.add(k);
    return caution.text;
  }
  references(): MethodsReference[] {
    const byCitation = (a: ReferenceKey, b: ReferenceKey) =>
      methodReferences[a] < methodReferences[b]
        ? -1
        : methodReferences[a] > methodReferences[b]
          ? 1
          : 0;
    return [...this.used].sort(byCitation).map((key) => ({ key, citation: methodReferences[key] }));
  }
}

/** "N = 12" or "N = 9–14". */
function nRange(regions: readonly RegionResult[]): string {
  const ns = regions.map((x) => x.n);
  const lo = Math.min(...ns);
  const hi = Math.max(...ns);
  return lo === hi ? `N = ${numeral(lo)}` : `N = ${numeral(lo)}–${numeral(hi)}`;
}

function joinSentences(input: MethodsInput): string[] {
  const { brain, participants } = input.datasets;
  const brainText = `the brain table ${quoted(brain.fileName)} (version ${brain.version}, SHA-256 ${shortHash(brain.sha256)}…)`;
  const idColumn =
    typeof input.recipe.idColumn === "string" ? input.recipe.idColumn : "participant_id";
  if (!participants || !input.roster) {
    return [
      `Contrast values were read from ${brainText} for ${count(input.brainParticipants, "participant")}; no participant sheet was used.`,
    ];
  }
  const r = input.roster;
  const out = [
    `Contrast values from ${brainText} were joined with the participant sheet ${quoted(participants.fileName)} (version ${participants.version}, SHA-256 ${shortHash(participants.sha256)}…) by participant identifier (column ${quoted(idColumn)}); identifiers were compared after trimming spaces, ignoring case, and treating a leading “sub-” as optional, and no other near match was merged without a confirmed mapping.`,
  ];
  const unmatched: string[] = [];
  if (r.onlyInBrainTable > 0)
    unmatched.push(`${count(r.onlyInBrainTable, "participant")} only in the brain table`);
  if (r.onlyInParticipantSheet > 0)
    unmatched.push(
      `${count(r.onlyInParticipantSheet, "participant")} only in the participant sheet`,
    );
  if (r.duplicateIds > 0) unmatched.push(count(r.duplicateIds, "duplicated identifier"));
  let sentence = `Of ${count(r.brainParticipants, "participant")} in the brain table and ${numeral(r.sheetParticipants)} in the participant sheet, ${numeral(r.matched)} ${was(r.matched)} matched`;
  if (r.matchedByMapping > 0) {
    sentence += ` (${numeral(r.matchedByMapping)} through ${r.matchedByMapping === 1 ? "an identifier mapping" : "identifier mappings"} confirmed by a team member)`;
  }
  const left = r.onlyInBrainTable + r.onlyInParticipantSheet + r.duplicateIds;
  sentence += unmatched.length > 0 ? `; ${list(unmatched)} ${was(left)} not analysed.` : ".";
  out.push(sentence);
  return out;
}

/**
 * The model's exclusion rules, each with how many participants it left out
 * (counted by the fit), or nothing for a model without rules.
 */
function ruleSentences(spec: ModelSpec, found: readonly RuleExclusion[] | undefined): string[] {
  const rules = spec.exclusionRules ?? [];
  if (rules.length === 0) return [];
  const parts = rules.map((rule, k) => {
    const n = found?.[k]?.participants.length;
    return n === undefined ? ruleText(rule) : `${ruleText(rule)}, ${count(n, "participant")}`;
  });
  return [
    `The model's exclusion rules, part of the model before it was fitted, left out every participant meeting one of them: ${parts.join("; ")}; a participant with a missing value in a rule's column was not left out by that rule.`,
  ];
}

function setAsideSentence(spec: ModelSpec): string {
  const asides = spec.setAside;
  if (asides.length === 0) return "No participant was set aside.";
  const everyRegion = new Set(
    asides.filter((s) => s.region === undefined).map((s) => s.participant),
  );
  const pairs = new Set(
    asides
      .filter((s) => s.region !== undefined && !everyRegion.has(s.participant))
      .map((s) => `${s.participant}\u0000${s.region}`),
  );
  const people = new Set([...pairs].map((p) => p.split("\u0000")[0])).size;
  const parts: string[] = [];
  if (everyRegion.size > 0)
    parts.push(`${count(everyRegion.size, "participant")} from every region`);
  if (people === 1) parts.push(`1 participant from ${count(pairs.size, "region")}`);
  else if (people > 1 && pairs.size === people)
    parts.push(`${count(people, "participant")} from 1 region each`);
  else if (people > 1)
    parts.push(
      `${count(people, "participant")} from some regions only (${count(pairs.size, "participant–region pair")})`,
    );
  const automatic =
    (spec.exclusionRules ?? []).length > 0 ? "" : ", and no participant was excluded automatically";
  return `The team set aside ${list(parts)}; every set-aside has a written reason recorded in the study's audit log${automatic}.`;
}

function dataSentences(input: MethodsInput, spec: ModelSpec): string[] {
  const out = joinSentences(input);
  if (input.session && input.session.of > 1 && spec.kind !== "reliability") {
    out.push(
      `The brain table holds ${count(input.session.of, "session")}; values from session ${quoted(input.session.label)} were analysed.`,
    );
  }
  out.push(setAsideSentence(spec));
  out.push(...ruleSentences(spec, input.result.ruleExclusions));
  const n = nRange(input.result.regions);
  if (spec.kind === "reliability") {
    out.push(
      `Participants without a value in every session were left out of that region, leaving ${n} per region.`,
    );
  } else {
    const fields = ["the contrast value"];
    if (spec.kind === "association" && spec.predictor) fields.push(quoted(spec.predictor));
    if (spec.group) fields.push(`the group ${quoted(spec.group)}`);
    if (spec.covariates.length > 0)
      fields.push(spec.covariates.length === 1 ? "the covariate" : "a covariate");
    out.push(
      `Participants with a missing value in ${list(fields, "or")} were left out of that region only (listwise deletion), leaving ${n} per region.`,
    );
  }
  return out;
}

/** "In the region “L_insula”" or "In each of the 12 regions". */
function regionWords(regions: readonly RegionResult[]): string {
  return regions.length === 1
    ? `In the region ${quoted(regions[0].region)}`
    : `In each of the ${numeral(regions.length)} regions`;
}

/** ", adjusting for “age”, “sex”, and the group “group”," or "". */
function adjustingWords(spec: ModelSpec): string {
  const terms = spec.covariates.map(quoted);
  if (spec.kind === "association" && spec.group && !spec.interaction)
    terms.push(`the group ${quoted(spec.group)}`);
  return terms.length > 0 ? `, adjusting for ${list(terms)},` : "";
}

function modelSentences(spec: ModelSpec, regions: readonly RegionResult[], c: Citations): string[] {
  const where = regionWords(regions);
  const adjusting = adjustingWords(spec);
  const hasCov = spec.covariates.length > 0;
  const weighted = spec.weights === "first-level-se";
  const out: string[] = [];
  if (spec.kind === "reliability") {
    out.push(
      `${where}, the test–retest reliability of the contrast value across sessions was estimated by the intraclass correlation ICC(2,1) (two-way random effects, absolute agreement, single session), with the other five forms and their 95% confidence intervals reported, and tested against zero with its F test ${c.cite("Shrout & Fleiss 1979")}.`,
    );
    return out;
  }
  if (spec.kind === "one-sample") {
    let how: string;
    if (weighted)
      how = hasCov
        ? "using the intercept of a weighted linear model with mean-centred covariates (the adjusted weighted mean)"
        : "using the weighted mean";
    else if (spec.estimator === "ols")
      how = hasCov
        ? "using the intercept of a least-squares linear model with mean-centred covariates (the adjusted mean)"
        : `with a one-sample t test ${c.cite("Student 1908")}`;
    else if (spec.estimator === "rank")
      how = `with the Wilcoxon signed-rank test ${c.cite("Wilcoxon 1945")}, the estimate being the Hodges–Lehmann pseudomedian ${c.cite("Hodges & Lehmann 1963")}`;
    else how = robustWords(spec.estimator, c, "location");
    const subject =
      spec.estimator === "ols"
        ? "the mean contrast value across participants"
        : "the location of the contrast values across participants";
    out.push(`${where}, ${subject}${adjusting} was tested against zero ${how}.`);
  } else if (spec.kind === "two-group") {
    const [a, b] = spec.levels ?? ["first", "second"];
    const levels = spec.levels ? `the levels ${quoted(a)} and ${quoted(b)}` : "the two levels";
    let how: string;
    if (weighted)
      how = hasCov
        ? "by a weighted linear model with the covariates"
        : "using the weighted difference in means";
    else if (spec.estimator === "ols")
      how = hasCov
        ? "by a least-squares linear model with the covariates (analysis of covariance)"
        : `with Student's t test with pooled variance ${c.cite("Student 1908")}`;
    else if (spec.estimator === "welch")
      how = `with Welch's t test and Welch–Satterthwaite degrees of freedom ${c.cite("Welch 1947")}`;
    else if (spec.estimator === "rank")
      how = `with the Mann–Whitney U test ${c.cite("Mann & Whitney 1947")}, the estimate being the Hodges–Lehmann shift ${c.cite("Hodges & Lehmann 1963")}`;
    else how = robustWords(spec.estimator, c, "difference");
    out.push(
      `${where}, contrast values were compared between ${levels} of ${quoted(spec.group ?? "group")}${adjusting} ${how}; the estimate is ${spec.levels ? `${quoted(a)} minus ${quoted(b)}` : "the first level minus the second"}.`,
    );
  } else {
    const predictor = quoted(spec.predictor ?? "predictor");
    const target = spec.interaction
      ? `the difference between the levels of ${quoted(spec.group ?? "group")} in the slope of the contrast value on ${predictor} (predictor × group interaction)${adjusting}`
      : `the association between the contrast value and ${predictor}${adjusting}`;
    const adjusted = hasCov || Boolean(spec.group);
    let how: string;
    if (weighted) how = "by weighted least squares";
    else if (spec.estimator === "ols") {
      how = spec.interaction
        ? "by least squares"
        : adjusted
          ? `as the least-squares slope of the predictor with the partial correlation r and its Fisher z interval ${c.cite("Fisher 1921")}`
          : `as the least-squares regression slope with Pearson's r and its Fisher z interval ${c.cite("Fisher 1921")}`;
    } else if (spec.estimator === "rank") {
      how = adjusted
        ? `by the partial Spearman correlation (ranks, linear adjustment for the covariates) ${c.cite("Spearman 1904")}`
        : `by Spearman's rank correlation ${c.cite("Spearman 1904")}`;
    } else if (spec.estimator === "skipped") {
      how = `by the skipped correlation: bivariate outliers found by a projection method with a boxplot rule were removed and Pearson's r computed on the rest ${c.cite("Wilcox 2004", "Rousselet & Pernet 2012")}`;
    } else if (spec.estimator === "bend") {
      how = `by the percentage-bend correlation with β = 0.2 ${c.cite("Wilcox 1994")}`;
    } else how = robustWords(spec.estimator, c, spec.interaction ? "interaction" : "slope");
    out.push(`${where}, ${target} was estimated ${how}.`);
  }
  if (weighted) {
    const tau =
      spec.tau2Method === "reml"
        ? `restricted maximum likelihood ${c.cite("Viechtbauer 2005")}`
        : `the DerSimonian–Laird method of moments ${c.cite("DerSimonian & Laird 1986")}`;
    const small =
      spec.smallSample === "knapp-hartung"
        ? `tests and intervals used the Knapp–Hartung adjusted standard error with a t reference on n − p degrees of freedom ${c.cite("Knapp & Hartung 2003")}`
        : "tests and intervals used a z statistic with a normal reference";
    out.push(
      `Each participant was weighted by 1/(se² + τ²), with se the first-level standard error of the contrast value and τ² the residual variance of true differences between participants, estimated by ${tau}; ${small}, and the share of residual variance due to true differences (I²) was reported ${c.cite("Higgins & Thompson 2002")}.`,
    );
  }
  return out;
}

function robustWords(
  estimator: ModelSpec["estimator"],
  c: Citations,
  what: "location" | "difference" | "slope" | "interaction",
): string {
  const target =
    what === "difference"
      ? "group difference"
      : what === "interaction"
        ? "interaction coefficient"
        : what;
  if (estimator === "huber") {
    return `by robust M-estimation of the ${target} with Huber's ψ (k = 1.345) ${c.cite("Huber 1964")}, a median-absolute-deviation scale, and iteratively reweighted least squares`;
  }
  return `by robust M-estimation of the ${target} with Tukey's bisquare ψ (c = 4.685) ${c.cite("Beaton & Tukey 1974")}, started from the Huber estimate ${c.cite("Huber 1964")}, with a median-absolute-deviation scale and iteratively reweighted least squares`;
}

/** How the rank tests' p-values were found, from the regions' method words ("exact" or an approximation). */
function rankExactness(regions: readonly RegionResult[], c: Citations): string {
  const methods = regions.map((r) => String(r.method ?? ""));
  const exact = methods.filter((m) => /\bexact\b/.test(m)).length;
  const ways: string[] = [];
  if (methods.some((m) => /Edgeworth series/.test(m)))
    ways.push(`the Edgeworth series for Spearman's S = Σd² ${c.cite("Best & Roberts 1975")}`);
  if (methods.some((m) => /t approximation|partial Spearman/.test(m)))
    ways.push("the t approximation");
  const approximation =
    ways.length > 0
      ? ways.join(" or ")
      : "the normal approximation with tie and continuity correction";
  if (exact === regions.length) return "The rank tests' p-values are exact.";
  if (exact === 0) return `The rank tests' p-values come from ${approximation}.`;
  return `The rank tests' p-values are exact in ${count(exact, "region")} and come from ${approximation} in ${count(regions.length - exact, "region")}.`;
}

interface PermutationInfo {
  exact: boolean;
  rearrangements: number;
}

function permutationInfo(regions: readonly RegionResult[]): PermutationInfo[] {
  const out: PermutationInfo[] = [];
  for (const r of regions) {
    const p = r.permutation as { exact?: unknown; rearrangements?: unknown } | undefined;
    if (p && typeof p.exact === "boolean" && typeof p.rearrangements === "number")
      out.push({ exact: p.exact, rearrangements: p.rearrangements });
  }
  return out;
}

function inferenceSentences(
  spec: ModelSpec,
  regions: readonly RegionResult[],
  c: Citations,
): string[] {
  if (spec.kind === "reliability") return [];
  const seed = `seed ${spec.seed}`;
  if (spec.inference === "parametric") {
    const out = ["All p-values are two-sided; intervals are 95% confidence intervals."];
    if (spec.estimator === "rank" && spec.weights === "none") out.push(rankExactness(regions, c));
    return out;
  }
  if (spec.inference === "bootstrap") {
    const percentile = spec.estimator === "skipped" || spec.estimator === "bend";
    const interval = percentile
      ? `percentile intervals ${c.cite("Efron & Tibshirani 1993")}`
      : `bias-corrected and accelerated (BCa) intervals ${c.cite("Efron 1987", "Efron & Tibshirani 1993")}`;
    return [
      `Intervals were 95% ${interval} from ${count(spec.resamples, "bootstrap resample")} of participants drawn with a seeded generator (${seed}); the two-sided p-value is 2·min(A, 1 − A), with A the share of bootstrap estimates below zero.`,
    ];
  }
  const info = permutationInfo(regions);
  const allExact = info.length > 0 && info.every((i) => i.exact);
  const someExact = info.some((i) => i.exact);
  let scheme: string;
  if (spec.estimator === "ols" && spec.kind === "one-sample") {
    scheme = `by sign flipping of the ${spec.covariates.length > 0 ? "residuals of the reduced model" : "contrast values"}, with the t statistic recomputed for each rearrangement ${c.cite("Winkler et al. 2014")}`;
  } else if (spec.estimator === "ols") {
    scheme = `by permuting the residuals of the reduced model without the tested term and recomputing the t statistic, the Freedman–Lane procedure ${c.cite("Freedman & Lane 1983", "Winkler et al. 2014")}`;
  } else {
    const what =
      spec.kind === "one-sample"
        ? "flipping the signs of the contrast values"
        : spec.kind === "two-group"
          ? "permuting the group labels"
          : `permuting the values of ${quoted(spec.predictor ?? "the predictor")}`;
    scheme = `by ${what} and recomputing the estimator's statistic`;
  }
  let how: string;
  if (allExact) {
    const counts = info.map((i) => i.rearrangements);
    const lo = Math.min(...counts);
    const hi = Math.max(...counts);
    const howMany =
      lo === hi
        ? count(lo, "rearrangement")
        : `${numeral(lo)} to ${numeral(hi)} rearrangements, depending on the region`;
    how = `every distinct rearrangement was enumerated (${howMany}), so the p-values are exact`;
  } else {
    const shared = regions.length > 1 ? ", the same in every region," : "";
    const enumerated = someExact
      ? "; where fewer distinct rearrangements exist than were asked for, all were enumerated and the p-value is exact"
      : "";
    how = `${count(spec.resamples, "random rearrangement")} ${was(spec.resamples)} drawn with a seeded generator (${seed})${shared} and the p-values are Monte Carlo estimates${enumerated}`;
  }
  return [
    `Two-sided p-values were obtained ${scheme}; ${how}. Intervals are parametric 95% confidence intervals.`,
  ];
}

function correctionSentence(spec: ModelSpec, regionCount: number, c: Citations): string {
  if (regionCount === 1) return "With 1 region, no correction over regions applies.";
  const over = `over the ${numeral(regionCount)} regions`;
  switch (spec.correction) {
    case "bonferroni":
      return `The p-values were corrected ${over} by the Bonferroni method ${c.cite("Dunn 1961")}.`;
    case "holm":
      return `The p-values were corrected for the family-wise error rate ${over} by Holm's step-down procedure ${c.cite("Holm 1979")}.`;
    case "bh":
      return `The p-values were adjusted ${over} by the Benjamini–Hochberg procedure to control the false discovery rate ${c.cite("Benjamini & Hochberg 1995")}.`;
    case "maxt":
      return `The family-wise error rate ${over} was controlled with the distribution of the maximum absolute statistic across regions in the same rearrangements ${c.cite("Westfall & Young 1993")}.`;
    default:
      return `The p-values were not corrected ${over}.`;
  }
}

function diagnosticSentences(spec: ModelSpec, c: Citations): string[] {
  if (spec.kind === "reliability") return [];
  const sensitivity =
    spec.weights === "none"
      ? "; each region was also refitted without participants flagged as outlying or influential, as a sensitivity analysis"
      : "";
  return [
    `Leverage, the externally studentized residual, and Cook's distance were computed for every participant in every region from the least-squares fit of the region's design ${c.cite("Cook 1977")}; participants were flagged as outlying (studentized residual beyond the Bonferroni critical value; ${c.name("Cook & Weisberg 1982")}), of high leverage (hat value above 2p/n; ${c.name("Hoaglin & Welsch 1978")}), or influential (Cook's distance above 4/n; ${c.name("Bollen & Jackman 1990")})${sensitivity}.`,
    "Flags did not remove anyone from the reported estimates.",
  ];
}

function softwareSentences(input: MethodsInput, spec: ModelSpec): string[] {
  const name = input.softwareName ?? "Covarion";
  const version =
    typeof input.recipe.softwareVersion === "string" ? input.recipe.softwareVersion : null;
  const recorded = ["the SHA-256 hashes of the data files", "the model"];
  if (spec.inference !== "parametric") recorded.push("the seed");
  if (version) recorded.push("the software version");
  return [
    `Analyses were run in ${name}${version ? ` version ${version}` : ""}.`,
    `The fit's recipe records ${list(recorded)}; running the recipe again reproduces every number exactly.`,
  ];
}

/** Said when the study let one person start, approve and seal the fit. */
/**
 * "The analysis followed the plan registered on 3 Dec 2026 (SHA-256
 * 0123456789ab…)." or "The analysis deviated from the plan registered on …
 * (SHA-256 …): added covariate mean_fd; estimator huber instead of ols."
 * The date is in UTC, so the paragraph reads the same everywhere.
 */
export function planSentence(plan: NonNullable<MethodsInput["plan"]>): string {
  const which = `the plan registered on ${dateWords(plan.registeredAt, "UTC")} (SHA-256 ${plan.sha256.slice(0, 12)}…)`;
  return plan.asPlanned || plan.deviations.length === 0
    ? `The analysis followed ${which}.`
    : `The analysis deviated from ${which}: ${plan.deviations.join("; ")}.`;
}

export const singlePersonSignOffSentence = `The same person started, approved, and sealed this fit; the study's setting “${secondPersonSignOffLabel}” was turned off.`;

function cautionsOf(input: MethodsInput, spec: ModelSpec, c: Citations): string[] {
  const out: string[] = [];
  if (input.regionSelection === "same-data") out.push(c.caution(circularityPaperCaution));
  const ns = input.result.regions.map((r) => r.n);
  const small = smallSamplePaperCaution(ns);
  if (small) out.push(c.caution(small));
  if (spec.kind === "association") {
    const imprecise = associationPaperCaution(Math.max(0, ...ns));
    if (imprecise) out.push(c.caution(imprecise));
  }
  return out;
}

/**
 * Builds the methods paragraph of a finished fit. Pure; cost O(regions +
 * set-asides). Throws MethodsTextError when the recipe's model fields are
 * malformed or the result has no regions.
 */
export function buildMethodsText(input: MethodsInput): MethodsText {
  const spec = specOf(input.recipe);
  if (spec.kind === "prediction") return predictionMethodsText(input, spec);
  if (spec.kind === "specification-curve") return curveMethodsText(input, spec);
  const regions = input.result.regions;
  if (regions.length === 0) throw new MethodsTextError("the fit's result has no regions");
  const c = new Citations();
  const sentences: string[] = [
    ...dataSentences(input, spec),
    ...modelSentences(spec, regions, c),
    ...inferenceSentences(spec, regions, c),
    correctionSentence(spec, regions.length, c),
    ...diagnosticSentences(spec, c),
    ...softwareSentences(input, spec),
  ];
  if (input.singlePersonSignOff) sentences.push(singlePersonSignOffSentence);
  if (input.plan) sentences.push(planSentence(input.plan));
  const cautions = cautionsOf(input, spec, c);
  return { text: [...sentences, ...cautions].join(" "), references: c.references(), cautions };
}

/** The methods paragraph of a prediction fit (one model over all chosen regions). */
function predictionMethodsText(input: MethodsInput, spec: ModelSpec): MethodsText {
  const block = input.result.prediction;
  if (!block) throw new MethodsTextError("the fit's result has no prediction block");
  const c = new Citations();
  const trait = quoted(spec.predictor ?? "trait");
  const regionCount = block.regions.length;
  const sentences = joinSentences(input);
  if (input.session && input.session.of > 1)
    sentences.push(
      `The brain table holds ${count(input.session.of, "session")}; values from session ${quoted(input.session.label)} were analysed.`,
    );
  sentences.push(setAsideSentence(spec));
  const confoundNames = spec.covariates.map(quoted);
  const n = input.result.n ?? block.participants.length;
  sentences.push(
    `Participants without a value in every chosen region, ${trait}${confoundNames.length > 0 ? `, or ${list(confoundNames, "or")}` : ""} were left out, leaving ${count(n, "participant")}.`,
  );
  const folds =
    block.folds === "leave-one-out"
      ? "leave-one-out cross-validation"
      : `${numeral(block.folds)}-fold cross-validation repeated ${block.repeats === 1 ? "once" : `${numeral(block.repeats)} times`}`;
  const strata = spec.group ? `, stratified by ${quoted(spec.group)}` : "";
  sentences.push(
    `The trait ${trait} was predicted from the contrast values of ${regionCount === 1 ? count(1, "region") : `the ${numeral(regionCount)} regions together`} by ridge regression with an unpenalised intercept ${c.cite("Hoerl & Kennard 1970")}, evaluated by ${folds}${block.folds === "leave-one-out" ? "" : ` (folds drawn with seed ${spec.seed}${strata})`}.`,
  );
  const steps: string[] = [];
  if (confoundNames.length > 0)
    steps.push(
      `${list(confoundNames)} ${confoundNames.length === 1 ? "was" : "were"} regressed out of each region and of ${trait} by least squares on the training participants, and the held-out participants were adjusted with the training coefficients ${c.cite("Snoek et al. 2019")}`,
    );
  steps.push("each region was standardised by its training mean and standard deviation");
  steps.push(
    block.lambdaChoice === "fixed"
      ? `the ridge penalty was fixed at λ = ${block.lambdas[0]?.lambda ?? spec.lambda}`
      : `the ridge penalty was chosen from ${spec.lambdaGrid ? count(spec.lambdaGrid.length, "value") : "20 values log-spaced from 10⁻³ to 10³ times the number of training participants"} by an inner five-fold cross-validation minimising the mean squared error`,
  );
  sentences.push(
    `Within each training set, ${list(steps)}; no step saw the held-out participants ${c.cite("Poldrack et al. 2020")}.`,
  );
  sentences.push(
    "Prediction was scored on the held-out participants by the Pearson correlation r between observed and predicted values, by R² = 1 − Σ(observed − predicted)²/Σ(observed − mean observed)², and by the mean absolute error, each averaged over the repeats.",
  );
  if (block.permutation)
    sentences.push(
      `The scores were tested by re-running the whole procedure on ${block.permutation.resamples.toLocaleString("en")} random permutations of ${trait}, with p = (b + 1)/(m + 1) ${c.cite("Phipson & Smyth 2010")}.`,
    );
  else sentences.push("No test of significance was run.");
  sentences.push(
    "Performance was also computed with 20%, 40%, 60%, and 80% of each training set to show how it grows with the number of participants.",
  );
  sentences.push(...softwareSentences(input, spec));
  if (input.singlePersonSignOff) sentences.push(singlePersonSignOffSentence);
  if (input.plan) sentences.push(planSentence(input.plan));
  const cautions: string[] = [];
  if (input.regionSelection === "same-data") cautions.push(c.caution(circularityPaperCaution));
  return { text: [...sentences, ...cautions].join(" "), references: c.references(), cautions };
}

/** The methods paragraph of a specification curve (one question in one region under every combination of choices). */
function curveMethodsText(input: MethodsInput, spec: ModelSpec): MethodsText {
  const c = new Citations();
  const sentences = joinSentences(input);
  sentences.push(setAsideSentence(spec));
  const region = quoted(spec.regions?.[0] ?? "region");
  const question = spec.predictor
    ? `the association of the contrast with ${quoted(spec.predictor)}`
    : `the difference in the contrast between ${quoted(spec.levels?.[0] ?? "first")} and ${quoted(spec.levels?.[1] ?? "second")}`;
  const {
    estimators: estimatorList,
    covariateSets: sets,
    exclusionRules: rules,
    count: total,
  } = curveChoices(spec);
  const setWords = sets.map((set) => (set.length === 0 ? "no covariates" : list(set.map(quoted))));
  const ruleWords = rules.map(ruleText);
  sentences.push(
    `In region ${region}, ${question} was estimated under every combination of reasonable analytic choices ${c.cite("Steegen et al. 2016", "Simonsohn et al. 2020")}: ${count(estimatorList.length, "estimator")} (${list(estimatorList.map((e) => estimatorWords[e]))}), ${count(sets.length, "covariate set")} (${setWords.join("; ")})${rules.length > 0 ? `, and each of ${count(rules.length, "exclusion rule")} (${ruleWords.join("; ")}) applied or not` : ""}, giving ${count(total, "specification")}.`,
  );
  sentences.push(
    "Each specification was fitted as the ordinary single-region model; an exclusion rule set aside the participants meeting it, and a participant with a missing value in a rule's column was not excluded by that rule. A result was counted as significant at p < .05, two-sided.",
  );
  if (spec.inference === "permutation")
    sentences.push(
      `The specifications were tested jointly ${c.cite("Simonsohn et al. 2020")} against ${spec.resamples.toLocaleString("en")} data sets made under the null hypothesis by permuting ${spec.predictor ? quoted(spec.predictor) : `the labels of ${quoted(spec.group ?? "group")}`} across participants, each participant keeping their contrast value, covariates, and the values the exclusion rules read; every specification was re-run on each, and the median estimate, the share of significant results in the dominant direction, and Stouffer's combined Z were compared with their null distributions, with p = (b + 1)/(m + 1) ${c.cite("Phipson & Smyth 2010")}.`,
    );
  else sentences.push("No joint test across specifications was run.");
  sentences.push(...softwareSentences(input, spec));
  if (input.singlePersonSignOff) sentences.push(singlePersonSignOffSentence);
  if (input.plan) sentences.push(planSentence(input.plan));
  const cautions: string[] = [];
  if (input.regionSelection === "same-data") cautions.push(c.caution(circularityPaperCaution));
  return { text: [...sentences, ...cautions].join(" "), references: c.references(), cautions };
}
