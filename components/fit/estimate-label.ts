/**
 * The name of a fit's estimate, as the region table, the forest plot and
 * its figure title the estimate axis: Mean (one sample), Difference (two
 * groups), Correlation (rank-based, skipped and percentage-bend) or Slope.
 */
import type { ModelSpec } from "../../contract/spec";

export function estimateLabel(spec: Pick<ModelSpec, "kind" | "estimator"> | null): string {
  if (!spec) return "Estimate";
  if (spec.kind === "one-sample") return "Mean";
  if (spec.kind === "two-group") return "Difference";
  if (spec.estimator === "rank" || spec.estimator === "skipped" || spec.estimator === "bend")
    return "Correlation";
  return "Slope";
}
