import { describe, expect, it } from "vitest";
import {
  circularityCaution,
  isCircular,
  modelCreateSchema,
  modelPatchSchema,
  modelSpecProblems,
} from "../../../contract/model-form";
import { modelSpecSchema } from "../../../contract/spec";

const problems = (spec: Record<string, unknown>) => modelSpecProblems(modelSpecSchema.parse(spec));

describe("model form rules (shared by the web form and the API)", () => {
  it("accepts consistent models", () => {
    expect(problems({ kind: "one-sample" })).toEqual([]);
    expect(
      problems({
        kind: "two-group",
        group: "group",
        levels: ["patient", "control"],
        covariates: ["age"],
      }),
    ).toEqual([]);
    expect(
      problems({
        kind: "association",
        predictor: "accuracy",
        covariates: ["age", "sex"],
        inference: "permutation",
        correction: "maxt",
      }),
    ).toEqual([]);
    expect(
      problems({
        kind: "association",
        predictor: "accuracy",
        group: "group",
        interaction: true,
        estimator: "huber",
      }),
    ).toEqual([]);
    expect(problems({ kind: "reliability" })).toEqual([]);
  });

  it("names the field of each problem", () => {
    expect(problems({ kind: "association" })).toEqual([
      {
        field: "predictor",
        message: "an association needs a predictor (a numeric column of the participant sheet)",
      },
    ]);
    expect(problems({ kind: "two-group" })).toEqual([
      { field: "group", message: "a two-group model needs a grouping column" },
    ]);
    expect(problems({ kind: "one-sample", estimator: "welch" })).toEqual([
      { field: "estimator", message: "'welch' is not available for kind 'one-sample'" },
    ]);
    expect(problems({ kind: "one-sample", correction: "maxt" })).toEqual([
      { field: "correction", message: "max-T correction requires permutation inference" },
    ]);
    expect(
      problems({ kind: "association", predictor: "accuracy", covariates: ["accuracy"] }),
    ).toEqual([{ field: "covariates", message: "'accuracy' is already the predictor" }]);
    expect(problems({ kind: "association", predictor: "accuracy", interaction: true })).toEqual([
      { field: "interaction", message: "an interaction needs a group" },
    ]);
    expect(
      problems({ kind: "two-group", group: "g", estimator: "rank", covariates: ["age"] }),
    ).toEqual([{ field: "covariates", message: "estimator 'rank' does not take covariates" }]);
    expect(
      problems({
        kind: "association",
        predictor: "a",
        estimator: "huber",
        covariates: ["age"],
        inference: "permutation",
      }),
    ).toEqual([
      {
        field: "inference",
        message:
          "permutation with covariates requires estimator 'ols' (Freedman–Lane); 'huber' has no such scheme",
      },
    ]);
    expect(problems({ kind: "reliability", covariates: ["age"], inference: "bootstrap" })).toEqual([
      { field: "inference", message: "kind 'reliability' supports parametric inference only" },
      { field: "covariates", message: "kind 'reliability' does not take covariates" },
    ]);
    expect(
      problems({ kind: "one-sample", setAside: [{ participant: "sub-01", reason: "motion" }] })[0]
        .field,
    ).toBe("setAside");
  });

  it("create and patch bodies: the region-selection answer is required and sets the circularity caution", () => {
    const ok = modelCreateSchema.safeParse({
      name: " Accuracy ",
      regionSelection: "same-data",
      spec: { kind: "association", predictor: "accuracy" },
    });
    expect(ok.success && ok.data.name).toBe("Accuracy");
    expect(isCircular("same-data")).toBe(true);
    expect(isCircular("independent-data")).toBe(false);
    expect(isCircular("anatomical-or-prior")).toBe(false);
    expect(circularityCaution).toContain("inflates");
    const missing = modelCreateSchema.safeParse({ name: "x", spec: { kind: "one-sample" } });
    expect(missing.success).toBe(false);
    expect(missing.error?.issues[0].path).toEqual(["regionSelection"]);
    const bad = modelCreateSchema.safeParse({
      name: "x",
      regionSelection: "independent-data",
      spec: { kind: "association" },
    });
    expect(bad.error?.issues.map((i) => i.path.join("."))).toEqual(["spec.predictor"]);
    expect(modelPatchSchema.safeParse({}).success).toBe(false);
    expect(modelPatchSchema.safeParse({ name: "New" }).success).toBe(true);
  });
});
