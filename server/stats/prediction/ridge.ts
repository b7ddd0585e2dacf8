/**
 * Ridge regression with an unpenalized intercept, one decomposition per
 * training matrix for every penalty and every response.
 *
 * Minimizes Σ(y − b₀ − Xb)² + λ‖b‖² (Hoerl & Kennard 1970, Technometrics
 * 12:55–67). With X centred (and, by default, each column scaled by its
 * training standard deviation, n − 1), b₀ = ȳ and b = (XᵀX + λI)⁻¹Xᵀ(y − ȳ)
 * (Hastie, Tibshirani & Friedman 2009, The Elements of Statistical Learning,
 * 2nd ed., §3.4.1, eq. 3.44). The smaller Gram matrix is reduced once to
 * tridiagonal form by orthogonal similarity (Golub & Van Loan 2013, Matrix
 * Computations, 4th ed., §8.3.1): XᵀX = QTQᵀ when n ≥ p, so
 * b = Q(T + λI)⁻¹QᵀXᵀ(y − ȳ); XXᵀ = QTQᵀ when n < p, so
 * b = XᵀQ(T + λI)⁻¹Qᵀ(y − ȳ) (the dual form, §18.3.5).
 * Every prediction is then
 *     ŷ_held = ȳ + W (T + λI)⁻¹ g,   g = Mᵀ(y − ȳ),
 * with M (n×r) and W (n_held×r) fixed per training matrix, and T + λI
 * (symmetric positive definite for λ > 0) solved by its LDLᵀ factors in
 * O(r) (Golub & Van Loan §4.3.6): O(n·r) per response and O(n_held·r) per
 * penalty, r = min(n, p) — the cost of the eigendecomposition route
 * (eq. 3.47) without its QL iterations, which would cost more than the
 * reduction itself.
 *
 * Cost of the preparation: O(n·p·r) for the Gram matrix and the products,
 * plus about 5r³/3 multiply-adds for the reduction.
 */
import { StatsError } from "../errors";
import { gemm, rowMajor, transposed } from "./gemm";
import { householderTridiagonal } from "./symmetric-eigen";

/** A training matrix decomposed for ridge predictions of its held-out rows. */
export interface RidgeBasis {
  nTrain: number;
  nHeld: number;
  p: number;
  /** Rank of the decomposition: min(n_train, p). */
  r: number;
  /** Diagonal of T (the Gram matrix in the basis Q). */
  diag: Float64Array;
  /** off[k] = T[k][k+1], k < r − 1. */
  off: Float64Array;
  /** Mᵀ, row-major r×n_train (M = XQ, or Q in the dual form): g = Mᵀ(y − ȳ). */
  mt: Float64Array;
  /** W, row-major n_held×r: held-out predictions. */
  w: Float64Array;
  /** B, row-major p×r: weights b = B (T + λI)⁻¹g on the scaled columns. */
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
  const { xt, h } = scaleColumns(train, held, nTrain, p, names, options.standardize);
  if (p <= nTrain) {
    const r = p;
    // Gram XᵀX (p×p) from the column-major scaled matrix: xt is p×n_train row-major.
    const gram = new Float64Array(p * p);
    gemm(p, p, nTrain, rowMajor(xt, nTrain), transposed(xt, nTrain), gram, p, { upper: true });
    symmetrize(gram, p);
    const { diag, off, q } = householderTridiagonal(gram, p);
    // M = X Q (n_train×r): X = xtᵀ.
    // Mᵀ = Qᵀ Xᵀ (r×n_train): Xᵀ = xt.
    const mt = new Float64Array(r * nTrain);
    gemm(r, nTrain, p, transposed(q, p), rowMajor(xt, nTrain), mt, nTrain);
    // W = X_held Q (n_held×r).
    const w = new Float64Array(nHeld * r);
    gemm(nHeld, r, p, rowMajor(h, p), rowMajor(q, p), w, r);
    return { nTrain, nHeld, p, r, diag, off, mt, w, b: q };
  }
  const r = nTrain;
  // Gram XXᵀ (n_train×n_train).
  const gram = new Float64Array(r * r);
  gemm(r, r, p, transposed(xt, nTrain), rowMajor(xt, nTrain), gram, r, { upper: true });
  symmetrize(gram, r);
  const { diag, off, q } = householderTridiagonal(gram, r);
  const mt = new Float64Array(r * nTrain); // Mᵀ = Qᵀ
  for (let i = 0; i < nTrain; i++) for (let k = 0; k < r; k++) mt[k * nTrain + i] = q[i * r + k];
  // B = Xᵀ Q (p×r): Xᵀ = xt.
  const b = new Float64Array(p * r);
  gemm(p, r, nTrain, rowMajor(xt, nTrain), rowMajor(q, r), b, r);
  // W = X_held B (n_held×r).
  const w = new Float64Array(nHeld * r);
  gemm(nHeld, r, p, rowMajor(h, p), rowMajor(b, r), w, r);
  return { nTrain, nHeld, p, r, diag, off, mt, w, b };
}

/**
 * The training matrix centred (and with `standardize` scaled by the training
 * SD, n − 1) column by column, stored column-major as `xt` (p rows of
 * n_train), and the held-out rows row-major in `h` under the same centring
 * and scaling. Throws StatsError naming a column constant on the training rows.
 */
export function scaleColumns(
  train: Float64Array,
  held: Float64Array,
  nTrain: number,
  p: number,
  names: readonly string[],
  standardize: boolean,
): { xt: Float64Array; h: Float64Array } {
  const nHeld = held.length / p;
  const xt = new Float64Array(p * nTrain);
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
    const scale = standardize ? 1 / sd : 1;
    if (scale !== 1) for (let i = 0; i < nTrain; i++) xt[j * nTrain + i] *= scale;
    for (let i = 0; i < nHeld; i++) h[i * p + j] = (held[i * p + j] - mean) * scale;
  }
  return { xt, h };
}

/** Makes a computed Gram matrix exactly symmetric (upper triangle copied to the lower). */
export function symmetrize(a: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) a[j * n + i] = a[i * n + j];
}

/** LDLᵀ factors of T + λ_l I for each penalty: pivots d (l·r + k) and multipliers (l·r + k, k < r − 1). */
export interface RidgeFactors {
  r: number;
  count: number;
  pivot: Float64Array;
  multiplier: Float64Array;
}

/**
 * Factors T + λI = LDLᵀ (L unit lower bidiagonal) for each λ of `lambdas`
 * (Golub & Van Loan 2013, §4.3.6; stable without pivoting as T + λI is
 * positive definite). Cost O(r) per λ.
 */
export function ridgeFactors(
  basis: Pick<RidgeBasis, "r" | "diag" | "off">,
  lambdas: ArrayLike<number>,
): RidgeFactors {
  const { r, diag, off } = basis;
  const count = lambdas.length;
  const pivot = new Float64Array(count * r);
  const multiplier = new Float64Array(count * r);
  for (let l = 0; l < count; l++) {
    const base = l * r;
    let d = diag[0] + lambdas[l];
    pivot[base] = d;
    for (let k = 1; k < r; k++) {
      const mult = off[k - 1] / d;
      multiplier[base + k - 1] = mult;
      d = diag[k] + lambdas[l] - mult * off[k - 1];
      pivot[base + k] = d;
    }
  }
  return { r, count, pivot, multiplier };
}

/**
 * Solves (T + λ_f I) s = g for `columns` right-hand sides at once: g and out
 * are row-major r × (stride), column c of g at gOffset + c and of out at
 * outOffset + c (they may be the same array and offsets); factor index f of
 * column c is factorOf(c). Cost O(r) per column.
 */
export function ridgeSolveColumns(
  factors: RidgeFactors,
  factor: number,
  g: Float64Array,
  gStride: number,
  gOffset: number,
  out: Float64Array,
  outStride: number,
  outOffset: number,
  columns: number,
): void {
  const { r, pivot, multiplier } = factors;
  const base = factor * r;
  for (let c = 0; c < columns; c++) out[outOffset + c] = g[gOffset + c];
  for (let k = 1; k < r; k++) {
    const mult = multiplier[base + k - 1];
    const row = outOffset + k * outStride;
    const prev = row - outStride;
    const gRow = gOffset + k * gStride;
    for (let c = 0; c < columns; c++) out[row + c] = g[gRow + c] - mult * out[prev + c];
  }
  for (let k = 0; k < r; k++) {
    const d = pivot[base + k];
    const row = outOffset + k * outStride;
    for (let c = 0; c < columns; c++) out[row + c] /= d;
  }
  for (let k = r - 2; k >= 0; k--) {
    const mult = multiplier[base + k];
    const row = outOffset + k * outStride;
    const next = row + outStride;
    for (let c = 0; c < columns; c++) out[row + c] -= mult * out[next + c];
  }
}

/** (T + λI)⁻¹g for one response. Cost O(r). */
function solveOne(basis: RidgeBasis, g: Float64Array, lambda: number, out: Float64Array): void {
  ridgeSolveColumns(ridgeFactors(basis, [lambda]), 0, g, 1, 0, out, 1, 0, 1);
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
  const { nTrain, r, mt } = basis;
  let mean = 0;
  for (let i = 0; i < nTrain; i++) mean += yTrain[i];
  mean /= nTrain;
  const centred = new Float64Array(nTrain);
  for (let i = 0; i < nTrain; i++) centred[i] = yTrain[i] - mean;
  for (let k = 0; k < r; k++) g[k] = dot(mt, k * nTrain, centred, 0, nTrain);
  return mean;
}

/** Held-out predictions at penalty λ from a projected response: ȳ + W(T + λI)⁻¹g. Cost O(n_held·r). */
export function predictHeld(
  basis: RidgeBasis,
  mean: number,
  g: Float64Array,
  lambda: number,
  out: Float64Array,
  scratch: Float64Array,
): void {
  const { r, nHeld, w } = basis;
  solveOne(basis, g, lambda, scratch);
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
  const { r, nHeld, w } = basis;
  for (let l = 0; l < grid.length; l++) {
    solveOne(basis, g, grid[l], scratch);
    let s = 0;
    for (let i = 0; i < nHeld; i++) {
      const e = yHeld[i] - mean - dot(w, i * r, scratch, 0, r);
      s += e * e;
    }
    sse[l] += s;
  }
}

/** The weights b on the (scaled) columns at penalty λ: B(T + λI)⁻¹g. Cost O(p·r). */
export function ridgeWeights(basis: RidgeBasis, g: Float64Array, lambda: number): Float64Array {
  const { r, p, b } = basis;
  const scaled = new Float64Array(r);
  solveOne(basis, g, lambda, scaled);
  const weights = new Float64Array(p);
  for (let j = 0; j < p; j++) weights[j] = dot(b, j * r, scaled, 0, r);
  return weights;
}
