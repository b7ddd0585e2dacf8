/**
 * Input and option checks of the prediction model, each failure a StatsError
 * naming the option or the region, covariate and participant at fault
 * (common practice, no source). Defaults: 10 folds, 10 repeats (1 for
 * leave-one-out), 1000 permutations, scaled regions.
 */
import { StatsError } from "../errors";
import type { PredictionInput, PredictionOptions } from "./cross-validate";
import { minimumTrainingRows } from "./fold-pipeline";

export interface CheckedPrediction {
  n: number;
  folds: number | "leave-one-out";
  repeats: number;
  resamples: number;
  standardize: boolean;
  covariateNames: string[];
}

export function validatePrediction(
  input: PredictionInput,
  options: PredictionOptions,
): CheckedPrediction {
  const n = input.participants.length;
  const p = input.X.length;
  if (p === 0) throw new StatsError("prediction requires at least one region");
  if (input.regions.length !== p)
    throw new StatsError("regions must name every column of X (one name per region)");
  if (input.y.length !== n) throw new StatsError("the trait must have one value per participant");
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(input.y[i]))
      throw new StatsError(
        `the trait has a missing or non-finite value for participant '${input.participants[i]}'`,
      );
  }
  for (let j = 0; j < p; j++) {
    const values = input.X[j];
    if (values.length !== n)
      throw new StatsError(`region '${input.regions[j]}' must have one value per participant`);
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(values[i]))
        throw new StatsError(
          `region '${input.regions[j]}' has a missing or non-finite value for participant '${input.participants[i]}'`,
        );
    }
  }
  const covariateNames =
    input.covariateNames?.slice() ?? input.covariates.map((_, c) => `covariate ${c + 1}`);
  if (covariateNames.length !== input.covariates.length)
    throw new StatsError("covariateNames must name every covariate");
  input.covariates.forEach((values, c) => {
    if (values.length !== n)
      throw new StatsError(`covariate '${covariateNames[c]}' must have one value per participant`);
    for (let i = 0; i < n; i++) {
      if (!Number.isFinite(values[i]))
        throw new StatsError(
          `covariate '${covariateNames[c]}' has a missing or non-finite value for participant '${input.participants[i]}'`,
        );
    }
  });
  if (input.group && input.group.length !== n)
    throw new StatsError("group must have one label per participant");
  let yMin = Number.POSITIVE_INFINITY;
  let yMax = Number.NEGATIVE_INFINITY;
  for (let i = 0; i < n; i++) {
    yMin = Math.min(yMin, input.y[i]);
    yMax = Math.max(yMax, input.y[i]);
  }
  if (n > 0 && yMin === yMax)
    throw new StatsError("the trait is constant: there is nothing to predict");

  const folds = options.folds ?? 10;
  if (folds !== "leave-one-out" && !(Number.isInteger(folds) && folds >= 2 && folds <= n))
    throw new StatsError("folds must be at least 2 and at most the number of participants");
  const repeats = options.repeats ?? (folds === "leave-one-out" ? 1 : 10);
  if (!(Number.isInteger(repeats) && repeats >= 1))
    throw new StatsError("repeats must be a positive integer");
  if (folds === "leave-one-out" && repeats !== 1)
    throw new StatsError("repeats must be 1 for leave-one-out");
  if (!Number.isSafeInteger(options.seed)) throw new StatsError("seed must be an integer");
  if (options.lambda !== undefined && !(Number.isFinite(options.lambda) && options.lambda > 0))
    throw new StatsError("lambda must be a positive number");
  if (options.lambda !== undefined && options.lambdaGrid !== undefined)
    throw new StatsError("lambda and lambdaGrid cannot both be given");
  if (options.lambdaGrid !== undefined) {
    if (options.lambdaGrid.length === 0)
      throw new StatsError("lambdaGrid must hold at least one value");
    if (options.lambdaGrid.some((l) => !(Number.isFinite(l) && l > 0)))
      throw new StatsError("lambdaGrid values must be positive numbers");
  }
  const resamples = options.resamples ?? 1000;
  if (options.inference === "permutation" && !(Number.isInteger(resamples) && resamples >= 1))
    throw new StatsError("resamples must be a positive integer");
  if (options.inference !== "permutation" && options.inference !== "none")
    throw new StatsError("inference must be 'permutation' or 'none'");

  const k = folds === "leave-one-out" ? n : folds;
  const smallestTrain = n - Math.ceil(n / k);
  const needed = minimumTrainingRows(input.covariates.length, options.lambda === undefined);
  if (smallestTrain < needed)
    throw new StatsError(
      `prediction requires at least ${needed} participants in every training fold${
        options.lambda === undefined ? " (the inner 5-fold λ choice needs them)" : ""
      }; with ${n} participants and ${folds} folds the smallest has ${smallestTrain}`,
    );
  return {
    n,
    folds,
    repeats,
    resamples,
    standardize: options.standardize ?? true,
    covariateNames,
  };
}
