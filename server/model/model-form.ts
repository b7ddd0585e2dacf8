/**
 * The model form's validation, shared by the web form and the API (zod
 * only: the web app imports this module without any server code).
 *
 * A saved model is a name, the model fields of `modelSpecSchema`, and the
 * answer to "how were the regions chosen?". Selecting regions because they
 * correlate with the trait and then testing that correlation on the same
 * data inflates the effect (Vul et al. 2009; Kriegeskorte et al. 2009), so
 * the answer "this same data" marks the model circular and the product
 * shows `circularityCaution` wherever the model's results appear.
 *
 * `modelSpecProblems` lists the rules that need no data (a kind's required
 * fields, estimators a kind accepts, inference and correction that go
 * together); the fit itself checks everything again against the data.
 */
import { z } from "zod";
import { type ModelSpec, type ModelSpecInput, modelSpecSchema } from "./spec";

export const regionSelections = ["anatomical-or-prior", "independent-data", "same-data"] as const;
export type RegionSelection = (typeof regionSelections)[number];

/** The question and its answers in plain words (the form shows these). */
export const regionSelectionQuestion = "How were the regions chosen?";
export const regionSelectionLabels: Readonly<Record<RegionSelection, string>> = {
  "anatomical-or-prior": "From anatomy or prior literature",
  "independent-data": "From independent data (another sample or task)",
  "same-data": "From this same data",
};

/** The caution's text lives with the product's other cautions. */
export { circularityCaution } from "./cautions";

/** True when the regions were chosen from the same data the model tests. */
export function isCircular(selection: RegionSelection): boolean {
  return selection === "same-data";
}

/** Estimators each kind accepts (the fit engine enforces the same list). */
export const estimatorsByKind: Readonly<Record<ModelSpec["kind"], readonly ModelSpec["estimator"][]>> = {
  "one-sample": ["ols", "rank", "huber", "bisquare"],
  "two-group": ["ols", "welch", "rank", "huber", "bisquare"],
  association: ["ols", "rank", "huber", "bisquare", "skipped", "bend"],
  reliability: ["ols"],
};

export interface SpecProblem {
  /** Field path inside the model fields, e.g. "predictor". */
  field: string;
  message: string;
}

/**
 * Rules of a model that need no data. Returns every problem (empty when
 * the model is consistent). Cost O(fields).
 */
export function modelSpecProblems(spec: ModelSpec): SpecProblem[] {
  const out: SpecProblem[] = [];
  const add = (field: string, message: string) => out.push({ field, message });
  const { kind } = spec;
  if (!estimatorsByKind[kind].includes(spec.estimator)) add("estimator", `'${spec.estimator}' is not available for kind '${kind}'`);
  if (kind === "association" && !spec.predictor) add("predictor", "an association needs a predictor (a numeric column of the participant sheet)");
  if (kind !== "association" && spec.predictor) add("predictor", `not used by kind '${kind}'`);
  if (kind === "two-group" && !spec.group) add("group", "a two-group model needs a grouping column");
  if (spec.group && kind !== "two-group" && kind !== "association") add("group", `not used by kind '${kind}'`);
  if (spec.levels && !spec.group) add("levels", "given without a group");
  if (spec.levels && spec.levels[0] === spec.levels[1]) add("levels", "the two levels must differ");
  if (spec.interaction && kind !== "association") add("interaction", `not used by kind '${kind}'`);
  if (spec.interaction && kind === "association" && !spec.group) add("interaction", "an interaction needs a group");
  if (spec.predictor && spec.covariates.includes(spec.predictor)) add("covariates", `'${spec.predictor}' is already the predictor`);
  if (spec.group && spec.covariates.includes(spec.group)) add("covariates", `'${spec.group}' is already the group`);
  if (new Set(spec.covariates).size !== spec.covariates.length) add("covariates", "a column is listed twice");
  if (spec.regions && new Set(spec.regions).size !== spec.regions.length) add("regions", "a region is listed twice");
  if (spec.correction === "maxt" && spec.inference !== "permutation") add("correction", "max-T correction requires permutation inference");
  if (kind === "reliability") {
    if (spec.inference !== "parametric") add("inference", "kind 'reliability' supports parametric inference only");
    if (spec.covariates.length > 0) add("covariates", "kind 'reliability' does not take covariates");
    if (spec.weights !== "none") add("weights", "kind 'reliability' does not take weights");
  }
  if (spec.weights === "first-level-se") {
    if (spec.estimator !== "ols") add("weights", "'first-level-se' requires estimator 'ols'");
    if (spec.inference !== "parametric") add("weights", "'first-level-se' supports parametric inference only");
  }
  const robustWithCovariates = spec.estimator === "ols" || spec.estimator === "huber" || spec.estimator === "bisquare";
  if (spec.covariates.length > 0 && !robustWithCovariates && !(kind === "association" && spec.estimator === "rank")) {
    add("covariates", `estimator '${spec.estimator}' does not take covariates`);
  }
  if (spec.inference === "permutation" && spec.estimator !== "ols" && (spec.covariates.length > 0 || (kind === "association" && spec.group))) {
    add("inference", `permutation with covariates requires estimator 'ols' (Freedman–Lane); '${spec.estimator}' has no such scheme`);
  }
  if (spec.interaction && !robustWithCovariates) add("interaction", `estimator '${spec.estimator}' does not support an interaction`);
  if (spec.setAside.length > 0) add("setAside", "set participants aside in the study (with a reason), not in the model");
  return out;
}

/** The model fields as the form sends them, checked by the rules above. */
export const modelFieldsSchema = modelSpecSchema.superRefine((spec, ctx) => {
  for (const p of modelSpecProblems(spec)) ctx.addIssue({ code: "custom", path: p.field.split("."), message: p.message });
});

export const modelNameSchema = z
  .string({ error: "must be a name" })
  .trim()
  .min(1, { error: "must not be empty" })
  .max(200, { error: "must be at most 200 characters" });

export const regionSelectionSchema = z.enum(regionSelections, {
  error: `must be one of ${regionSelections.join(", ")}`,
});

/** POST body: a new model. */
export const modelCreateSchema = z.strictObject({
  name: modelNameSchema,
  spec: modelFieldsSchema,
  regionSelection: regionSelectionSchema,
});

/** PATCH body: any of the three; `spec`, when given, replaces the model fields as a whole. */
export const modelPatchSchema = z
  .strictObject({
    name: modelNameSchema.optional(),
    spec: modelFieldsSchema.optional(),
    regionSelection: regionSelectionSchema.optional(),
  })
  .refine((b) => Object.keys(b).length > 0, { error: "give at least one of name, spec, regionSelection" });

export type ModelCreateInput = z.input<typeof modelCreateSchema>;
export type ModelCreate = z.output<typeof modelCreateSchema>;
export type ModelPatch = z.output<typeof modelPatchSchema>;

/** A model as the API answers it. */
export interface ModelView {
  id: string;
  studyId: string;
  name: string;
  spec: ModelSpec;
  regionSelection: RegionSelection;
  circular: boolean;
  /** The caution to show, or null. */
  caution: string | null;
  createdBy: { id: string; name: string | null };
  createdAt: string;
  updatedBy: { id: string; name: string | null };
  updatedAt: string;
  /** Fits of this model (any status). */
  fitCount: number;
}

export type { ModelSpec, ModelSpecInput };
