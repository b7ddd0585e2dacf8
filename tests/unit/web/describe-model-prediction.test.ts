import { describe, expect, it } from "vitest";
import { methodOf, questionOf } from "../../../components/fit/describe-model";
import { modelSpecSchema } from "../../../contract/spec";

describe("a prediction in plain words", () => {
  it("asks how well the regions predict the trait in people not seen", () => {
    const spec = modelSpecSchema.parse({ kind: "prediction", predictor: "accuracy" });
    expect(questionOf(spec)).toBe(
      "How well do these regions predict accuracy in people the model has not seen?",
    );
  });
  it("names ridge regression, the folds, the penalty and the test (not least squares)", () => {
    const spec = modelSpecSchema.parse({
      kind: "prediction",
      predictor: "accuracy",
      folds: 5,
      repeats: 2,
      resamples: 99,
      seed: 7,
    });
    expect(methodOf(spec)).toBe(
      "ridge regression, 2 × 5-fold cross-validation, penalty chosen inside each training fold · permutation test of the whole pipeline (99 permutations, seed 7)",
    );
    const loo = modelSpecSchema.parse({
      kind: "prediction",
      predictor: "accuracy",
      folds: "leave-one-out",
      lambda: 2,
      inference: "none",
      seed: 3,
    });
    expect(methodOf(loo)).toBe(
      "ridge regression, leave-one-out cross-validation, fixed penalty λ = 2 · seed 3, no test",
    );
  });
});
