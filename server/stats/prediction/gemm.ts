/**
 * Dense matrix product C = A·B (or C += A·B) over Float64Array, cache-blocked
 * and register-blocked: A and B are copied ("packed") block by block into
 * contiguous panels of 4 rows (A) and 4 columns (B), and a 4×4 micro-kernel
 * keeps 16 sums in locals while it walks the shared dimension (the layered
 * blocking of Goto & van de Geijn 2008, ACM TOMS 34:12, "Anatomy of
 * high-performance matrix multiplication"; Golub & Van Loan 2013, Matrix
 * Computations, 4th ed., §1.5). Strides let either operand be read
 * transposed without copying it first, so XᵀX, X·V and Mᵀ·Y are all one call.
 *
 * Cost m·n·k multiply-adds, plus O(m·k + k·n) for packing.
 */

/** A strided view of a matrix: element (i, j) is data[offset + i·rowStride + j·colStride]. */
export interface MatrixView {
  data: Float64Array;
  offset?: number;
  rowStride: number;
  colStride: number;
}

/** Row-major view of an r×c matrix stored from `offset`. */
export function rowMajor(data: Float64Array, cols: number, offset = 0): MatrixView {
  return { data, offset, rowStride: cols, colStride: 1 };
}

/** The transpose of a row-major matrix with `cols` columns, viewed without copying. */
export function transposed(data: Float64Array, cols: number, offset = 0): MatrixView {
  return { data, offset, rowStride: 1, colStride: cols };
}

const KC = 256;
const MC = 64;
const NC = 256;

/** Packing buffers, reused by every call (one thread runs one product at a time). */
const packA = new Float64Array(MC * KC);
const packB = new Float64Array(KC * NC);
const edge = new Float64Array(16);

/**
 * C (m×n, row-major with row stride `ldc`, from `cOffset`) = A (m×k) · B (k×n),
 * or C += A·B with `accumulate`. A and B are strided views; C must not alias them.
 * With `upper` (a square product known to be symmetric, such as XᵀX), only the
 * 4×4 tiles touching the upper triangle are computed (about half the work);
 * the entries strictly below the diagonal are then left partly unset.
 */
export function gemm(
  m: number,
  n: number,
  k: number,
  a: MatrixView,
  b: MatrixView,
  c: Float64Array,
  ldc: number,
  options: { accumulate?: boolean; cOffset?: number; upper?: boolean } = {},
): void {
  const upper = options.upper === true;
  const cOffset = options.cOffset ?? 0;
  if (!options.accumulate)
    for (let i = 0; i < m; i++) c.fill(0, cOffset + i * ldc, cOffset + i * ldc + n);
  if (m === 0 || n === 0 || k === 0) return;
  for (let jc = 0; jc < n; jc += NC) {
    const nc = Math.min(NC, n - jc);
    const ncPad = (nc + 3) & ~3;
    for (let pc = 0; pc < k; pc += KC) {
      const kc = Math.min(KC, k - pc);
      packPanelB(b, pc, jc, kc, nc, ncPad);
      for (let ic = 0; ic < m; ic += MC) {
        if (upper && ic > jc + nc - 1) break;
        const mc = Math.min(MC, m - ic);
        const mcPad = (mc + 3) & ~3;
        packPanelA(a, ic, pc, mc, kc, mcPad);
        for (let jr = 0; jr < ncPad; jr += 4) {
          const nr = Math.min(4, nc - jr);
          for (let ir = 0; ir < mcPad; ir += 4) {
            if (upper && ic + ir > jc + jr + 3) break;
            const mr = Math.min(4, mc - ir);
            const cBase = cOffset + (ic + ir) * ldc + jc + jr;
            if (mr === 4 && nr === 4) kernel4x4(kc, ir * kc, jr * kc, c, cBase, ldc);
            else {
              edge.fill(0);
              kernel4x4(kc, ir * kc, jr * kc, edge, 0, 4);
              for (let i = 0; i < mr; i++)
                for (let j = 0; j < nr; j++) c[cBase + i * ldc + j] += edge[i * 4 + j];
            }
          }
        }
      }
    }
  }
}

/** Packs A[ic..ic+mc, pc..pc+kc] as panels of 4 rows: panel q holds (row, l) at q·4·kc + l·4 + row. */
function packPanelA(a: MatrixView, ic: number, pc: number, mc: number, kc: number, mcPad: number) {
  const { data, rowStride, colStride } = a;
  const offset = a.offset ?? 0;
  const out = packA;
  for (let ir = 0; ir < mcPad; ir += 4) {
    const base = ir * kc;
    for (let r = 0; r < 4; r++) {
      const i = ir + r;
      if (i < mc) {
        let src = offset + (ic + i) * rowStride + pc * colStride;
        for (let l = 0; l < kc; l++, src += colStride) out[base + l * 4 + r] = data[src];
      } else for (let l = 0; l < kc; l++) out[base + l * 4 + r] = 0;
    }
  }
}

/** Packs B[pc..pc+kc, jc..jc+nc] as panels of 4 columns: panel q holds (l, col) at q·4·kc + l·4 + col. */
function packPanelB(b: MatrixView, pc: number, jc: number, kc: number, nc: number, ncPad: number) {
  const { data, rowStride, colStride } = b;
  const offset = b.offset ?? 0;
  const out = packB;
  for (let jr = 0; jr < ncPad; jr += 4) {
    const base = jr * kc;
    for (let l = 0; l < kc; l++) {
      const src = offset + (pc + l) * rowStride + jc * colStride;
      for (let col = 0; col < 4; col++) {
        const j = jr + col;
        out[base + l * 4 + col] = j < nc ? data[src + j * colStride] : 0;
      }
    }
  }
}

/** C[0..4, 0..4] (row stride ldc, from cBase) += packed A panel · packed B panel over kc. */
function kernel4x4(
  kc: number,
  aBase: number,
  bBase: number,
  c: Float64Array,
  cBase: number,
  ldc: number,
): void {
  const pa = packA;
  const pb = packB;
  let c00 = 0;
  let c01 = 0;
  let c02 = 0;
  let c03 = 0;
  let c10 = 0;
  let c11 = 0;
  let c12 = 0;
  let c13 = 0;
  let c20 = 0;
  let c21 = 0;
  let c22 = 0;
  let c23 = 0;
  let c30 = 0;
  let c31 = 0;
  let c32 = 0;
  let c33 = 0;
  let ia = aBase;
  let ib = bBase;
  for (let l = 0; l < kc; l++, ia += 4, ib += 4) {
    const a0 = pa[ia];
    const a1 = pa[ia + 1];
    const a2 = pa[ia + 2];
    const a3 = pa[ia + 3];
    const b0 = pb[ib];
    const b1 = pb[ib + 1];
    const b2 = pb[ib + 2];
    const b3 = pb[ib + 3];
    c00 += a0 * b0;
    c01 += a0 * b1;
    c02 += a0 * b2;
    c03 += a0 * b3;
    c10 += a1 * b0;
    c11 += a1 * b1;
    c12 += a1 * b2;
    c13 += a1 * b3;
    c20 += a2 * b0;
    c21 += a2 * b1;
    c22 += a2 * b2;
    c23 += a2 * b3;
    c30 += a3 * b0;
    c31 += a3 * b1;
    c32 += a3 * b2;
    c33 += a3 * b3;
  }
  let o = cBase;
  c[o] += c00;
  c[o + 1] += c01;
  c[o + 2] += c02;
  c[o + 3] += c03;
  o += ldc;
  c[o] += c10;
  c[o + 1] += c11;
  c[o + 2] += c12;
  c[o + 3] += c13;
  o += ldc;
  c[o] += c20;
  c[o + 1] += c21;
  c[o + 2] += c22;
  c[o + 3] += c23;
  o += ldc;
  c[o] += c30;
  c[o + 1] += c31;
  c[o + 2] += c32;
  c[o + 3] += c33;
}
