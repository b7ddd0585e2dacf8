/**
 * Per-participant regression diagnostics for an ordinary least-squares fit
 * (Belsley, Kuh & Welsch 1980, "Regression Diagnostics", ch. 2; Cook &
 * Weisberg 1982, "Residuals and Influence in Regression", §2.2–3.5):
 *
 * - leverage h_i, the diagonal of the hat matrix;
 * - internally studentized residual r_i = e_i / (s√(1 − h_i));
 * - externally studentized residual t_i = e_i / (s_(i)√(1 − h_i)) with
 *   s_(i)² = (RSS − e_i²/(1 − h_i)) / (n − p − 1);
 * - Cook's distance D_i = r_i² h_i / (p(1 − h_i));
 * - DFFITS_i = t_i √(h_i/(1 − h_i));
 * - DFBETAS_ij = [(XᵀX)⁻¹x_i]_j e_i/(1 − h_i) / (s_(i)√[(XᵀX)⁻¹]_jj);
 * - Mahalanobis distance (squared) of participant i's predictor values from
 *   their mean, D²_i = (n − 1)(h_i − 1/n), which holds for a design with an
 *   intercept (Belsley, Kuh & Welsch 1980, eq. 2.15);
 * - variance inflation factor per column, VIF_j = 1/(1 − R_j²) =
 *   [(XᵀX)⁻¹]_jj · Σ(x_ij − x̄_j)² (Marquardt 1970).
 *
 * A participant with leverage 1 (for example the only member of a category
 * level) is reported with leverage 1 and null studentized residuals, Cook's
 * distance, DFFITS and DFBETAS: these are undefined there, and no NaN or
 * Infinity is ever returned.
 *
 * Flags:
 * - outlier: Bonferroni outlier test, |t_i| > t_{1 − 0.05/(2n), n − p − 1}
 *   (Cook & Weisberg 1982, §2.2.2; Weisberg 2005, "Applied Linear
 *   Regression", §9.4.2);
 * - leverage: h_i > 2p/n (Hoaglin & Welsch 1978, Am. Stat. 32:17–22), or h_i = 1;
 * - influence: D_i > 4/n (Bollen & Jackman 1990, in "Modern Methods of Data
 *   Analysis", p. 266).
 */
import type { Flag } from "../../contract/spec";
import { studentTQuantile } from "./distributions";
import type { LinearModelFit, QrDecomposition } from "./linear-model";

/** Leverage within this distance of 1 counts as 1. */
export const LEVERAGE_ONE_TOLERANCE = 1e-8;

/** A variance inflation factor per non-intercept column (null when the design has no intercept or only one other column). */
export interface ColumnVif {
  column: string;
  value: number | null;
}

/** The cut-offs of the three flags. */
export interface FlagThresholds {
  outlierT: number | null;
  leverage: number;
  cooksDistance: number;
}

const finiteOrNaN = (v: number): number => (Number.isFinite(v) ? v : Number.NaN);
const finiteOrNull = (v: number): number | null => (Number.isFinite(v) ? v : null);

/**
 * The cut-offs of the three flags for n participants and p design columns
 * (the rule in this module's header): the Bonferroni critical value of the
 * externally studentized residual t_{1 − α/(2n), n − p − 1} (null when
 * n − p − 1 < 1), the leverage cut 2p/n and the Cook's distance cut 4/n.
 * The plots draw these same values. Cost O(1).
 */
export function flagThresholds(n: number, p: number, alpha = 0.05): FlagThresholds {
  const df = n - p;
  return {
    outlierT: df - 1 > 0 ? studentTQuantile(1 - alpha / (2 * n), df - 1) : null,
    leverage: (2 * p) / n,
    cooksDistance: 4 / n,
  };
}

/** The flags in the order a row lists them. */
export const FLAGS: readonly Flag[] = ["outlier", "leverage", "influence"];

/** A flag's bit in `DiagnosticColumns.flags`. */
export const FLAG_BIT: Readonly<Record<Flag, number>> = { outlier: 1, leverage: 2, influence: 4 };

/**
 * The diagnostics of every row as columns (no object per row): NaN stands
 * for null (a value undefined there: see this module's header).
 */
export interface DiagnosticColumns {
  n: number;
  p: number;
  leverage: Float64Array;
  internalStudentized: Float64Array;
  externalStudentized: Float64Array;
  cooksDistance: Float64Array;
  dffits: Float64Array;
  /** n × p, row-major; row i is meaningful only where `hasDfbetas[i]` is 1 */
  dfbetas: Float64Array;
  hasDfbetas: Uint8Array;
  /** null when the design has no intercept or only one column (every row's value null) */
  mahalanobis: Float64Array | null;
  /** per row, the OR of the `FLAG_BIT`s of its flags */
  flags: Uint8Array;
  vif: ColumnVif[];
  thresholds: FlagThresholds;
}

/** A row's flags from its bits, in the order of `FLAGS`. */
export function flagsOf(bits: number): Flag[] {
  const flags: Flag[] = [];
  for (const flag of FLAGS) if (bits & FLAG_BIT[flag]) flags.push(flag);
  return flags;
}

/** A number of a column where NaN stands for null, as a value (null for NaN). */
export const nullIfNaN = (v: number): number | null => (Number.isNaN(v) ? null : v);

/**
 * Diagnostics for every row of a fit, as columns. `interceptColumn` is the
 * index of the constant column, or -1 when there is none. Cost O(n·p²).
 */
export function regressionDiagnosticColumns(
  qr: QrDecomposition,
  fit: LinearModelFit,
  options: { interceptColumn: number; alpha?: number },
): DiagnosticColumns {
  const { n, p, hat, q, rInverse } = qr;
  const { interceptColumn, alpha = 0.05 } = options;
  const df = n - p;
  const rss = fit.rss;
  const s = df > 0 ? Math.sqrt(rss / df) : 0;
  const thresholds = flagThresholds(n, p, alpha);
  const { outlierT, leverage: leverageCut, cooksDistance: cookCut } = thresholds;
  // diag of (XᵀX)⁻¹
  const cDiag = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    let acc = 0;
    for (let k = j; k < p; k++) acc += rInverse[j * p + k] * rInverse[j * p + k];
    cDiag[j] = acc;
  }
  const leverage = new Float64Array(n);
  const internalStudentized = new Float64Array(n).fill(Number.NaN);
  const externalStudentized = new Float64Array(n).fill(Number.NaN);
  const cooksDistance = new Float64Array(n).fill(Number.NaN);
  const dffits = new Float64Array(n).fill(Number.NaN);
  const dfbetas = new Float64Array(n * p);
  const hasDfbetas = new Uint8Array(n);
  const withMahalanobis = interceptColumn >= 0 && p > 1;
  const mahalanobis = withMahalanobis ? new Float64Array(n) : null;
  const flags = new Uint8Array(n);
  const qi = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    const h = hat[i];
    const one = h > 1 - LEVERAGE_ONE_TOLERANCE;
    const e = fit.residuals[i];
    let internal = Number.NaN;
    let external = Number.NaN;
    let cook = Number.NaN;
    if (!one && df > 0 && s > 0) {
      const oneMinusH = 1 - h;
      internal = finiteOrNaN(e / (s * Math.sqrt(oneMinusH)));
      if (!Number.isNaN(internal)) cook = finiteOrNaN((internal * internal * h) / (p * oneMinusH));
      if (df - 1 > 0) {
        const sDel2 = (rss - (e * e) / oneMinusH) / (df - 1);
        if (sDel2 > rss * 1e-14 && sDel2 > 0) {
          const sDel = Math.sqrt(sDel2);
          external = finiteOrNaN(e / (sDel * Math.sqrt(oneMinusH)));
          if (!Number.isNaN(external)) dffits[i] = finiteOrNaN(external * Math.sqrt(h / oneMinusH));
          // (XᵀX)⁻¹x_i = R⁻¹ q_i, q_i the i-th row of thin Q
          for (let j = 0; j < p; j++) qi[j] = q[j * n + i];
          hasDfbetas[i] = 1;
          for (let j = 0; j < p; j++) {
            let acc = 0;
            for (let k = j; k < p; k++) acc += rInverse[j * p + k] * qi[k];
            dfbetas[i * p + j] = finiteOrNaN((acc * e) / oneMinusH / (sDel * Math.sqrt(cDiag[j])));
          }
        }
      }
    }
    internalStudentized[i] = internal;
    externalStudentized[i] = external;
    cooksDistance[i] = cook;
    let bits = 0;
    if (outlierT !== null && !Number.isNaN(external) && Math.abs(external) > outlierT)
      bits |= FLAG_BIT.outlier;
    if (one || h > leverageCut) bits |= FLAG_BIT.leverage;
    if (!Number.isNaN(cook) && cook > cookCut) bits |= FLAG_BIT.influence;
    flags[i] = bits;
    leverage[i] = one ? 1 : h;
    if (mahalanobis) mahalanobis[i] = Math.max(0, (n - 1) * ((one ? 1 : h) - 1 / n));
  }
  return {
    n,
    p,
    leverage,
    internalStudentized,
    externalStudentized,
    cooksDistance,
    dffits,
    dfbetas,
    hasDfbetas,
    mahalanobis,
    flags,
    vif: varianceInflation(qr, interceptColumn, cDiag),
    thresholds,
  };
}

function varianceInflation(
  qr: QrDecomposition,
  interceptColumn: number,
  cDiag: Float64Array,
): ColumnVif[] {
  const { n, p, q, r } = qr;
  const out: ColumnVif[] = [];
  for (let j = 0; j < p; j++) {
    if (j === interceptColumn) continue;
    if (interceptColumn < 0 || p < 3) {
      out.push({ column: qr.columnNames[j], value: interceptColumn < 0 ? null : 1 });
      continue;
    }
    // column j of X = Q·R[:, j]; its centred sum of squares
    let sum = 0;
    let sumSq = 0;
    for (let i = 0; i < n; i++) {
      let xij = 0;
      for (let k = 0; k <= j; k++) xij += q[k * n + i] * r[k * p + j];
      sum += xij;
      sumSq += xij * xij;
    }
    const tss = sumSq - (sum * sum) / n;
    out.push({ column: qr.columnNames[j], value: finiteOrNull(cDiag[j] * tss) });
  }
  return out;
}
