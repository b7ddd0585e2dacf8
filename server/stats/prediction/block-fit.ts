/**
 * The fold pipeline of fold-pipeline.ts run on a block of trait vectors at
 * once (the observed trait or a block of its permutations), so that the
 * projections and held-out predictions are matrix–matrix products instead of
 * one dot product per row, trait and penalty. For each stage (training set)
 * with basis M, W and tridiagonal T (ridge.ts; Hastie, Tibshirani & Friedman 2009, The
 * Elements of Statistical Learning, 2nd ed., §3.4.1):
 *     G = Mᵀ(Y − ȳ)                          (r × B)
 *     Ŷ_held(λ) = ȳ + W (T + λI)⁻¹G          (n_held × B, every λ in one product)
 * and the inner mean squared error of each λ chooses the penalty of each
 * trait separately, with the rule of `chooseLambda` (ties within a relative
 * 1e-12 go to the larger λ). Every column is computed by exactly the same
 * sequence of operations whatever the block size, so a trait's results do
 * not depend on the block it was fitted in.
 *
 * Cost per stage and block of B traits: n_train·r·B for G, n_held·r·B·|grid|
 * for the inner errors (n_held·r·B for the outer predictions).
 */
import { residualize } from "./confounds";
import { choosePenaltyIndex, type PreparedFold, type PreparedStage } from "./fold-pipeline";
import { gemm, rowMajor } from "./gemm";
import { ridgeFactors, ridgeSolveColumns } from "./ridge";

/** Results of the fold's pipeline for a block of traits (held row i, trait b at i·count + b). */
export interface BlockFit {
  count: number;
  /** Penalty chosen (or fixed) per trait. */
  lambdas: Float64Array;
  /** Held-out trait (residualized when there are confounds), n_held × count. */
  observed: Float64Array;
  /** Held-out predictions, n_held × count. */
  predicted: Float64Array;
  /** Projections G = Mᵀ(y − ȳ) of the outer stage, r × count (for the ridge weights). */
  g: Float64Array;
}

/** Training and held-out responses of a stage for the block, and their training means. */
function stageResponses(
  stage: PreparedStage,
  traits: Float64Array,
  n: number,
  count: number,
): { yTrain: Float64Array; yHeld: Float64Array; mean: Float64Array } {
  const { train, held } = stage;
  const nt = train.length;
  const nh = held.length;
  const yTrain = new Float64Array(nt * count);
  const yHeld = new Float64Array(nh * count);
  const mean = new Float64Array(count);
  for (let b = 0; b < count; b++) {
    const base = b * n;
    if (stage.confounds) {
      residualize(stage.confounds, traits.subarray(base, base + n), stage.yTrain, stage.yHeld);
      for (let i = 0; i < nt; i++) yTrain[i * count + b] = stage.yTrain[i];
      for (let i = 0; i < nh; i++) yHeld[i * count + b] = stage.yHeld[i];
    } else {
      for (let i = 0; i < nt; i++) yTrain[i * count + b] = traits[base + train[i]];
      for (let i = 0; i < nh; i++) yHeld[i * count + b] = traits[base + held[i]];
    }
    let m = 0;
    for (let i = 0; i < nt; i++) m += yTrain[i * count + b];
    mean[b] = m / nt;
  }
  return { yTrain, yHeld, mean };
}

/** G = Mᵀ(Y − ȳ) (r × count); centres yTrain in place. */
function project(stage: PreparedStage, yTrain: Float64Array, mean: Float64Array, count: number) {
  const { nTrain, r, mt } = stage.basis;
  for (let i = 0; i < nTrain; i++) for (let b = 0; b < count; b++) yTrain[i * count + b] -= mean[b];
  const g = new Float64Array(r * count);
  gemm(r, count, nTrain, rowMajor(mt, nTrain), rowMajor(yTrain, count), g, count);
  return g;
}

/**
 * Inner mean squared error per λ and trait (grid index l, trait b at
 * l·count + b), pooled over the inner held-out rows as `innerMeanSquaredErrors`.
 */
export function innerErrorsBlock(
  fold: PreparedFold,
  traits: Float64Array,
  n: number,
  count: number,
): Float64Array {
  const grid = fold.grid ?? [];
  const nl = grid.length;
  const sse = new Float64Array(nl * count);
  let heldRows = 0;
  const width = nl * count;
  for (const stage of fold.inner) {
    const { yTrain, yHeld, mean } = stageResponses(stage, traits, n, count);
    const g = project(stage, yTrain, mean, count);
    const { r, nHeld, w } = stage.basis;
    const scaled = new Float64Array(r * width);
    const factors = ridgeFactors(stage.basis, grid);
    for (let l = 0; l < nl; l++)
      ridgeSolveColumns(factors, l, g, count, 0, scaled, width, l * count, count);
    const fitted = new Float64Array(nHeld * width);
    gemm(nHeld, width, r, rowMajor(w, r), rowMajor(scaled, width), fitted, width);
    for (let l = 0; l < nl; l++) {
      for (let b = 0; b < count; b++) {
        let s = 0;
        for (let i = 0; i < nHeld; i++) {
          const e = yHeld[i * count + b] - mean[b] - fitted[i * width + l * count + b];
          s += e * e;
        }
        sse[l * count + b] += s;
      }
    }
    heldRows += stage.held.length;
  }
  for (let x = 0; x < sse.length; x++) sse[x] /= heldRows;
  return sse;
}

/**
 * Runs the fold's pipeline on `count` traits stored one after another in
 * `traits` (trait b is traits[b·n .. b·n + n), one value per participant):
 * λ choice per trait, fit on the training rows, prediction of the held-out rows.
 */
export function fitFoldBlock(
  fold: PreparedFold,
  traits: Float64Array,
  n: number,
  count: number,
): BlockFit {
  const lambdas = new Float64Array(count);
  if (fold.lambda !== null) lambdas.fill(fold.lambda);
  else {
    const grid = fold.grid ?? [];
    const mse = innerErrorsBlock(fold, traits, n, count);
    for (let b = 0; b < count; b++) {
      lambdas[b] = grid[choosePenaltyIndex(grid.length, (l) => mse[l * count + b])];
    }
  }
  const stage = fold.outer;
  const { yTrain, yHeld, mean } = stageResponses(stage, traits, n, count);
  const g = project(stage, yTrain, mean, count);
  const { r, nHeld, w } = stage.basis;
  const scaled = new Float64Array(r * count);
  const factors = ridgeFactors(stage.basis, lambdas);
  for (let b = 0; b < count; b++) ridgeSolveColumns(factors, b, g, count, b, scaled, count, b, 1);
  const predicted = new Float64Array(nHeld * count);
  gemm(nHeld, count, r, rowMajor(w, r), rowMajor(scaled, count), predicted, count);
  for (let i = 0; i < nHeld; i++)
    for (let b = 0; b < count; b++) predicted[i * count + b] += mean[b];
  return { count, lambdas, observed: yHeld, predicted, g };
}
