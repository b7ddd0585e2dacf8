/**
 * The fold pipeline for a single trait vector, as the learning curve needs
 * it (each subsample is fitted once, with no permutations): the same
 * confounds, scaling, ridge and inner λ choice as fold-pipeline.ts and
 * block-fit.ts, but without the per-training-set bases M and W that only pay
 * off when many traits share them. Per training set the Gram matrix is
 * reduced to tridiagonal form QTQᵀ (Golub & Van Loan 2013, Matrix
 * Computations, 4th ed., §8.3.1) and Q is applied as its Householder
 * reflectors; each penalty then costs an O(r) solve of T + λI, O(r²) for the
 * reflectors and O((n_held + n_train)·p) for the weights and predictions
 * (Hastie, Tibshirani & Friedman 2009, §3.4.1; the dual form when
 * n_train < p, §18.3.5).
 */
import { residualize } from "./confounds";
import {
  choosePenaltyIndex,
  type PredictionData,
  penaltyGrid,
  stageMatrices,
} from "./fold-pipeline";
import type { Split } from "./folds";
import { gemm, rowMajor, transposed } from "./gemm";
import { ridgeFactors, ridgeSolveColumns, scaleColumns, symmetrize } from "./ridge";
import { applyReflectors, reduceTridiagonal } from "./symmetric-eigen";

/**
 * Held-out predictions of the stage (train, held) for the trait `y` at
 * every λ of `lambdas` (row l, held row i at l·n_held + i), with the stage's
 * held-out trait. Throws StatsError as `stageMatrices`.
 */
function stagePredictions(
  data: PredictionData,
  train: Int32Array,
  held: Int32Array,
  y: Float64Array,
  lambdas: readonly number[],
  standardize: boolean,
): { observed: Float64Array; predicted: Float64Array } {
  const p = data.x.length;
  const nt = train.length;
  const nh = held.length;
  const { confounds, trainMatrix, heldMatrix } = stageMatrices(data, train, held);
  const { xt, h } = scaleColumns(trainMatrix, heldMatrix, nt, p, data.regions, standardize);
  const yTrain = new Float64Array(nt);
  const observed = new Float64Array(nh);
  if (confounds) residualize(confounds, y, yTrain, observed);
  else {
    for (let i = 0; i < nt; i++) yTrain[i] = y[train[i]];
    for (let i = 0; i < nh; i++) observed[i] = y[held[i]];
  }
  let mean = 0;
  for (let i = 0; i < nt; i++) mean += yTrain[i];
  mean /= nt;
  for (let i = 0; i < nt; i++) yTrain[i] -= mean;
  const primal = p <= nt;
  const r = primal ? p : nt;
  const gram = new Float64Array(r * r);
  if (primal) gemm(p, p, nt, rowMajor(xt, nt), transposed(xt, nt), gram, p, { upper: true });
  else gemm(r, r, p, transposed(xt, nt), rowMajor(xt, nt), gram, r, { upper: true });
  symmetrize(gram, r);
  const diag = new Float64Array(r);
  const e = new Float64Array(r);
  const reflectors = reduceTridiagonal(gram, diag, e, r);
  const off = new Float64Array(r);
  for (let k = 0; k + 1 < r; k++) off[k] = e[k + 1];
  // g = Qᵀ Xᵀ(y − ȳ) (primal) or Qᵀ(y − ȳ) (dual).
  const g = new Float64Array(r);
  if (primal) gemm(p, 1, nt, rowMajor(xt, nt), rowMajor(yTrain, 1), g, 1);
  else g.set(yTrain);
  applyReflectors(reflectors, r, g, true);
  const factors = ridgeFactors({ r, diag, off }, lambdas);
  const nl = lambdas.length;
  const solved = new Float64Array(r * nl); // column l: (T + λ_l I)⁻¹ g
  for (let l = 0; l < nl; l++) ridgeSolveColumns(factors, l, g, 1, 0, solved, nl, l, 1);
  // Weights per λ on the scaled columns, p × nl: Q s (primal) or Xᵀ Q s (dual).
  const column = new Float64Array(r);
  const coefficients = new Float64Array(r * nl);
  for (let l = 0; l < nl; l++) {
    for (let k = 0; k < r; k++) column[k] = solved[k * nl + l];
    applyReflectors(reflectors, r, column, false);
    for (let k = 0; k < r; k++) coefficients[k * nl + l] = column[k];
  }
  let weights = coefficients;
  if (!primal) {
    weights = new Float64Array(p * nl);
    gemm(p, nl, nt, rowMajor(xt, nt), rowMajor(coefficients, nl), weights, nl);
  }
  const fitted = new Float64Array(nh * nl);
  gemm(nh, nl, p, rowMajor(h, p), rowMajor(weights, nl), fitted, nl);
  const predicted = new Float64Array(nl * nh);
  for (let l = 0; l < nl; l++)
    for (let i = 0; i < nh; i++) predicted[l * nh + i] = mean + fitted[i * nl + l];
  return { observed, predicted };
}

/**
 * The pipeline of the split (train, held) for one trait: the penalty chosen
 * over the inner partition `innerSplits` (positions in `train`) by the rule
 * of `chooseLambda` unless `lambda` is fixed, then the held-out fit.
 */
export function fitSingle(
  data: PredictionData,
  train: Int32Array,
  held: Int32Array,
  y: Float64Array,
  options: {
    standardize: boolean;
    lambda: number | null;
    lambdaGrid: readonly number[] | null;
    innerSplits: readonly Split[] | null;
  },
): { lambda: number; observed: Float64Array; predicted: Float64Array } {
  let lambda = options.lambda;
  if (lambda === null) {
    const grid = penaltyGrid(options.lambdaGrid, train.length);
    const sse = new Float64Array(grid.length);
    let count = 0;
    for (const s of options.innerSplits ?? []) {
      const fit = stagePredictions(
        data,
        s.train.map((i) => train[i]),
        s.held.map((i) => train[i]),
        y,
        grid,
        options.standardize,
      );
      const nh = fit.observed.length;
      for (let l = 0; l < grid.length; l++) {
        let sum = 0;
        for (let i = 0; i < nh; i++) {
          const e = fit.observed[i] - fit.predicted[l * nh + i];
          sum += e * e;
        }
        sse[l] += sum;
      }
      count += nh;
    }
    lambda = grid[choosePenaltyIndex(grid.length, (l) => sse[l] / count)];
  }
  const fit = stagePredictions(data, train, held, y, [lambda], options.standardize);
  return { lambda, ...fit };
}
