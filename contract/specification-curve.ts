/**
 * What a specification-curve fit (kind "specification-curve") reports, in
 * one place for the engine (server/stats/specification-curve/), the API (the
 * fit's result) and the fit screen, and the alternatives a curve crosses
 * with their defaults (`curveChoices`).
 */
import type { ExclusionRule } from "./exclusion-rules";
import { curveKind } from "./fit-rules";
import type { ModelSpec, ModelSpecInput } from "./spec";

/**
 * The alternatives of a curve with their defaults (the model's estimator;
 * one set without covariates; no rules) and how many specifications they
 * make: estimators × covariate sets × 2^rules.
 */
export function curveChoices(spec: Pick<ModelSpec, "estimator" | "specifications">): {
  estimators: ModelSpec["estimator"][];
  covariateSets: string[][];
  exclusionRules: ExclusionRule[];
  count: number;
} {
  const estimators = spec.specifications?.estimators ?? [spec.estimator];
  const covariateSets = spec.specifications?.covariateSets ?? [[]];
  const exclusionRules = spec.specifications?.exclusionRules ?? [];
  return {
    estimators,
    covariateSets,
    exclusionRules,
    count: estimators.length * covariateSets.length * 2 ** exclusionRules.length,
  };
}

/** One specification: one estimator, one covariate set, one subset of the exclusion rules. */
export interface CurveSpecification {
  estimator: string;
  covariates: string[];
  /** Indices (into specifications.exclusionRules) of the rules switched on. */
  exclusions: number[];
  n: number;
  estimate: number;
  ciLow: number | null;
  ciHigh: number | null;
  p: number;
}

export interface CurveSummary {
  count: number;
  medianEstimate: number;
  /** Share of specifications with an estimate above 0. */
  sharePositive: number;
  /** Share with p < .05 (two-sided) and an estimate above 0. */
  shareSignificantPositive: number;
  /** Share with p < .05 (two-sided) and an estimate below 0. */
  shareSignificantNegative: number;
}

/** The joint test (Simonsohn, Simmons & Nelson 2020): p-values against curves of null data. */
export interface CurveJointTest {
  resamples: number;
  /** "positive" or "negative": the sign of the observed median estimate (positive at 0). */
  dominantDirection: "positive" | "negative";
  /** Share of specifications significant (p < .05) in the dominant direction. */
  shareSignificantDominant: number;
  /** Stouffer's Z of the one-sided p-values in the dominant direction. */
  stoufferZ: number;
  pMedian: number;
  pShareSignificant: number;
  pStouffer: number;
}

/** The fields a specification-curve result adds to a fit's result. */
export interface CurveResultFields {
  region: string;
  question: "association" | "two-group";
  specifications: CurveSpecification[];
  summary: CurveSummary;
  jointTest?: CurveJointTest;
}

/**
 * The ordinary model of one specification of a curve: an association (or
 * two-group) model of the curve's region with the specification's
 * estimator and covariates, the curve's rules it switches on as its
 * `exclusionRules`, parametric inference and the curve's seed. The engine
 * fits each specification as exactly this model (so a specification equals
 * the ordinary fit of this model), and the curve screen opens a
 * specification as a fit of it. Model fields as a model body takes them
 * (defaults left to the schema).
 */
export function specificationModel(
  curve: Pick<
    ModelSpec,
    | "regions"
    | "predictor"
    | "group"
    | "levels"
    | "estimator"
    | "seed"
    | "tau2Method"
    | "smallSample"
    | "specifications"
  >,
  choice: Pick<CurveSpecification, "covariates" | "exclusions"> & {
    estimator: ModelSpec["estimator"];
  },
): ModelSpecInput {
  const rules = curveChoices(curve).exclusionRules;
  const on = choice.exclusions.map((k) => rules[k]);
  const question = curveKind(curve);
  return {
    kind: question,
    regions: curve.regions ? [...curve.regions] : undefined,
    ...(question === "association"
      ? { predictor: curve.predictor }
      : { group: curve.group, levels: curve.levels }),
    covariates: [...choice.covariates],
    estimator: choice.estimator,
    inference: "parametric",
    seed: curve.seed,
    tau2Method: curve.tau2Method,
    smallSample: curve.smallSample,
    ...(on.length > 0 ? { exclusionRules: on.map((r) => ({ ...r })) } : {}),
  };
}
