/**
 * The names of a model's choices, in one place for every screen and export:
 * a short label (the model form's chips, lists), and words for sentences
 * (the fit header, the model list). Published methods keep their published
 * names. The methods paragraph (methods-text.ts) writes its own, longer
 * sentences with citations; the CSV names the correction with
 * `correctionLabels`. Zod-free, no imports but types.
 */
import type { ModelSpec } from "./spec";

type Kind = ModelSpec["kind"];
type Estimator = ModelSpec["estimator"];
type Inference = ModelSpec["inference"];
type Correction = ModelSpec["correction"];

/** The question a kind of model asks, as the model form offers it (in this order). */
export const kindLabels: Readonly<Record<Kind, string>> = {
  association: "Tracks a trait",
  "two-group": "Two groups differ",
  "one-sample": "Effect across the group",
  reliability: "Reliability across sessions",
  prediction: "Predicts a trait in new people",
  "specification-curve": "Every reasonable analysis of one question",
};

export const estimatorLabels: Readonly<Record<Estimator, string>> = {
  ols: "Least squares",
  welch: "Welch t",
  rank: "Rank-based",
  huber: "Huber",
  bisquare: "Bisquare",
  skipped: "Skipped correlation",
  bend: "Percentage bend",
};

/** An estimator inside a sentence ("… by ordinary least squares"). */
export const estimatorWords: Readonly<Record<Estimator, string>> = {
  ols: "ordinary least squares",
  welch: "Welch's unequal-variance t",
  rank: "rank-based",
  huber: "Huber M-estimation",
  bisquare: "Tukey bisquare M-estimation",
  skipped: "skipped correlation (projection outlier removal)",
  bend: "percentage-bend correlation",
};

export const inferenceLabels: Readonly<Record<Inference, string>> = {
  parametric: "Parametric",
  permutation: "Permutation",
  bootstrap: "Bootstrap",
  none: "None",
};

export const inferenceWords: Readonly<Record<Inference, string>> = {
  parametric: "parametric inference",
  permutation: "permutation inference",
  bootstrap: "bootstrap intervals",
  none: "no test",
};

/** The model form's order of corrections. */
export const correctionOrder: readonly Correction[] = ["none", "holm", "bh", "bonferroni", "maxt"];

export const correctionLabels: Readonly<Record<Correction, string>> = {
  none: "None",
  bonferroni: "Bonferroni",
  holm: "Holm",
  bh: "Benjamini–Hochberg",
  maxt: "max-T",
};

export const correctionWords: Readonly<Record<Correction, string>> = {
  none: "no correction over regions",
  bonferroni: "Bonferroni correction over regions",
  holm: "Holm correction over regions",
  bh: "Benjamini–Hochberg false discovery rate over regions",
  maxt: "max-T family-wise correction over regions",
};

/** Options for a chooser, in the record's order. */
export function optionsOf<K extends string>(
  labels: Readonly<Record<K, string>>,
  order: readonly K[] = Object.keys(labels) as K[],
): { value: K; label: string }[] {
  return order.map((value) => ({ value, label: labels[value] }));
}
