/**
 * A model in plain words, for lists, the fit screen and the methods text.
 */
import type { ModelSpec } from "../../contract/spec";

const estimatorWords: Record<ModelSpec["estimator"], string> = {
  ols: "ordinary least squares",
  welch: "Welch's unequal-variance t",
  rank: "rank-based",
  huber: "Huber M-estimation",
  bisquare: "Tukey bisquare M-estimation",
  skipped: "skipped correlation (projection outlier removal)",
  bend: "percentage-bend correlation",
};

const inferenceWords: Record<ModelSpec["inference"], string> = {
  parametric: "parametric inference",
  permutation: "permutation inference",
  bootstrap: "bootstrap intervals",
};

const correctionWords: Record<ModelSpec["correction"], string> = {
  none: "no correction over regions",
  bonferroni: "Bonferroni correction over regions",
  holm: "Holm correction over regions",
  bh: "Benjamini–Hochberg false discovery rate over regions",
  maxt: "max-T family-wise correction over regions",
};

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
  }
}

export function methodOf(spec: ModelSpec): string {
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
