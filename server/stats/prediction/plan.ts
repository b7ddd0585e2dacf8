/**
 * The random draws of a prediction model, made up front so that its outer
 * splits can be computed independently (on other threads or processes) and
 * merged: the outer partitions and each split's inner partition from
 * `createRng(seed)`, the learning-curve subsamples (and their inner
 * partitions) from `createRng(seed + 1)`, the trait permutations from
 * `createRng(seed + 2)` — each stream drawn in the order the single loop
 * drew it, so the numbers are those of the loop. A plan holds only plain
 * objects, numbers and typed arrays: it survives structured cloning.
 */
import { StatsError } from "../errors";
import { createRearranger } from "../rearrangements";
import { createRng } from "../rng";
import type { PredictionInput, PredictionOptions } from "./cross-validate";
import {
  drawInnerSplits,
  minimumTrainingRows,
  type PredictionData,
  stageMatrices,
} from "./fold-pipeline";
import { crossValidationSplits, type Split } from "./folds";
import { validatePrediction } from "./validate";

/** Training fractions of the learning curve below 100 %. */
export const CURVE_FRACTIONS = [0.2, 0.4, 0.6, 0.8];

/** One learning-curve fit of a split: a subsample of its training rows. */
export interface PlannedCurveFit {
  /** Training rows of the subsample (round(fraction × n_train)). */
  rows: number;
  /** The subsample (sorted participant indices), or null when it is too small or a region is constant in it. */
  train: Int32Array | null;
  /** Inner partition of the subsample (positions in `train`), or null with a fixed λ. */
  inner: Split[] | null;
}

export interface PredictionPlan {
  n: number;
  p: number;
  folds: number | "leave-one-out";
  repeats: number;
  /** Permutations asked for (the p denominator counts the evaluated ones). */
  resamples: number;
  seed: number;
  standardize: boolean;
  inference: "permutation" | "none";
  lambda: number | null;
  lambdaGrid: number[] | null;
  learningCurve: boolean;
  covariateNames: string[];
  /** Outer splits, repeat by repeat, fold by fold. */
  splits: Split[];
  /** Per split: its inner partition (positions in the split's training rows), or null with a fixed λ. */
  inner: (Split[] | null)[];
  /** Per split: its learning-curve fits (one per CURVE_FRACTIONS entry), or null without a curve. */
  curve: PlannedCurveFit[][] | null;
  /** Evaluated permutations of the trait (the identity first), each n indices, one after another. */
  permutations: Int32Array;
  permutationCount: number;
}

/** The model's data in the pipeline's shape. */
export function planData(plan: PredictionPlan, input: PredictionInput): PredictionData {
  return {
    n: plan.n,
    x: input.X,
    regions: input.regions,
    covariates: input.covariates,
    covariateNames: plan.covariateNames,
  };
}

/**
 * Validates the input and options and makes every random draw of the model.
 * Cost: the splits and permutations (O(n·(folds + resamples)·repeats)) and,
 * with a learning curve, a check of each subsample's regions and confounds
 * (O(n·p·q) per subsample). Throws StatsError as `crossValidatedPrediction`.
 */
export function planPrediction(input: PredictionInput, options: PredictionOptions): PredictionPlan {
  const checked = validatePrediction(input, options);
  const { n, folds, repeats, resamples, standardize } = checked;
  const innerChoice = options.lambda === undefined;
  const splitRng = createRng(options.seed);
  const splits = crossValidationSplits({
    n,
    folds,
    repeats,
    group: folds === "leave-one-out" ? undefined : input.group,
    rng: splitRng,
  });
  const inner = splits.map((split) =>
    innerChoice ? drawInnerSplits(split.train.length, splitRng) : null,
  );
  const data: PredictionData = {
    n,
    x: input.X,
    regions: input.regions,
    covariates: input.covariates,
    covariateNames: checked.covariateNames,
  };
  let curve: PlannedCurveFit[][] | null = null;
  if (options.learningCurve) {
    const curveRng = createRng(options.seed + 1);
    const minimum = minimumTrainingRows(input.covariates.length, innerChoice);
    curve = splits.map((split) =>
      CURVE_FRACTIONS.map((fraction) => {
        const rows = Math.round(fraction * split.train.length);
        const order = Int32Array.from(split.train);
        curveRng.shuffle(order);
        if (rows < minimum) return { rows, train: null, inner: null };
        const train = order.slice(0, rows).sort();
        // The single loop drew the inner partition only once the subsample's
        // own stage was prepared; a subsample that cannot be is unavailable.
        try {
          stageMatrices(data, train, split.held);
        } catch (error) {
          if (error instanceof StatsError && error.code === "stats_precondition")
            return { rows, train: null, inner: null };
          throw error;
        }
        return { rows, train, inner: innerChoice ? drawInnerSplits(rows, curveRng) : null };
      }),
    );
  }
  let permutations = new Int32Array(0);
  let permutationCount = 0;
  if (options.inference === "permutation") {
    const walk = createRearranger({
      kind: "permutations",
      n,
      resamples,
      rng: createRng(options.seed + 2),
    });
    permutationCount = walk.total;
    permutations = new Int32Array(walk.total * n);
    for (let k = 0; k < walk.total; k++) {
      walk.next();
      permutations.set(walk.order, k * n);
    }
  }
  return {
    n,
    p: input.X.length,
    folds,
    repeats,
    resamples,
    seed: options.seed,
    standardize,
    inference: options.inference,
    lambda: options.lambda ?? null,
    lambdaGrid: options.lambdaGrid ? [...options.lambdaGrid] : null,
    learningCurve: options.learningCurve,
    covariateNames: checked.covariateNames,
    splits,
    inner,
    curve,
    permutations,
    permutationCount,
  };
}

/** Number of independent units of work: the outer splits. */
export function predictionSplitCount(plan: PredictionPlan): number {
  return plan.splits.length;
}
