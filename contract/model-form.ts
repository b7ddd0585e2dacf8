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
 * together; fit-rules.ts, which the fit engine applies too); the API then
 * checks the model against the study's current data with the same rules
 * (services/models.ts), and the fit checks everything again.
 */
import { z } from "zod";
import { estimatorsByKind, type SpecProblem, specProblems } from "./fit-rules";
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

export { estimatorsByKind, type SpecProblem };

/**
 * The form's rules of a model: the fit rules that need no data
 * (fit-rules.ts, the same the engine applies), and that participants are
 * set aside in the study (with a reason), never in a model. Returns every
 * problem (empty when the model is consistent). Cost O(fields).
 */
export function modelSpecProblems(spec: ModelSpec): SpecProblem[] {
  const out = specProblems(spec);
  if (spec.setAside.length > 0)
    out.push({
      field: "setAside",
      message: "set participants aside in the study (with a reason), not in the model",
    });
  return out;
}

/** The model fields as the form sends them, checked by the rules above. */
export const modelFieldsSchema = modelSpecSchema.superRefine((spec, ctx) => {
  for (const p of modelSpecProblems(spec))
    ctx.addIssue({ code: "custom", path: p.field.split("."), message: p.message });
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
  .refine((b) => Object.keys(b).length > 0, {
    error: "give at least one of name, spec, regionSelection",
  });

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

/** A value with its object keys sorted, so two models' fields compare whatever order they were written in. */
function sortedKeys(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(sortedKeys);
  if (value === null || typeof value !== "object") return value;
  return Object.fromEntries(
    Object.keys(value as object)
      .sort()
      .filter((k) => (value as Record<string, unknown>)[k] !== undefined)
      .map((k) => [k, sortedKeys((value as Record<string, unknown>)[k])]),
  );
}

/**
 * True when two models ask the same: their fields equal once every default
 * is filled in, leaving out the set-aside list (set-asides belong to the
 * study) and the recorded stream scheme (how a fit draws, not a choice of
 * the model). Opening a specification of a curve as a fit reuses a model
 * for which this holds rather than making a duplicate.
 */
export function sameModelFields(a: ModelSpecInput, b: ModelSpecInput): boolean {
  const fields = (s: ModelSpecInput) => {
    const { setAside: _s, rearrangementStreams: _r, ...rest } = modelSpecSchema.parse(s);
    return JSON.stringify(sortedKeys(rest));
  };
  return fields(a) === fields(b);
}
