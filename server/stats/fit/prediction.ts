/**
 * A fit of kind "prediction": how well the chosen regions together predict
 * a trait in participants the model has not seen. Takes the prepared fit
 * (the rules, the set-asides and the columns resolved by prepare.ts), keeps
 * the participants complete in every chosen region, the trait and each
 * confound, and runs the cross-validated ridge pipeline of
 * server/stats/prediction/ on them. The result has no per-region rows: one
 * `prediction` block (contract/prediction.ts) and `n`, the participants used.
 */
import type { FitResult } from "../../../contract/spec";
import {
  crossValidatedPrediction,
  mergePrediction,
  type PredictionInput,
  type PredictionOptions,
  planPrediction,
} from "../prediction/cross-validate";
import { FIT_LEVEL, type RunFitOptions, assertFinite, fail } from "./common";
import { PREDICTION_MINIMUM, type Prepared, predictionRows } from "./prepare";

/**
 * The cross-validated model of a prepared prediction fit: its input (the
 * participants complete in every chosen region, the trait and each
 * confound) and options. Throws StatsError as `runPrediction`.
 */
export function predictionModel(prep: Prepared): {
  input: PredictionInput;
  options: PredictionOptions;
} {
  const { spec: s, data } = prep;
  const rows = predictionRows(prep);
  if (rows.length < PREDICTION_MINIMUM)
    fail(
      `too few participants with a value in every chosen region, the trait and each confound (n = ${rows.length}; at least ${PREDICTION_MINIMUM} needed)`,
    );
  const pick = (values: ArrayLike<number | null>) =>
    Float64Array.from(rows, (i) => values[i] as number);
  const confounds = prep.covariates.map((c) => {
    if (!("numeric" in c))
      fail(`covariates: '${c.name}' is a category; a prediction takes numeric confounds only`);
    return pick(c.numeric);
  });
  return {
    input: {
      participants: rows.map((i) => data.participants[i]),
      X: prep.regionIndex.map((r) => pick(data.values[r])),
      regions: prep.regionIndex.map((r) => data.regions[r]),
      y: pick(prep.predictor as readonly (number | null)[]),
      covariates: confounds,
      covariateNames: prep.covariates.map((c) => c.name),
      ...(prep.group
        ? { group: rows.map((i) => (prep.group as readonly (string | null)[])[i]) }
        : {}),
    },
    options: {
      folds: s.folds,
      repeats: s.repeats,
      lambda: s.lambda,
      lambdaGrid: s.lambdaGrid,
      seed: s.seed,
      inference: s.inference === "permutation" ? "permutation" : "none",
      resamples: s.resamples,
      learningCurve: true,
    },
  };
}

export function runPrediction(prep: Prepared, options: RunFitOptions): FitResult {
  const { spec: s, data } = prep;
  const { input, options: model } = predictionModel(prep);
  const rows = input.participants;
  // A split fit (server/jobs/fit-chunks.ts) merges the partials other threads or processes computed.
  const block = options.predictionPartials
    ? mergePrediction(planPrediction(input, model), input, options.predictionPartials())
    : crossValidatedPrediction(input, {
        ...model,
        onProgress: options.onProgress,
        shouldCancel: options.shouldCancel,
      });
  const left = data.participants.length - rows.length;
  const notes = [
    `Participants: ${rows.length} with a value in every chosen region, the trait and each confound${left > 0 ? `; ${left} left out` : ""}.`,
    "Held-out scores: r (Pearson correlation of observed and predicted values), R² = 1 − Σ(observed − predicted)²/Σ(observed − mean observed)² (negative when the model predicts worse than the held-out mean), and the mean absolute error, each averaged over the repeats.",
    "Every fitted step (confound regression, scaling, ridge penalty) is learned on the training participants of each fold only.",
  ];
  if (block.permutation)
    notes.push(
      `p: the whole pipeline re-run on ${block.permutation.resamples} permutations of the trait; p = (b + 1)/(m + 1).`,
    );
  const result: FitResult = {
    regions: [],
    participants: [],
    notes,
    kind: "prediction",
    estimator: s.estimator,
    inference: s.inference,
    correction: s.correction,
    seed: s.seed,
    level: FIT_LEVEL,
    n: rows.length,
    prediction: block,
  };
  assertFinite(result, "result");
  return result;
}
