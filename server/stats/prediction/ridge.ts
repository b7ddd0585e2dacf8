/**
 * Ridge regression with an unpenalized intercept, one decomposition per
 * training matrix for every penalty and every response.
 *
 * Minimizes Σ(y − b₀ − Xb)² + λ‖b‖² (Hoerl & Kennard 1970, Technometrics
 * 12:55–67). With X centred (and, by default, each column scaled by its
 * training standard deviation, n − 1), b₀ = ȳ and, from the singular value
 * decomposition X = UDVᵀ, b = V diag(d/(d² + λ)) Uᵀy (Hastie, Tibshirani &
 * Friedman 2009, The Elements of Statistical Learning, 2nd ed., §3.4.1, eq.
 * 3.47). The decomposition is taken from the smaller Gram matrix: XᵀX = VD²Vᵀ
 * when n ≥ p, XXᵀ = UD²Uᵀ when n < p (then b = XᵀU diag(1/(d²+λ)) Uᵀy), by
 * the symmetric eigen solver. Every prediction is then
 *     ŷ_held = ȳ + W (g ⊙ 1/(d² + λ)),   g = Mᵀ(y − ȳ),
 * with M (n×r) and W (n_held×r) fixed per training matrix: O(n·r) per
 * response and O(n_held·r) per penalty, r = min(n, p).
 *
 * Cost of the preparation: O(n·p·r) for the Gram matrix and the products,
 * plus about 9r³ for the eigendecomposition.
 */
import { StatsError } from "../errors";
import { gemm, rowMajor, transposed } from "./gemm";
import { symmetricEigen } from "./symmetric-eigen";

/** A training matrix decomposed for ridge predictions of its held-out rows. */
export interface RidgeBasis {
  nTrain: number;
  nHeld: number;
  p: number;
  /** Rank of the decomposition: min(n_train, p). */
  r: number;
  /** Squared singular values d² (eigenvalues of the Gram matrix, ≥ 0). */
  dsq: Float64Array;
  /** M, row-major n_train×r: g = Mᵀ(y − ȳ). */
  m: Float64Array;
  /** W, row-major n_held×r: held-out predictions. */
  w: Float64Array;
  /** B, row-major p×r: weights b = B (g ⊙ 1/(d²+λ)) on the scaled columns. */
  b: Float64Array;
}

/**
 * Centres (and with `standardize`, scales by the training SD, n − 1) the
 * columns of `train` (row-major n_train×p) and `held` (n_held×p) by training
 * statistics, then decomposes. `names` label the columns in errors. Throws
 * StatsError when a column is constant on the training rows.
 */
export function prepareRidge(
  train: Float64Array,
  held: Float64Array,
  nTrain: number,
  p: number,
  names: readonly string[],
  options: { standardize: boolean },
): RidgeBasis {
  const nHeld = held.length / p;
  const xt = new Float64Array(p * nTrain); // scaled training matrix, column-major (p rows of n)
  const h = new Float64Array(nHeld * p);
  for (let j = 0; j < p; j++) {
    let mean = 0;
    for (let i = 0; i < nTrain; i++) mean += train[i * p + j];
    mean /= nTrain;
    let ss = 0;
    for (let i = 0; i < nTrain; i++) {
      const c = train[i * p + j] - mean;
      xt[j * nTrain + i] = c;
      ss += c * c;
    }
    const sd = Math.sqrt(ss / (nTrain - 1));
    if (!(sd > 0)) throw new StatsError(`region '${names[j]}' is constant in a training fold`);
    const scale = options.standardize ? 1 / sd : 1;
    if (scale !== 1) for (let i = 0; i < nTrain; i++) xt[j * nTrain + i] *= scale;
    for (let i = 0; i < nHeld; i++) h[i * p + j] = (held[i * p + j] - mean) * scale;
  }
  if (p <= nTrain) {
    const r = p;
    // Gram XᵀX (p×p) from the column-major scaled matrix: xt is p×n_train row-major.
    const gram = new Float64Array(p * p);
    gemm(p, p, nTrain, rowMajor(xt, nTrain), transposed(xt, nTrain), gram, p);
    symmetrize(gram, p);
    const { values, vectors } = symmetricEigen(gram, p); // vectors: row k = v_k
    // M = X V (n_train×r): X = xtᵀ, V = vectorsᵀ.
    const m = new Float64Array(nTrain * r);
    gemm(nTrain, r, p, transposed(xt, nTrain), transposed(vectors, p), m, r);
    // W = X_held V (n_held×r).
    const w = new Float64Array(nHeld * r);
    gemm(nHeld, r, p, rowMajor(h, p), transposed(vectors, p), w, r);
    const b = new Float64Array(p * r);
    for (let k = 0; k < r; k++) for (let j = 0; j < p; j++) b[j * r + k] = vectors[k * p + j];
    return { nTrain, nHeld, p, r, dsq: clampNonNegative(values), m, w, b };
  }
  const r = nTrain;
  // Gram XXᵀ (n_train×n_train).
  const gram = new Float64Array(r * r);
  gemm(r, r, p, transposed(xt, nTrain), rowMajor(xt, nTrain), gram, r);
  symmetrize(gram, r);
  const { values, vectors } = symmetricEigen(gram, r); // row k = u_k
  const m = new Float64Array(nTrain * r);
  for (let k = 0; k < r; k++) for (let i = 0; i < nTrain; i++) m[i * r + k] = vectors[k * r + i];
  // B = Xᵀ U (p×r): Xᵀ = xt, U = vectorsᵀ.
  const b = new Float64Array(p * r);
  gemm(p, r, nTrain, rowMajor(xt, nTrain), transposed(vectors, r), b, r);
  // W = X_held B (n_held×r).
  const w = new Float64Array(nHeld * r);
  gemm(nHeld, r, p, rowMajor(h, p), rowMajor(b, r), w, r);
  return { nTrain, nHeld, p, r, dsq: clampNonNegative(values), m, w, b };
}

/** Makes a computed Gram matrix exactly symmetric (upper triangle copied to the lower). */
function symmetrize(a: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) a[j * n + i] = a[i * n + j];
}

function clampNonNegative(values: Float64Array): Float64Array {
  for (let k = 0; k < values.length; k++) if (values[k] < 0) values[k] = 0;
  return values;
}

function dot(a: Float64Array, ia: number, b: Float64Array, ib: number, len: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let k = 0;
  for (; k + 3 < len; k += 4) {
    s0 += a[ia + k] * b[ib + k];
    s1 += a[ia + k + 1] * b[ib + k + 1];
    s2 += a[ia + k + 2] * b[ib + k + 2];
    s3 += a[ia + k + 3] * b[ib + k + 3];
  }
  for (; k < len; k++) s0 += a[ia + k] * b[ib + k];
  return s0 + s1 + s2 + s3;
}

/**
 * Projects a training response: returns ȳ and writes g = Mᵀ(y − ȳ) (length r)
 * into `g`. Cost O(n_train·r).
 */
export function projectResponse(basis: RidgeBasis, yTrain: Float64Array, g: Float64Array): number {
  const { nTrain, r, m } = basis;
  let mean = 0;
  for (let i = 0; i < nTrain; i++) mean += yTrain[i];
  mean /= nTrain;
  g.fill(0);
  for (let i = 0; i < nTrain; i++) {
    const yi = yTrain[i] - mean;
    if (yi === 0) continue;
    const off = i * r;
    for (let k = 0; k < r; k++) g[k] += yi * m[off + k];
  }
  return mean;
}

/** Held-out predictions at penalty λ from a projected response: ȳ + W(g ⊙ 1/(d²+λ)). Cost O(n_held·r). */
export function predictHeld(
  basis: RidgeBasis,
  mean: number,
  g: Float64Array,
  lambda: number,
  out: Float64Array,
  scratch: Float64Array,
): void {
  const { r, nHeld, w, dsq } = basis;
  for (let k = 0; k < r; k++) scratch[k] = g[k] / (dsq[k] + lambda);
  for (let i = 0; i < nHeld; i++) out[i] = mean + dot(w, i * r, scratch, 0, r);
}

/**
 * Sum of squared held-out errors Σ(y_held − ŷ_held)² for every λ of `grid`,
 * added into `sse` (one entry per λ). Cost O(n_held·r) per λ.
 */
export function accumulateHeldSse(
  basis: RidgeBasis,
  mean: number,
  g: Float64Array,
  yHeld: Float64Array,
  grid: readonly number[],
  sse: Float64Array,
  scratch: Float64Array,
): void {
  const { r, nHeld, w, dsq } = basis;
  for (let l = 0; l < grid.length; l++) {
    const lambda = grid[l];
    for (let k = 0; k < r; k++) scratch[k] = g[k] / (dsq[k] + lambda);
    let s = 0;
    for (let i = 0; i < nHeld; i++) {
      const e = yHeld[i] - mean - dot(w, i * r, scratch, 0, r);
      s += e * e;
    }
    sse[l] += s;
  }
}

/** The weights b on the (scaled) columns at penalty λ: B(g ⊙ 1/(d²+λ)). Cost O(p·r). */
export function ridgeWeights(basis: RidgeBasis, g: Float64Array, lambda: number): Float64Array {
  const { r, p, b, dsq } = basis;
  const scaled = new Float64Array(r);
  for (let k = 0; k < r; k++) scaled[k] = g[k] / (dsq[k] + lambda);
  const weights = new Float64Array(p);
  for (let j = 0; j < p; j++) weights[j] = dot(b, j * r, scaled, 0, r);
  return weights;
}
