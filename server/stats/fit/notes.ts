/**
 * Stage 5 of a fit, notes: the plain-words notes a fit carries, one function
 * per part of the method (inference, correction over regions, weights,
 * diagnostics, reliability). The stages call these in the order the notes
 * appear in the result; nothing here computes.
 */
import type { ModelSpec } from "../../../contract/spec";

/** The note of a correction over regions other than max-T (`spec.correction`). */
export function correctionNote(method: string): string {
  switch (method) {
    case "bonferroni":
      return "Adjusted p: Bonferroni, min(1, m·p) over the m regions.";
    case "holm":
      return "Adjusted p: Holm (1979) step-down over the regions.";
    case "bh":
      return "Adjusted p: Benjamini–Hochberg (1995) false discovery rate over the regions.";
    default:
      return "Adjusted p: no correction over regions (equal to p).";
  }
}

/** The note of max-T, the family-wise correction from the same rearrangements in every region. */
export function maxTNote(): string {
  return "Adjusted p: family-wise p-values from the maximum |statistic| over regions in the same rearrangements (max-T).";
}

/** The note of a permutation p: least squares (sign flipping or Freedman–Lane) or the generic rearrangement test. */
export function permutationNote(kind: ModelSpec["kind"], leastSquares: boolean): string {
  if (!leastSquares)
    return "p: permutation test of the estimator's statistic (generic rearrangement test; the same rearrangements in every region).";
  return kind === "one-sample"
    ? "p: sign-flipping permutation test of the t statistic (Winkler et al. 2014)."
    : "p: Freedman–Lane permutation test of the t statistic (Freedman & Lane 1983).";
}

/** The note of a permutation fit whose regions differ in participants: one rearrangement of the `shared` participants for all regions. */
export function sharedRearrangementNote(
  kind: ModelSpec["kind"],
  shared: number,
  resamples: number,
): string {
  return `Regions differ in participants (empty cells or set-asides in one region): each region is fitted on its own participants, and all regions share one rearrangement of the ${shared} participants available in at least one region — ${
    kind === "one-sample"
      ? "one sign vector, each region taking the signs of its own participants"
      : "one order, each region keeping its own participants in that order"
  } — so the rearranged statistics of all regions come from the same draws (Westfall & Young 1993; Winkler et al. 2014). Rearrangements are enumerated exhaustively only when the ${shared} participants have at most ${resamples} of them (${
    kind === "one-sample" ? `2^${shared} sign vectors` : `${shared}! orders`
  }).`;
}

/** The note of a bootstrap fit: the interval's method and the p. */
export function bootstrapNote(method: "bca" | "percentile"): string {
  return `Intervals: ${method === "bca" ? "bias-corrected and accelerated (BCa)" : "percentile"} bootstrap over participants (Efron & Tibshirani 1993); p: 2·min(A, 1 − A), A the share of bootstrap estimates below 0.`;
}

/** The notes of a fit weighted by first-level standard errors: τ², the reference distribution, I². */
export function weightingNotes(s: ModelSpec): string[] {
  const tau2 =
    s.tau2Method === "reml"
      ? "restricted maximum likelihood (REML; Viechtbauer 2005)"
      : "DerSimonian–Laird method of moments (DerSimonian & Laird 1986)";
  return [
    `Weights: each participant counts with 1/(se² + τ²), se the first-level standard error and τ² the residual variance of true differences between participants, estimated by ${tau2}.`,
    s.smallSample === "knapp-hartung"
      ? "Inference: Knapp–Hartung (2003) adjusted standard error with a t reference on n − p degrees of freedom."
      : "Inference: z statistic with a normal reference (no small-sample adjustment).",
    "I²: share of the residual variance due to true differences rather than measurement noise (Higgins & Thompson 2002); the noise share is mean(se²)/(mean(se²) + τ²) and the true-difference share τ²/(mean(se²) + τ²).",
    "Leave-one-out range: not given for weighted fits.",
  ];
}

/** The notes of the diagnostics: where they come from and each flag's rule. */
export function diagnosticNotes(): string[] {
  return [
    "Diagnostics come from the least-squares fit of each region's design, whatever the estimator.",
    "Flag outlier: externally studentized residual beyond the Bonferroni critical value t(1 − 0.05/(2n), n − p − 1) (Cook & Weisberg 1982; Weisberg 2005, §9.4).",
    "Flag leverage: hat value above 2p/n (Hoaglin & Welsch 1978), or equal to 1; at leverage 1 the studentized residual and Cook's distance are undefined and shown as empty.",
    "Flag influence: Cook's distance above 4/n (Bollen & Jackman 1990).",
    "Sensitivity: the same estimator refitted without participants flagged outlier or influence.",
    "Squared Mahalanobis distance (in the exported participant rows): distance of the participant's design values from their mean, (n − 1)(h − 1/n), leverage rescaled.",
  ];
}

/** The notes of a reliability fit after its correction note: the p and the six forms. */
export function reliabilityNotes(): string[] {
  return [
    "p: F test of the hypothesis that the population ICC is 0 (one-sided).",
    "ICC(1,1), ICC(2,1), ICC(3,1) and their k-session forms ICC(1,k), ICC(2,k), ICC(3,k) after Shrout & Fleiss (1979), with 95% confidence intervals; a k-session lower bound that is unbounded below is shown as empty.",
  ];
}
