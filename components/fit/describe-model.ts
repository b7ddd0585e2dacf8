/**
 * A model in plain words, for lists, the fit screen and the methods text.
 */
import { correctionWords, estimatorWords, inferenceWords } from "../../contract/labels";
import { curveChoices } from "../../contract/specification-curve";
import type { ModelSpec } from "../../contract/spec";

export function questionOf(
  spec: Pick<ModelSpec, "kind" | "predictor" | "group" | "levels" | "covariates" | "interaction">,
): string {
  const controls =
    spec.covariates.length > 0 ? `, controlling for ${spec.covariates.join(", ")}` : "";
  switch (spec.kind) {
    case "one-sample":
      return `Is the contrast present across the group${controls}?`;
    case "two-group": {
      const levels = spec.levels
        ? `${spec.levels[0]} and ${spec.levels[1]}`
        : `the groups of ${spec.group ?? "?"}`;
      return `Does the contrast differ between ${levels}${controls}?`;
    }
    case "association":
      return `Does the contrast track ${spec.predictor ?? "the trait"}${spec.interaction && spec.group ? ` differently by ${spec.group}` : ""}${controls}?`;
    case "reliability":
      return "How reliable is the contrast across sessions?";
    case "prediction":
      return `How well do these regions predict ${spec.predictor ?? "the trait"} in people the model has not seen${controls}?`;
    case "specification-curve":
      return spec.predictor
        ? `Does the contrast track ${spec.predictor} under every reasonable analysis?`
        : `Does the contrast differ between ${spec.levels ? `${spec.levels[0]} and ${spec.levels[1]}` : `the groups of ${spec.group ?? "?"}`} under every reasonable analysis?`;
  }
}

export function methodOf(spec: ModelSpec): string {
  if (spec.kind === "prediction") return predictionMethodOf(spec);
  if (spec.kind === "specification-curve") return curveMethodOf(spec);
  const parts = [estimatorWords[spec.estimator], inferenceWords[spec.inference]];
  if (spec.inference !== "parametric")
    parts.push(`${spec.resamples.toLocaleString("en")} resamples, seed ${spec.seed}`);
  parts.push(correctionWords[spec.correction]);
  if (spec.weights === "first-level-se") {
    parts.push(
      `weighted by first-level standard errors (τ² by ${spec.tau2Method === "dl" ? "DerSimonian–Laird" : "REML"}${spec.smallSample === "knapp-hartung" ? ", Knapp–Hartung" : ""})`,
    );
  }
  return parts.join(" · ");
}

export function regionsOf(spec: Pick<ModelSpec, "regions">, total?: number): string {
  if (!spec.regions || spec.regions.length === 0)
    return total !== undefined ? `all ${total} regions` : "all regions";
  return spec.regions.length <= 4
    ? spec.regions.join(", ")
    : `${spec.regions.length} chosen regions`;
}

/** A specification curve's method: the alternatives it crosses, and its joint test. */
function curveMethodOf(spec: ModelSpec): string {
  const { estimators, covariateSets: sets, exclusionRules: rules, count } = curveChoices(spec);
  const choices = [
    estimators.map((e) => estimatorWords[e]).join(" or "),
    `${sets.length} covariate set${sets.length === 1 ? "" : "s"}`,
    `${rules.length} exclusion rule${rules.length === 1 ? "" : "s"} on or off`,
  ].join(" × ");
  const test =
    spec.inference === "permutation"
      ? `joint test against ${spec.resamples.toLocaleString("en")} null data sets, seed ${spec.seed}`
      : "no joint test";
  return `${count} specifications: ${choices} · ${test}`;
}

/** A prediction's method: ridge regression, its folds and penalty, and its test. */
function predictionMethodOf(spec: ModelSpec): string {
  const folds = spec.folds ?? 10;
  const repeats = spec.repeats ?? (folds === "leave-one-out" ? 1 : 10);
  const scheme =
    folds === "leave-one-out"
      ? "leave-one-out cross-validation"
      : `${repeats === 1 ? "" : `${repeats} × `}${folds}-fold cross-validation`;
  const penalty =
    spec.lambda !== undefined
      ? `fixed penalty λ = ${spec.lambda}`
      : "penalty chosen inside each training fold";
  const parts = [`ridge regression, ${scheme}, ${penalty}`];
  if (spec.inference === "permutation")
    parts.push(
      `permutation test of the whole pipeline (${spec.resamples.toLocaleString("en")} permutations, seed ${spec.seed})`,
    );
  else parts.push(`seed ${spec.seed}, no test`);
  return parts.join(" · ");
}
