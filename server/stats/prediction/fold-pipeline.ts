/**
 * The prediction pipeline of one cross-validation split, fitted on its
 * training rows only and applied to its held-out rows: confound regression
 * (Snoek, Miletić & Scholte 2019, NeuroImage 184:741–760), scaling by the
 * training mean and SD, ridge regression with an unpenalized intercept
 * (Hastie, Tibshirani & Friedman 2009, The Elements of Statistical Learning,
 * 2nd ed., §3.4.1), and the penalty chosen by an inner k-fold
 * cross-validation on the training rows that re-runs the same pipeline in
 * each inner split ("nested cross-validation", Varoquaux et al. 2017,
 * NeuroImage 145:166–179, §2.3; Hastie et al. §7.10.2 on doing every step
 * inside the folds).
 *
 * Everything that depends on the regions is decomposed once per training
 * set (`prepareFold`); a new trait vector (a permutation of it) then costs
 * only projections: O(n·r) per training set and O(n_held·r) per penalty.
 */
import { StatsError } from "../errors";
import type { Rng } from "../rng";
import { type ConfoundFit, fitConfounds, residualize } from "./confounds";
import { crossValidationSplits, type Split } from "./folds";
import {
  accumulateHeldSse,
  predictHeld,
  prepareRidge,
  projectResponse,
  type RidgeBasis,
  ridgeWeights,
} from "./ridge";

/** Number of inner folds of the penalty choice. */
export const INNER_FOLDS = 5;

/** The regions, covariates and their names, one value per participant. */
export interface PredictionData {
  n: number;
  x: readonly Float64Array[];
  regions: readonly string[];
  covariates: readonly Float64Array[];
  covariateNames: readonly string[];
}

/** One training/held-out split with its confound fit and ridge basis. */
export interface PreparedStage {
  train: Int32Array;
  held: Int32Array;
  confounds: ConfoundFit | null;
  basis: RidgeBasis;
  /** Work buffers for one response. */
  yTrain: Float64Array;
  yHeld: Float64Array;
  g: Float64Array;
  scratch: Float64Array;
}

/** A split ready for any trait vector: the outer stage and, when λ is chosen, the inner stages. */
export interface PreparedFold {
  outer: PreparedStage;
  inner: PreparedStage[];
  /** Ascending penalty grid (inner choice), or null with a fixed `lambda`. */
  grid: number[] | null;
  lambda: number | null;
}

/** The penalties of an inner choice, ascending: `lambdaGrid` or the default for n_train. */
export function penaltyGrid(lambdaGrid: readonly number[] | null | undefined, nTrain: number) {
  return [...(lambdaGrid ?? defaultLambdaGrid(nTrain))].sort((a, b) => a - b);
}

/**
 * Index of the penalty with the smallest inner mean squared error `error(l)`
 * over an ascending grid of `count` values; ties (within a relative 1e-12)
 * go to the larger λ, the simpler model. The one choice rule of the model.
 */
export function choosePenaltyIndex(count: number, error: (l: number) => number): number {
  let best = count - 1;
  for (let l = count - 2; l >= 0; l--) if (error(l) < error(best) * (1 - 1e-12)) best = l;
  return best;
}

/** Default grid: 20 values log-spaced over 10⁻³…10³ × the number of training rows. */
export function defaultLambdaGrid(nTrain: number): number[] {
  return Array.from({ length: 20 }, (_, i) => nTrain * 10 ** (-3 + (6 * i) / 19));
}

/**
 * The confound fit (when there are covariates) and the training and held-out
 * region matrices (row-major, residualized under the training fit) of the
 * split (train, held). Throws StatsError naming a region that is constant on
 * the training rows or fully explained by the covariates there.
 */
export function stageMatrices(
  data: PredictionData,
  train: Int32Array,
  held: Int32Array,
): { confounds: ConfoundFit | null; trainMatrix: Float64Array; heldMatrix: Float64Array } {
  const p = data.x.length;
  const nt = train.length;
  const nh = held.length;
  const confounds =
    data.covariates.length > 0
      ? fitConfounds(data.covariates, data.covariateNames, train, held)
      : null;
  const trainMatrix = new Float64Array(nt * p);
  const heldMatrix = new Float64Array(nh * p);
  const colTrain = new Float64Array(nt);
  const colHeld = new Float64Array(nh);
  for (let j = 0; j < p; j++) {
    const values = data.x[j];
    let mean = 0;
    for (let i = 0; i < nt; i++) mean += values[train[i]];
    mean /= nt;
    let ss = 0;
    for (let i = 0; i < nt; i++) ss += (values[train[i]] - mean) ** 2;
    if (!(ss > 0))
      throw new StatsError(`region '${data.regions[j]}' is constant in a training fold`);
    if (confounds) {
      residualize(confounds, values, colTrain, colHeld);
      let rss = 0;
      for (let i = 0; i < nt; i++) rss += colTrain[i] * colTrain[i];
      if (!(rss > 1e-20 * ss))
        throw new StatsError(
          `region '${data.regions[j]}' is fully explained by the covariates in a training fold`,
        );
    } else {
      for (let i = 0; i < nt; i++) colTrain[i] = values[train[i]];
      for (let i = 0; i < nh; i++) colHeld[i] = values[held[i]];
    }
    for (let i = 0; i < nt; i++) trainMatrix[i * p + j] = colTrain[i];
    for (let i = 0; i < nh; i++) heldMatrix[i * p + j] = colHeld[i];
  }
  return { confounds, trainMatrix, heldMatrix };
}

/**
 * Confound fit (when there are covariates) and ridge basis of the split
 * (train, held). Throws StatsError as `stageMatrices`.
 */
export function prepareStage(
  data: PredictionData,
  train: Int32Array,
  held: Int32Array,
  standardize: boolean,
): PreparedStage {
  const nt = train.length;
  const nh = held.length;
  const { confounds, trainMatrix, heldMatrix } = stageMatrices(data, train, held);
  const basis = prepareRidge(trainMatrix, heldMatrix, nt, data.x.length, data.regions, {
    standardize,
  });
  return {
    train,
    held,
    confounds,
    basis,
    yTrain: new Float64Array(nt),
    yHeld: new Float64Array(nh),
    g: new Float64Array(basis.r),
    scratch: new Float64Array(basis.r),
  };
}

/**
 * The inner k-fold partition (k = min(5, n_train), unstratified) of a
 * training set of `nTrain` rows, drawn from `rng`; indices are positions in
 * the training set.
 */
export function drawInnerSplits(nTrain: number, rng: Rng): Split[] {
  return crossValidationSplits({
    n: nTrain,
    folds: Math.min(INNER_FOLDS, nTrain),
    repeats: 1,
    rng,
  });
}

/**
 * Prepares the split (train, held): its own stage and, unless `lambda` is
 * fixed, the stages of an inner k-fold partition of the training rows
 * (`innerSplits` when planned ahead, else drawn from `rng` by
 * `drawInnerSplits` after the split's own stage is prepared). The grid is
 * `lambdaGrid` or the default for n_train.
 */
export function prepareFold(
  data: PredictionData,
  train: Int32Array,
  held: Int32Array,
  options: {
    standardize: boolean;
    lambda?: number;
    lambdaGrid?: readonly number[];
    rng?: Rng;
    innerSplits?: readonly Split[] | null;
  },
): PreparedFold {
  const outer = prepareStage(data, train, held, options.standardize);
  if (options.lambda !== undefined) return { outer, inner: [], grid: null, lambda: options.lambda };
  const grid = penaltyGrid(options.lambdaGrid, train.length);
  let innerSplits = options.innerSplits;
  if (!innerSplits) {
    if (!options.rng) throw new StatsError("prepareFold needs its inner splits or a generator");
    innerSplits = drawInnerSplits(train.length, options.rng);
  }
  const inner = innerSplits.map((s) =>
    prepareStage(
      data,
      s.train.map((i) => train[i]),
      s.held.map((i) => train[i]),
      options.standardize,
    ),
  );
  return { outer, inner, grid, lambda: null };
}

/** Writes the stage's training and held-out trait (residualized when there are confounds). */
function stageResponse(stage: PreparedStage, y: Float64Array): void {
  if (stage.confounds) {
    residualize(stage.confounds, y, stage.yTrain, stage.yHeld);
    return;
  }
  const { train, held, yTrain, yHeld } = stage;
  for (let i = 0; i < train.length; i++) yTrain[i] = y[train[i]];
  for (let i = 0; i < held.length; i++) yHeld[i] = y[held[i]];
}

/**
 * Mean squared inner held-out error for every λ of the fold's grid (pooled
 * over the inner held-out rows). Cost O(n·r + n·r·|grid|) over the inner stages.
 */
export function innerMeanSquaredErrors(fold: PreparedFold, y: Float64Array): Float64Array {
  const grid = fold.grid ?? [];
  const sse = new Float64Array(grid.length);
  let count = 0;
  for (const stage of fold.inner) {
    stageResponse(stage, y);
    const mean = projectResponse(stage.basis, stage.yTrain, stage.g);
    accumulateHeldSse(stage.basis, mean, stage.g, stage.yHeld, grid, sse, stage.scratch);
    count += stage.held.length;
  }
  for (let l = 0; l < sse.length; l++) sse[l] /= count;
  return sse;
}

/**
 * The penalty of the grid with the smallest inner mean squared error; ties
 * (within a relative 1e-12) go to the larger λ, the simpler model.
 */
export function chooseLambda(fold: PreparedFold, y: Float64Array): number {
  if (fold.lambda !== null) return fold.lambda;
  const grid = fold.grid ?? [];
  const mse = innerMeanSquaredErrors(fold, y);
  return grid[choosePenaltyIndex(grid.length, (l) => mse[l])];
}

/** Result of the fold's pipeline for one trait vector. */
export interface FoldFit {
  lambda: number;
  /** Held-out trait (residualized when there are confounds), in `held` order. */
  observed: Float64Array;
  predicted: Float64Array;
}

/**
 * Runs the fold's pipeline for the trait `y` (one value per participant):
 * λ choice, fit on the training rows, prediction of the held-out rows. With
 * `weights`, also returns the ridge weights on the scaled regions.
 */
export function fitFold(
  fold: PreparedFold,
  y: Float64Array,
  options: { weights?: boolean } = {},
): FoldFit & { weights?: Float64Array } {
  const lambda = chooseLambda(fold, y);
  const stage = fold.outer;
  stageResponse(stage, y);
  const mean = projectResponse(stage.basis, stage.yTrain, stage.g);
  const predicted = new Float64Array(stage.held.length);
  predictHeld(stage.basis, mean, stage.g, lambda, predicted, stage.scratch);
  const result: FoldFit & { weights?: Float64Array } = {
    lambda,
    observed: Float64Array.from(stage.yHeld),
    predicted,
  };
  if (options.weights) result.weights = ridgeWeights(stage.basis, stage.g, lambda);
  return result;
}

/**
 * Fewest training rows the pipeline accepts: more rows than the confound
 * design plus one (an SD needs two residual degrees of freedom); with an
 * inner λ choice, every inner training set must meet that too.
 */
export function minimumTrainingRows(covariates: number, innerChoice: boolean): number {
  const base = covariates > 0 ? covariates + 3 : 3;
  if (!innerChoice) return base;
  // Inner training size is n − ceil(n/k); find the smallest n meeting the base.
  let rows = base;
  while (rows - Math.ceil(rows / Math.min(INNER_FOLDS, rows)) < base) rows++;
  return rows;
}
