/**
 * The one definition of a model and of a fit's result.
 *
 * A model (a saved question) and a recipe (the JSON that fully describes a
 * fit) share these fields; the model form, the API, the fit job and the
 * recipe command all validate with `modelSpecSchema` and produce a
 * `FitResult`. Keys and meanings follow the recipe contract in DEVELOPERS.md.
 */
import { z } from "zod";
import { exclusionRuleSchema } from "./exclusion-rules";

export const modelKinds = [
  "one-sample",
  "two-group",
  "association",
  "reliability",
  "prediction",
  "specification-curve",
] as const;
export const estimators = ["ols", "welch", "rank", "huber", "bisquare", "skipped", "bend"] as const;
export const inferences = ["parametric", "permutation", "bootstrap", "none"] as const;
export const corrections = ["none", "bonferroni", "holm", "bh", "maxt"] as const;

export const setAsideSchema = z.strictObject({
  participant: z.string().min(1),
  region: z.string().min(1).optional(),
  reason: z.string().min(1),
});

/**
 * The model fields. Defaults that depend on the kind are filled in by
 * `withKindDefaults` (a prediction's inference, resamples, folds and
 * repeats; a specification curve's resamples, 500); every other default is the field's own.
 */
export const modelSpecShape = {
  kind: z.enum(modelKinds),
  /** Region names; omitted or empty = every region of the brain table. */
  regions: z.array(z.string().min(1)).optional(),
  /** association: the trait column of the participant sheet; prediction: the trait predicted. */
  predictor: z.string().min(1).optional(),
  /** two-group: grouping column; association: a covariate group; prediction: stratifies the folds. */
  group: z.string().min(1).optional(),
  /** two-group: [first, second]; estimate = mean(first) − mean(second). */
  levels: z.tuple([z.string().min(1), z.string().min(1)]).optional(),
  /** Covariates (prediction: confounds removed inside each training fold). */
  covariates: z.array(z.string().min(1)).default([]),
  /** association: add a group × predictor interaction (needs `group`). */
  interaction: z.boolean().default(false),
  estimator: z.enum(estimators).default("ols"),
  /** Default "parametric"; "permutation" for a prediction. */
  inference: z.enum(inferences).optional(),
  /** Default 10,000; 1,000 for a prediction; 500 null draws for a specification curve. */
  resamples: z.number().int().min(1).max(1_000_000).optional(),
  seed: z
    .number()
    .int()
    .min(0)
    .max(2 ** 31 - 1)
    .default(1),
  /**
   * How a least-squares permutation test draws its random rearrangements:
   * "blocks-v1" in blocks of 500, each from its own stream of the seed
   * (server/stats/rng.ts `createBlockRng`), so threads and worker processes
   * give the same numbers. Absent: one stream for all draws (recipes
   * written before blocks re-run to their numbers). Every new fit records
   * `currentRearrangementStreams`.
   */
  rearrangementStreams: z.enum(["blocks-v1"]).optional(),
  correction: z.enum(corrections).default("none"),
  setAside: z.array(setAsideSchema).default([]),
  /**
   * association and two-group: criteria on participant-sheet columns; a
   * participant meeting one (a missing value meets none) is left out of
   * the fit with the reason "rule: ⟨criterion⟩ (⟨reason⟩)" — the rules a
   * specification of a curve switches on, as part of an ordinary model.
   */
  exclusionRules: z.array(exclusionRuleSchema).max(8).optional(),
  /** Measurement-aware weighting by first-level standard errors. */
  weights: z.enum(["none", "first-level-se"]).default("none"),
  tau2Method: z.enum(["dl", "reml"]).default("reml"),
  smallSample: z.enum(["none", "knapp-hartung"]).default("none"),
  /** prediction: k of k-fold cross-validation (default 10) or "leave-one-out". */
  folds: z.union([z.literal("leave-one-out"), z.number().int().min(2).max(10_000)]).optional(),
  /** prediction: repeated partitions into folds (default 10; 1 for leave-one-out). */
  repeats: z.number().int().min(1).max(1000).optional(),
  /** prediction: a fixed ridge penalty; otherwise chosen per training fold by inner cross-validation. */
  lambda: z.number().positive().optional(),
  /** prediction: the penalties the inner cross-validation chooses from (default 20 values, 10⁻³…10³ × training rows). */
  lambdaGrid: z.array(z.number().positive()).min(1).max(200).optional(),
  /**
   * specification-curve: the reasonable alternatives; every combination of
   * estimator × covariate set × on/off of each exclusion rule is fitted.
   * Omitted parts: the model's estimator, no covariates, no rules.
   */
  specifications: z
    .strictObject({
      estimators: z.array(z.enum(estimators)).min(1).max(7).optional(),
      covariateSets: z
        .array(z.array(z.string().min(1)))
        .min(1)
        .max(64)
        .optional(),
      exclusionRules: z.array(exclusionRuleSchema).max(8).optional(),
    })
    .optional(),
};

/** The kind-dependent defaults, filled in after the fields are parsed. */
export function withKindDefaults<
  T extends {
    kind: ModelKind;
    inference?: Inference;
    resamples?: number;
    folds?: number | "leave-one-out";
    repeats?: number;
  },
>(fields: T): T & { inference: Inference; resamples: number } {
  if (fields.kind !== "prediction")
    return {
      ...fields,
      inference: fields.inference ?? "parametric",
      resamples: fields.resamples ?? (fields.kind === "specification-curve" ? 500 : 10_000),
    };
  const folds = fields.folds ?? 10;
  return {
    ...fields,
    inference: fields.inference ?? "permutation",
    resamples: fields.resamples ?? 1000,
    folds,
    repeats: fields.repeats ?? (folds === "leave-one-out" ? 1 : 10),
  };
}

/** The stream scheme every new fit records (`rearrangementStreams`). */
export const currentRearrangementStreams = "blocks-v1" as const;

export type ModelKind = (typeof modelKinds)[number];
export type Inference = (typeof inferences)[number];

export const modelSpecSchema = z.strictObject(modelSpecShape).transform(withKindDefaults);

export type ModelSpecInput = z.input<typeof modelSpecSchema>;
export type ModelSpec = z.output<typeof modelSpecSchema>;
export type SetAside = z.output<typeof setAsideSchema>;

/**
 * The numbers a fit runs on: the joined roster, already parsed and typed.
 * `values[r][i]` is participant i's contrast value in region r (NaN where
 * missing). Participant-sheet columns are typed by the intake.
 */
export interface FitData {
  participants: readonly string[];
  regions: readonly string[];
  values: readonly Float64Array[];
  /** Per region, first-level standard errors (NaN where missing), or null. */
  standardErrors?: readonly (Float64Array | null)[];
  /**
   * Repeated sessions, when the brain table has a session column:
   * `sessions.values[r][s][i]` is participant i's value in region r at
   * session `sessions.labels[s]` (NaN where missing). Used by reliability.
   */
  sessions?: {
    labels: readonly string[];
    values: readonly (readonly Float64Array[])[];
  };
  numericColumns: Readonly<Record<string, readonly (number | null)[]>>;
  categoricalColumns: Readonly<Record<string, readonly (string | null)[]>>;
}

export type Flag = "outlier" | "leverage" | "influence";

export interface RegionResult {
  region: string;
  n: number;
  estimate: number;
  se: number | null;
  statistic: number | null;
  df: number | null;
  p: number;
  pAdjusted: number;
  ciLow: number | null;
  ciHigh: number | null;
  /** association only */
  r?: number;
  rCiLow?: number;
  rCiHigh?: number;
  /** other per-method extras (effect sizes, tau2, i2, icc…) */
  [extra: string]: unknown;
}

export interface ParticipantDiagnostics {
  participant: string;
  region: string;
  leverage: number | null;
  studentizedResidual: number | null;
  cooksDistance: number | null;
  flags: Flag[];
  [extra: string]: unknown;
}

export interface FitResult {
  regions: RegionResult[];
  participants: ParticipantDiagnostics[];
  /** thresholds and method notes for the flags, in plain words */
  notes: string[];
  [extra: string]: unknown;
}
