/**
 * Eigendecomposition of a real symmetric matrix: Householder reduction to
 * tridiagonal form on whole rows of a row-major matrix (Golub & Van Loan
 * 2013, Matrix Computations, 4th ed., Algorithm 8.3.1, with the reflectors
 * accumulated backwards, §5.1.6), followed by the implicit QL algorithm with
 * shifts on the tridiagonal (procedure tql2 of Wilkinson & Reinsch 1971,
 * Handbook for Automatic Computation, vol. II, Linear Algebra, contribution
 * II/3), its rotations applied to contiguous rows of the vector matrix.
 *
 * Cost about 4m³/3 multiply-adds for the reduction and its accumulation plus
 * about 3m³ for the rotations, for an m×m matrix with its eigenvectors; the
 * ridge decompositions of the prediction model decompose a 400×400 Gram
 * matrix hundreds of times.
 */
import { StatsError } from "../errors";
import { gemm, rowMajor, transposed } from "./gemm";

/** A = Q T Qᵀ with T symmetric tridiagonal. */
export interface Tridiagonal {
  m: number;
  /** Diagonal of T. */
  diag: Float64Array;
  /** off[k] = T[k][k+1] = T[k+1][k], k < m − 1 (length m, last entry 0). */
  off: Float64Array;
  /** Q, row-major m×m (orthogonal). */
  q: Float64Array;
}

/**
 * Householder tridiagonal form A = Q T Qᵀ of the symmetric m×m matrix `a`
 * (row-major; not changed). Cost about 5m³/3 multiply-adds.
 */
export function householderTridiagonal(a: ArrayLike<number>, m: number): Tridiagonal {
  if (a.length !== m * m) throw new StatsError("householderTridiagonal requires an m×m matrix");
  for (let i = 0; i < a.length; i++)
    if (!Number.isFinite(a[i]))
      throw new StatsError("householderTridiagonal requires finite values");
  const work = Float64Array.from(a);
  const diag = new Float64Array(m);
  const e = new Float64Array(m);
  const off = new Float64Array(m);
  if (m === 0) return { m, diag, off, q: work };
  const q = tridiagonalize(work, diag, e, m);
  for (let k = 0; k + 1 < m; k++) off[k] = e[k + 1];
  return { m, diag, off, q };
}

export interface SymmetricEigen {
  /** Order m of the matrix. */
  m: number;
  /** Eigenvalues, ascending. */
  values: Float64Array;
  /** Eigenvectors, row-major m×m: row j is the unit eigenvector of values[j]. */
  vectors: Float64Array;
}

/**
 * Eigenvalues and orthonormal eigenvectors of the symmetric m×m matrix `a`
 * (row-major; only its values are read, the matrix is not changed). Throws
 * StatsError for a non-finite entry or when the QL iteration does not
 * converge in 60 steps per eigenvalue.
 */
export function symmetricEigen(a: ArrayLike<number>, m: number): SymmetricEigen {
  if (a.length !== m * m) throw new StatsError("symmetricEigen requires an m×m matrix");
  for (let i = 0; i < a.length; i++)
    if (!Number.isFinite(a[i])) throw new StatsError("symmetricEigen requires finite values");
  const work = Float64Array.from(a); // row-major working copy, reduced in place
  const d = new Float64Array(m);
  const e = new Float64Array(m);
  if (m === 0) return { m, values: d, vectors: work };
  const q = tridiagonalize(work, d, e, m);
  // z = Qᵀ: row j is column j of Q, so the QL rotations combine contiguous rows.
  const z = new Float64Array(m * m);
  for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) z[j * m + i] = q[i * m + j];
  implicitQl(z, d, e, m);
  // Sort ascending (selection sort on values, swapping vector rows).
  for (let i = 0; i < m - 1; i++) {
    let k = i;
    for (let j = i + 1; j < m; j++) if (d[j] < d[k]) k = j;
    if (k !== i) {
      const t = d[i];
      d[i] = d[k];
      d[k] = t;
      for (let c = 0; c < m; c++) {
        const s = z[i * m + c];
        z[i * m + c] = z[k * m + c];
        z[k * m + c] = s;
      }
    }
  }
  return { m, values: d, vectors: z };
}

/**
 * Householder reduction to tridiagonal form (Golub & Van Loan 2013, Matrix
 * Computations, 4th ed., Algorithm 8.3.1): step k reflects column k below the
 * diagonal onto its first entry, with p = τ·A₂₂v, w = p − (τ/2)(pᵀv)v and the
 * two-sided update A₂₂ ← A₂₂ − vwᵀ − wvᵀ, both on the upper triangle only,
 * row by row (contiguous memory). The reflectors are then accumulated backwards
 * into Q (§5.1.6), returned row-major. On return d is the diagonal and e[i] the entry (i, i−1)
 * of the tridiagonal T = QᵀAQ (e[0] = 0).
 */
export function tridiagonalize(
  a: Float64Array,
  d: Float64Array,
  e: Float64Array,
  n: number,
): Float64Array {
  const { reflectors, tau } = reduceTridiagonal(a, d, e, n);
  return accumulateReflectors(reflectors, tau, n);
}

/** Householder reflectors of a reduction: row k of `reflectors` is v_k (indices k+1..), with τ_k. */
export interface Reflectors {
  reflectors: Float64Array;
  tau: Float64Array;
}

/** The reduction of `tridiagonalize` without forming Q (a is overwritten). Cost about m³ multiply-adds. */
export function reduceTridiagonal(
  a: Float64Array,
  d: Float64Array,
  e: Float64Array,
  n: number,
): Reflectors {
  const reflectors = new Float64Array(n * n); // row k: v of step k on indices k+1..n-1
  const tau = new Float64Array(n);
  const p = new Float64Array(n);
  e[0] = 0;
  for (let k = 0; k < n - 2; k++) {
    const rowK = k * n;
    d[k] = a[rowK + k];
    // x = A[k+1.., k] = A[k, k+1..] (symmetric, contiguous).
    const alpha = a[rowK + k + 1];
    let xnorm2 = 0;
    for (let i = k + 2; i < n; i++) xnorm2 += a[rowK + i] * a[rowK + i];
    const vOff = k * n;
    if (xnorm2 === 0) {
      e[k + 1] = alpha;
      tau[k] = 0;
      continue;
    }
    // LAPACK dlarfg convention: H x = β e₁ with β = −sign(α)‖x‖, v₀ = 1.
    const norm = Math.sqrt(alpha * alpha + xnorm2);
    const beta = alpha >= 0 ? -norm : norm;
    const t = (beta - alpha) / beta;
    const scale = 1 / (alpha - beta);
    reflectors[vOff + k + 1] = 1;
    for (let i = k + 2; i < n; i++) reflectors[vOff + i] = a[rowK + i] * scale;
    tau[k] = t;
    e[k + 1] = beta;
    // p = τ A₂₂ v from the upper triangle alone: one pass over each row adds
    // A_ij v_j to p_i and A_ij v_i to p_j (j > i).
    p.fill(0, k + 1, n);
    for (let i = k + 1; i < n; i++) {
      const row = i * n;
      p[i] += a[row + i] * reflectors[vOff + i] + symmetricRow(a, row, reflectors, vOff, i, n, p);
    }
    let pv = 0;
    for (let i = k + 1; i < n; i++) {
      p[i] *= t;
      pv += p[i] * reflectors[vOff + i];
    }
    // w = p − (τ/2)(pᵀv) v, stored in p.
    const half = 0.5 * t * pv;
    for (let i = k + 1; i < n; i++) p[i] -= half * reflectors[vOff + i];
    // A₂₂ ← A₂₂ − v wᵀ − w vᵀ on the upper triangle.
    for (let i = k + 1; i < n; i++)
      rank2Row(a, i * n, reflectors[vOff + i], p, p[i], reflectors, vOff, i, n);
  }
  if (n >= 2) {
    d[n - 2] = a[(n - 2) * n + n - 2];
    e[n - 1] = a[(n - 2) * n + n - 1];
  }
  d[n - 1] = a[(n - 1) * n + n - 1];
  return { reflectors, tau };
}

/** Reflectors applied together in the accumulation of Q. */
const BLOCK = 32;

/**
 * Q = H₀H₁⋯H_{m−3} by backward accumulation (Golub & Van Loan 2013, §5.1.6)
 * in blocks of BLOCK reflectors: the product of a block is I − V𝒯Vᵀ with 𝒯
 * upper triangular (the compact WY form, §5.1.7; Schreiber & Van Loan 1989,
 * SIAM J. Sci. Stat. Comput. 10:53–57), so each block updates Q by two
 * matrix products. Cost about 2m³/3 multiply-adds.
 */
export function accumulateReflectors(
  reflectors: Float64Array,
  tau: Float64Array,
  n: number,
): Float64Array {
  const q = new Float64Array(n * n);
  for (let i = 0; i < n; i++) q[i * n + i] = 1;
  const count = Math.max(0, n - 2);
  const t = new Float64Array(BLOCK * BLOCK);
  const y = new Float64Array(BLOCK);
  for (let end = count; end > 0; end -= BLOCK) {
    const k0 = Math.max(0, end - BLOCK);
    const nb = end - k0;
    const rows = n - k0 - 1; // the block acts on indices k0 + 1 … n − 1
    const vOffset = k0 * n + k0 + 1; // Vᵀ: row j = v_{k0+j} from index k0 + 1
    // 𝒯 column by column: 𝒯_jj = τ_j, 𝒯[0:j, j] = −τ_j 𝒯[0:j, 0:j] (V[:, 0:j]ᵀ v_j).
    t.fill(0);
    for (let j = 0; j < nb; j++) {
      const tj = tau[k0 + j];
      t[j * BLOCK + j] = tj;
      if (tj === 0) continue;
      for (let i = 0; i < j; i++)
        y[i] = dotRange(reflectors, (k0 + i) * n, reflectors, (k0 + j) * n, k0 + j + 1, n);
      for (let i = 0; i < j; i++) {
        let sum = 0;
        for (let l = i; l < j; l++) sum += t[i * BLOCK + l] * y[l];
        t[i * BLOCK + j] = -tj * sum;
      }
    }
    // Q₂₂ ← Q₂₂ − V (𝒯 (Vᵀ Q₂₂)).
    const qOffset = (k0 + 1) * n + k0 + 1;
    const vq = new Float64Array(nb * rows);
    gemm(nb, rows, rows, rowMajor(reflectors, n, vOffset), rowMajor(q, n, qOffset), vq, rows);
    const tvq = new Float64Array(nb * rows);
    gemm(nb, rows, nb, rowMajor(t, BLOCK), rowMajor(vq, rows), tvq, rows);
    for (let x = 0; x < tvq.length; x++) tvq[x] = -tvq[x];
    gemm(rows, rows, nb, transposed(reflectors, n, vOffset), rowMajor(tvq, rows), q, n, {
      accumulate: true,
      cOffset: qOffset,
    });
  }
  return q;
}

/**
 * x ← Qᵀx (`transpose`) or x ← Qx for Q = H₀H₁⋯H_{m−3} given by its
 * reflectors, H_k = I − τ_k v_k v_kᵀ. Cost about m² multiply-adds.
 */
export function applyReflectors(
  { reflectors, tau }: Reflectors,
  n: number,
  x: Float64Array,
  transpose: boolean,
): void {
  for (let step = 0; step < n - 2; step++) {
    const k = transpose ? step : n - 3 - step;
    const t = tau[k];
    if (t === 0) continue;
    const f = t * dotRange(reflectors, k * n, x, 0, k + 1, n);
    axpyRow(x, 0, -f, reflectors, k * n, k + 1, n);
  }
}

/** Σ_{j∈[from,to)} x[xo + j]·y[yo + j]. */
function dotRange(
  x: Float64Array,
  xo: number,
  y: Float64Array,
  yo: number,
  from: number,
  to: number,
) {
  let s0 = 0;
  let s1 = 0;
  let j = from;
  for (; j + 1 < to; j += 2) {
    s0 += x[xo + j] * y[yo + j];
    s1 += x[xo + j + 1] * y[yo + j + 1];
  }
  if (j < to) s0 += x[xo + j] * y[yo + j];
  return s0 + s1;
}

/**
 * For row i of the upper triangle (j from i + 1): returns Σ_j a_ij v_j and
 * adds a_ij v_i to p_j.
 */
function symmetricRow(
  a: Float64Array,
  row: number,
  v: Float64Array,
  vo: number,
  i: number,
  n: number,
  p: Float64Array,
): number {
  const vi = v[vo + i];
  let s = 0;
  for (let j = i + 1; j < n; j++) {
    const aij = a[row + j];
    s += aij * v[vo + j];
    p[j] += aij * vi;
  }
  return s;
}

/** a[ao + j] −= vi·w[j] + wi·v[vo + j] for j in [from, to): one row of A − vwᵀ − wvᵀ. */
function rank2Row(
  a: Float64Array,
  ao: number,
  vi: number,
  w: Float64Array,
  wi: number,
  v: Float64Array,
  vo: number,
  from: number,
  to: number,
) {
  for (let j = from; j < to; j++) a[ao + j] -= vi * w[j] + wi * v[vo + j];
}

/** y[yo + j] += alpha·x[xo + j] for j in [from, to). */
function axpyRow(
  y: Float64Array,
  yo: number,
  alpha: number,
  x: Float64Array,
  xo: number,
  from: number,
  to: number,
) {
  for (let j = from; j < to; j++) y[yo + j] += alpha * x[xo + j];
}

/** tql2: implicit QL with Wilkinson-type shifts on the tridiagonal (d, e); z holds vectors as rows. */
function implicitQl(z: Float64Array, d: Float64Array, e: Float64Array, n: number): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i];
  e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  const eps = 2 ** -52;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]) <= eps * tst1) break;
      m++;
    }
    if (m > l) {
      let iterations = 0;
      do {
        if (++iterations > 60)
          throw new StatsError("symmetricEigen did not converge (implicit QL iteration)");
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = Math.hypot(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f += h;
        p = d[m];
        let c = 1;
        let c2 = c;
        let c3 = c;
        const el1 = e[l + 1];
        let s = 0;
        let s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = Math.hypot(p, e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
          const row0 = i * n;
          const row1 = (i + 1) * n;
          for (let k = 0; k < n; k++) {
            const zh = z[row1 + k];
            const zi = z[row0 + k];
            z[row1 + k] = s * zi + c * zh;
            z[row0 + k] = c * zi - s * zh;
          }
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]) > eps * tst1);
    }
    d[l] += f;
    e[l] = 0;
  }
}
