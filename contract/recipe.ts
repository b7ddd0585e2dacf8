/**
 * Recipes: the JSON that fully describes a fit, in one place for the fit
 * the app starts (`services/fits.ts` builds it, the `fits.recipe` column
 * holds it), the fit job (which builds its data and model from it), the
 * recipe download, the methods paragraph, the fit screen and the recipe
 * command (which runs one from files).
 *
 * A recipe holds the model fields of `modelSpecSchema` plus the file keys:
 * `brainTable` (the brain table's file name; a path relative to the
 * recipe's folder for the recipe command), `participantSheet` (optional for
 * one-sample and reliability fits without covariates), `idColumn` (default
 * "participant_id", the same in both files), and the intake keys `seSuffix`
 * (default "_se"), `session` (the session fitted when the brain table has
 * several; default the first in natural order) and `mappings` (confirmed id
 * mappings, brain id → sheet id; default none). A recipe written by
 * Covarion also carries `softwareVersion` and `inputs` (each file's name
 * and SHA-256); fed back in, the hashes are checked, so a re-run uses
 * exactly the same bytes. Unknown keys are errors. Zod only.
 */
import { z } from "zod";
import { type ModelSpec, modelSpecSchema, modelSpecShape, withKindDefaults } from "./spec";

const fileRef = z.strictObject({
  file: z.string().min(1),
  sha256: z.string().regex(/^[0-9a-f]{64}$/),
});

export const idMappingSchema = z.strictObject({
  brainId: z.string().min(1),
  sheetId: z.string().min(1),
});

const recipeFields = z.strictObject({
  brainTable: z.string().min(1),
  participantSheet: z.string().min(1).optional(),
  idColumn: z.string().min(1).default("participant_id"),
  seSuffix: z.string().min(1).default("_se"),
  session: z.string().min(1).optional(),
  mappings: z.array(idMappingSchema).default([]),
  ...modelSpecShape,
  softwareVersion: z.string().min(1).optional(),
  inputs: z.strictObject({ brainTable: fileRef, participantSheet: fileRef.optional() }).optional(),
});

export const recipeSchema = recipeFields.transform(withKindDefaults);

/** A recipe with its defaults filled in: what Covarion stores and exports. */
export type Recipe = z.output<typeof recipeSchema>;
/** A recipe as a person may write it (defaults may be left out). */
export type RecipeInput = z.input<typeof recipeSchema>;

/** The key order of an exported recipe (the schema's order); unknown keys follow in stored order. */
export const recipeKeyOrder = Object.keys(recipeFields.shape) as (keyof Recipe)[];

/** `recipe` with its keys in `recipeKeyOrder` (values unchanged). */
export function orderedRecipe(recipe: Readonly<Record<string, unknown>>): Record<string, unknown> {
  const ordered: Record<string, unknown> = {};
  for (const key of recipeKeyOrder) if (recipe[key] !== undefined) ordered[key] = recipe[key];
  for (const key of Object.keys(recipe)) if (!(key in ordered)) ordered[key] = recipe[key];
  return ordered;
}

/** What a fit's recipe is built from: the data it names and the model fitted. */
export interface RecipeParts {
  brainTable: { file: string; sha256: string };
  participantSheet: { file: string; sha256: string } | null;
  idColumn: string;
  seSuffix: string;
  /** The session fitted, when the brain table has several. */
  session: string | null;
  mappings: readonly { brainId: string; sheetId: string }[];
  spec: ModelSpec;
  softwareVersion: string;
}

/** The recipe of a fit, checked against the schema (throws ZodError on a fault, a programming error). */
export function buildRecipe(parts: RecipeParts): Recipe {
  return recipeSchema.parse(
    orderedRecipe({
      brainTable: parts.brainTable.file,
      ...(parts.participantSheet ? { participantSheet: parts.participantSheet.file } : {}),
      idColumn: parts.idColumn,
      seSuffix: parts.seSuffix,
      ...(parts.session !== null ? { session: parts.session } : {}),
      mappings: parts.mappings.map((m) => ({ brainId: m.brainId, sheetId: m.sheetId })),
      ...parts.spec,
      softwareVersion: parts.softwareVersion,
      inputs: {
        brainTable: parts.brainTable,
        ...(parts.participantSheet ? { participantSheet: parts.participantSheet } : {}),
      },
    }),
  );
}

/** A recipe whose model fields do not make a model; the message names the field. */
export class RecipeSpecError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "RecipeSpecError";
  }
}

/**
 * The model fields of a recipe (its other keys name the data), with
 * defaults filled in. Throws RecipeSpecError naming the first field at
 * fault ("recipe field 'estimator': …").
 */
export function specOfRecipe(recipe: Readonly<Record<string, unknown>>): ModelSpec {
  const fields: Record<string, unknown> = {};
  for (const key of Object.keys(modelSpecShape))
    if (recipe[key] !== undefined) fields[key] = recipe[key];
  const parsed = modelSpecSchema.safeParse(fields);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new RecipeSpecError(
      `recipe field '${issue.path.join(".") || "(model)"}': ${issue.message}`,
    );
  }
  return parsed.data;
}
