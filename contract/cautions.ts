/**
 * The cautions Covarion shows, in one place: on screens (plain words for the
 * person at the screen) and in the methods paragraph (academic English for a
 * paper). Each caution's threshold and text live here once; screens and the
 * methods paragraph import them. Pure strings and small functions (no
 * framework imports: the web app imports this module).
 *
 * - Research use: group-level associations are not a basis for decisions
 *   about an individual patient (on every screen, and next to one
 *   participant's values).
 * - Set-aside reasons decided before looking at results.
 * - Circular region selection (Vul et al. 2009; Kriegeskorte et al. 2009).
 * - Small samples: a region with fewer than `SMALL_SAMPLE_N` participants
 *   (threshold: common practice, no source; Marek et al. 2022, Nature
 *   603:654–660, show how small samples inflate brain–trait associations).
 * - Imprecise associations below `SMALL_ASSOCIATION_N` participants (methods
 *   paragraph; threshold: common practice, no source; after Marek et al. 2022).
 */
import type { ReferenceKey } from "./methods-text";

/** A caution for the methods paragraph: its sentence and the references it cites. */
export interface PaperCaution {
  text: string;
  references: readonly ReferenceKey[];
}

// ─── Research use ───

/** The research-use caution (app footer, sign-in). */
export const researchUseCaution =
  "Covarion is for research analysis. Group-level associations are not a basis for decisions about an individual patient.";

/** Shown next to one participant's values (region detail, participant card). */
export const individualCaution = "Not a basis for decisions about this individual.";

// ─── Set-asides ───

/** Shown before a participant is set aside. */
export const setAsideCaution =
  "Set participants aside only for reasons decided before looking at results (for example excessive motion or failed task checks). Every set-aside is logged with its reason.";

// ─── Circular region selection ───

const circularityReferences = [
  "Vul et al. 2009",
  "Kriegeskorte et al. 2009",
] as const satisfies readonly ReferenceKey[];

/** Shown with a model whose regions were chosen from the same data (model form, models list, fit screen). */
export const circularityCaution =
  "The regions were chosen from the same data this model tests. Selecting regions because they show an effect and then testing that effect on the same participants inflates it (Vul et al. 2009; Kriegeskorte et al. 2009). Choose regions from anatomy, prior literature or independent data, or report these results as exploratory.";

/** The methods paragraph's circularity caution. */
export const circularityPaperCaution: PaperCaution = {
  text: `Caution: the regions were chosen from the same data that were tested here, which inflates the reported effects; these results should be read as exploratory (${circularityReferences.join("; ")}).`,
  references: circularityReferences,
};

// ─── Small samples ───

/** A region with fewer participants than this gets the small-sample caution (common practice, no source). */
export const SMALL_SAMPLE_N = 20;

const smallSampleReferences = ["Marek et al. 2022"] as const satisfies readonly ReferenceKey[];

/** Why small samples call for caution (shared by the screen and the paper). */
const smallSampleReason = `estimates from samples this small vary widely from one sample to the next, and those that reach significance tend to be inflated (${smallSampleReferences.join("; ")})`;

/** True when a region's N calls for the small-sample caution. */
export function isSmallSample(n: number): boolean {
  return n < SMALL_SAMPLE_N;
}

/** The regions whose N is below `SMALL_SAMPLE_N`, in the given order. */
export function smallSampleRegions<R extends { readonly region: string; readonly n: number }>(
  regions: readonly R[],
): R[] {
  return regions.filter((r) => isSmallSample(r.n));
}

/** The fit screen's small-sample caution: a title, the text and the regions it names. */
export interface SmallSampleCaution {
  title: string;
  text: string;
  regions: { region: string; n: number }[];
}

/** Title of the small-sample notice on screens. */
export const smallSampleTitle = "Small sample";

/** How many regions the screen's caution names before "and k more". */
const namedRegionsMax = 5;

/**
 * The fit screen's small-sample caution for a fit's regions, or null when
 * every region has at least `SMALL_SAMPLE_N` participants. Cost O(regions).
 */
export function smallSampleCaution(
  regions: readonly { readonly region: string; readonly n: number }[],
): SmallSampleCaution | null {
  const small = smallSampleRegions(regions).map((r) => ({ region: r.region, n: r.n }));
  if (small.length === 0) return null;
  const named = small.slice(0, namedRegionsMax).map((r) => `${r.region}, N = ${r.n}`);
  const more = small.length - named.length;
  const where =
    regions.length === 1
      ? `this region (N = ${small[0].n})`
      : `${small.length} of ${regions.length} regions (${named.join("; ")}${more > 0 ? `; and ${more} more` : ""})`;
  return {
    title: smallSampleTitle,
    text: `Fewer than ${SMALL_SAMPLE_N} participants in ${where}: ${smallSampleReason}. Read the confidence interval, not only p.`,
    regions: small,
  };
}

/** The region detail's small-sample caution for one region's N, or null. */
export function regionSmallSampleCaution(n: number): string | null {
  if (!isSmallSample(n)) return null;
  return `Fewer than ${SMALL_SAMPLE_N} participants (N = ${n}): ${smallSampleReason}. Read the confidence interval, not only p.`;
}

/**
 * The methods paragraph's small-sample caution for the regions' N, or null.
 * Counts are numerals (journals' statistics style); the sentence starts
 * with "Caution:", never with a numeral.
 */
export function smallSamplePaperCaution(ns: readonly number[]): PaperCaution | null {
  const small = ns.filter(isSmallSample).length;
  if (small === 0) return null;
  const subject =
    ns.length === 1
      ? "the region was analysed with"
      : small === ns.length
        ? `all ${ns.length} regions were analysed with`
        : `${small} of the ${ns.length} regions ${small === 1 ? "was" : "were"} analysed with`;
  return {
    text: `Caution: ${subject} fewer than ${SMALL_SAMPLE_N} participants; ${smallSampleReason}.`,
    references: smallSampleReferences,
  };
}

// ─── Imprecise brain–trait associations ───

/** Association fits below this largest N get the imprecision caution (common practice, no source). */
export const SMALL_ASSOCIATION_N = 1000;

/** The methods paragraph's caution for an association fit whose largest N is below `SMALL_ASSOCIATION_N`, or null. */
export function associationPaperCaution(maxN: number): PaperCaution | null {
  if (maxN >= SMALL_ASSOCIATION_N) return null;
  return {
    text: `Caution: brain–trait associations estimated from fewer than ${SMALL_ASSOCIATION_N.toLocaleString("en")} participants are imprecise and tend to shrink on replication (${smallSampleReferences.join("; ")}); the confidence intervals, not only the p-values, should be reported.`,
    references: smallSampleReferences,
  };
}

// ─── Prediction: weights and in-sample scores ───

/** Title of the prediction fit's caution on screens. */
export const predictionCautionTitle = "Reading a prediction";

/**
 * Shown with every prediction fit (fit screen): the region weights of a
 * model that combines correlated regions cannot be read one by one (Haufe
 * et al. 2014, NeuroImage 87:96–110), and in-sample correlations overstate
 * how well a brain measure predicts a trait in new people (Poldrack,
 * Huckins & Varoquaux 2020).
 */
export const predictionCaution =
  "Report the held-out scores: a correlation computed on the same people a model was fitted to overstates how well it predicts new people. The weights show how the model combines the regions, not what each region does on its own: with correlated regions a weight can be large, small or of either sign for reasons that have nothing to do with that region's link to the trait (Haufe et al. 2014, NeuroImage 87:96–110).";
