/**
 * Confound removal inside cross-validation: each region and the trait are
 * regressed on an intercept and the covariates by ordinary least squares on
 * the training rows only, and training and held-out values are replaced by
 * their residuals under the training coefficients ("cross-validated confound
 * regression", Snoek, Miletić & Scholte 2019, NeuroImage 184:741–760, §2.3).
 * The least-squares fit is the engine's Householder QR (linear-model.ts).
 *
 * Cost: O(n_train·q²) once per training set (q = covariates + 1), then
 * O((n_train + n_held)·q) per residualized variable.
 */
import { StatsError } from "../errors";
import { qrDecompose } from "../linear-model";

/** The training-row least-squares fit of [1, covariates], ready to residualize any variable. */
export interface ConfoundFit {
  /** Columns of the design: intercept + covariates. */
  q: number;
  train: Int32Array;
  held: Int32Array;
  /** Thin Q of the training design, column-major n_train×q. */
  qThin: Float64Array;
  /** R⁻¹, row-major q×q. */
  rInverse: Float64Array;
  /** Held-out design [1, covariates], row-major n_held×q. */
  heldDesign: Float64Array;
}

/**
 * Fits [1, covariates] on the training rows `train` (indices into the
 * participant arrays). Throws StatsError naming a covariate that is constant
 * or collinear on the training rows, or when there are not more training
 * rows than design columns.
 */
export function fitConfounds(
  covariates: readonly Float64Array[],
  covariateNames: readonly string[],
  train: Int32Array,
  held: Int32Array,
): ConfoundFit {
  const q = covariates.length + 1;
  const nt = train.length;
  if (nt <= q)
    throw new StatsError(
      `confound regression requires more training participants (${nt}) than covariates plus an intercept (${q})`,
    );
  const design = new Float64Array(nt * q);
  for (let i = 0; i < nt; i++) {
    design[i * q] = 1;
    for (let c = 1; c < q; c++) design[i * q + c] = covariates[c - 1][train[i]];
  }
  const names = ["intercept", ...covariateNames];
  let qr: ReturnType<typeof qrDecompose>;
  try {
    qr = qrDecompose(design, nt, q, names);
  } catch (error) {
    const column = error instanceof StatsError ? /column '(.*)' is/.exec(error.message) : null;
    if (!column) throw error;
    throw new StatsError(
      `covariate '${column[1]}' is constant or a linear combination of the other covariates in a training fold`,
    );
  }
  const heldDesign = new Float64Array(held.length * q);
  for (let i = 0; i < held.length; i++) {
    heldDesign[i * q] = 1;
    for (let c = 1; c < q; c++) heldDesign[i * q + c] = covariates[c - 1][held[i]];
  }
  return { q, train, held, qThin: qr.q, rInverse: qr.rInverse, heldDesign };
}

/**
 * Residuals of one variable (`values`, one per participant) under the
 * training fit: writes n_train training residuals to `outTrain` and n_held
 * held-out residuals to `outHeld`. Returns the training coefficients
 * (intercept first). Cost O((n_train + n_held)·q + q²).
 */
export function residualize(
  fit: ConfoundFit,
  values: ArrayLike<number>,
  outTrain: Float64Array,
  outHeld: Float64Array,
): Float64Array {
  const { q, train, held, qThin, rInverse, heldDesign } = fit;
  const nt = train.length;
  const qty = new Float64Array(q);
  for (let c = 0; c < q; c++) {
    let s = 0;
    const off = c * nt;
    for (let i = 0; i < nt; i++) s += qThin[off + i] * values[train[i]];
    qty[c] = s;
  }
  for (let i = 0; i < nt; i++) {
    let fitted = 0;
    for (let c = 0; c < q; c++) fitted += qThin[c * nt + i] * qty[c];
    outTrain[i] = values[train[i]] - fitted;
  }
  const beta = new Float64Array(q);
  for (let a = 0; a < q; a++) {
    let s = 0;
    for (let c = a; c < q; c++) s += rInverse[a * q + c] * qty[c];
    beta[a] = s;
  }
  for (let i = 0; i < held.length; i++) {
    let fitted = 0;
    for (let c = 0; c < q; c++) fitted += heldDesign[i * q + c] * beta[c];
    outHeld[i] = values[held[i]] - fitted;
  }
  return beta;
}
