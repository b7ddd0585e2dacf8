/**
 * Two robust correlations (Wilcox 2012, "Introduction to Robust Estimation
 * and Hypothesis Testing", 3rd ed., ch. 9; Pernet, Wilcox & Rousselet 2013,
 * Front. Psychol. 3:606):
 *
 * Percentage-bend correlation (Wilcox 1994, Psychometrika 59:601–616), β = 0.2:
 * for each variable, W_i = |X_i − M| (M the median), ω̂ = W_(m) with
 * m = ⌊(1 − β)n + 0.5⌋; with i1, i2 the counts of (X_i − M)/ω̂ below −1 and
 * above 1 and S the sum of the remaining values, the bend location is
 * φ̂ = (ω̂(i2 − i1) + S)/(n − i1 − i2); A_i = Ψ((X_i − φ̂)/ω̂), Ψ(u) =
 * max(−1, min(1, u)); likewise B_i for Y; r_pb = ΣAB/√(ΣA²ΣB²), tested by
 * T = r_pb√((n − 2)/(1 − r_pb²)) on n − 2 df.
 *
 * Skipped correlation (Wilcox 2004, J. Appl. Stat. 31:131–143): outliers in
 * the bivariate cloud are found with the projection method (Wilcox 2012,
 * §6.4.9): each variable is standardised by its median and normalised MAD
 * (1.4826·MAD; the sample SD when the MAD is 0), the centre is the vector of
 * marginal medians, and for every point P_i ≠ centre all points are projected
 * onto the line through the centre and P_i; a point is an outlier when, for
 * any such line, its projected distance exceeds
 * median(d) + √χ²_{0.975,2}·(q_u − q_l), q_l, q_u the ideal fourths of the
 * distances (boxplot rule on the ideal fourths, not the MAD-median rule).
 * Pearson's r is computed on the remaining points. Two tests are reported:
 * Student's t on the kept points (n_kept − 2 df), which ignores the removal
 * and is liberal, and Wilcox's adjusted test at α = 0.05, which compares
 * T = |r|√((n − 2)/(1 − r²)) (n all points) with 6.947/n + 2.3197
 * (Wilcox 2012, §9.4.3). Permutation or bootstrap inference is preferable.
 */
import { type Numbers, median, sampleSd, selectInPlace } from "./descriptive";
import { chiSquareQuantile } from "./distributions";
import { correlationP, correlationT, fisherInterval, pearsonR } from "./correlation";
import { StatsError, require } from "./errors";

export interface PercentageBendResult {
  n: number;
  r: number;
  t: number | null;
  df: number;
  p: number;
}

function bendScores(x: Numbers, beta: number, name: string): Float64Array {
  const n = x.length;
  const m = median(x);
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) w[i] = Math.abs(x[i] - m);
  w.sort();
  const k = Math.floor((1 - beta) * n + 0.5);
  const omega = w[Math.min(Math.max(k, 1), n) - 1];
  if (!(omega > 0))
    throw new StatsError(
      `percentageBendCorrelation requires ${name} to vary within its central ${Math.round((1 - beta) * 100)}%`,
    );
  let i1 = 0;
  let i2 = 0;
  let s = 0;
  for (let i = 0; i < n; i++) {
    const u = (x[i] - m) / omega;
    if (u < -1) i1++;
    else if (u > 1) i2++;
    else s += x[i];
  }
  const phi = (omega * (i2 - i1) + s) / (n - i1 - i2);
  const a = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = (x[i] - phi) / omega;
    a[i] = u < -1 ? -1 : u > 1 ? 1 : u;
  }
  return a;
}

/**
 * Percentage-bend correlation with its t test. Cost O(n log n).
 * Throws StatsError for fewer than four pairs, unequal lengths, non-finite
 * values, 0 ≤ β < 0.5 violated, or a variable constant in its central part.
 */
export function percentageBendCorrelation(
  x: Numbers,
  y: Numbers,
  options: { beta?: number } = {},
): PercentageBendResult {
  const { beta = 0.2 } = options;
  require(x.length ===
    y.length, "percentageBendCorrelation requires two variables of equal length");
  const n = x.length;
  require(n >= 4, "percentageBendCorrelation requires at least four pairs");
  require(beta >= 0 && beta < 0.5, "percentageBendCorrelation requires 0 ≤ beta < 0.5");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]) &&
      Number.isFinite(y[i]), "percentageBendCorrelation requires finite values");
  const a = bendScores(x, beta, "the first variable");
  const b = bendScores(y, beta, "the second variable");
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let i = 0; i < n; i++) {
    sab += a[i] * b[i];
    saa += a[i] * a[i];
    sbb += b[i] * b[i];
  }
  require(saa > 0 && sbb > 0, "percentageBendCorrelation requires variables that are not constant");
  let r = sab / Math.sqrt(saa * sbb);
  r = Math.max(-1, Math.min(1, r));
  const df = n - 2;
  return { n, r, t: correlationT(r, df), df, p: correlationP(r, df) };
}

export interface SkippedCorrelationResult {
  n: number;
  /** Participants kept after removing projection outliers. */
  nKept: number;
  /** Indices (into the input) of the removed points, ascending. */
  outliers: number[];
  r: number;
  /** Student t on the kept points and its two-sided p (liberal; see above). */
  t: number | null;
  df: number;
  p: number;
  ciLow: number | null;
  ciHigh: number | null;
  /** Wilcox's adjusted test at α = 0.05: T on all n points and its critical value. */
  adjustedT: number | null;
  adjustedCritical: number;
  significantAt05: boolean;
}

function robustStandardise(x: Numbers, name: string): Float64Array {
  const n = x.length;
  const m = median(x);
  const dev = new Float64Array(n);
  for (let i = 0; i < n; i++) dev[i] = Math.abs(x[i] - m);
  let scale = 1.4826 * median(dev);
  if (!(scale > 0)) scale = sampleSd(x);
  if (!(scale > 0)) throw new StatsError(`skippedCorrelation requires ${name} to vary`);
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) z[i] = (x[i] - m) / scale;
  return z;
}

/**
 * Indices of bivariate outliers by the projection method described above.
 * Cost O(n²) (order statistics by selection).
 */
export function projectionOutliers(x: Numbers, y: Numbers): number[] {
  const n = x.length;
  const zx = robustStandardise(x, "the first variable");
  const zy = robustStandardise(y, "the second variable");
  const cx = median(zx);
  const cy = median(zy);
  const gval = Math.sqrt(chiSquareQuantile(0.975, 2));
  const flagged = new Uint8Array(n);
  const d = new Float64Array(n);
  const scratch = new Float64Array(n);
  const q = n / 4 + 5 / 12;
  const j = Math.floor(q);
  const h = q - j;
  const order = (k1: number) => selectInPlace(scratch, Math.min(Math.max(k1, 1), n) - 1);
  for (let i = 0; i < n; i++) {
    const bx = zx[i] - cx;
    const by = zy[i] - cy;
    const norm = Math.hypot(bx, by);
    if (norm === 0) continue;
    const ux = bx / norm;
    const uy = by / norm;
    for (let k = 0; k < n; k++) d[k] = Math.abs((zx[k] - cx) * ux + (zy[k] - cy) * uy);
    scratch.set(d);
    const half = n >> 1;
    const med = n % 2 === 1 ? order(half + 1) : 0.5 * (order(half) + order(half + 1));
    const lower = (1 - h) * order(j) + h * order(j + 1);
    const upper = (1 - h) * order(n - j + 1) + h * order(n - j);
    const cut = med + gval * (upper - lower);
    for (let k = 0; k < n; k++) if (d[k] > cut) flagged[k] = 1;
  }
  const out: number[] = [];
  for (let k = 0; k < n; k++) if (flagged[k]) out.push(k);
  return out;
}

/**
 * Skipped correlation. Cost O(n²). Throws StatsError for fewer than five
 * pairs, unequal lengths, non-finite values, constant variables, or fewer
 * than three points left after removing outliers.
 */
export function skippedCorrelation(
  x: Numbers,
  y: Numbers,
  options: { level?: number } = {},
): SkippedCorrelationResult {
  const { level = 0.95 } = options;
  require(x.length === y.length, "skippedCorrelation requires two variables of equal length");
  const n = x.length;
  require(n >= 5, "skippedCorrelation requires at least five pairs");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]) &&
      Number.isFinite(y[i]), "skippedCorrelation requires finite values");
  const outliers = projectionOutliers(x, y);
  const removed = new Set(outliers);
  const kx: number[] = [];
  const ky: number[] = [];
  for (let i = 0; i < n; i++) {
    if (!removed.has(i)) {
      kx.push(x[i]);
      ky.push(y[i]);
    }
  }
  const nKept = kx.length;
  require(nKept >= 3, "skippedCorrelation requires at least three points after removing outliers");
  const r = pearsonR(kx, ky);
  require(r !==
    null, "skippedCorrelation requires variables that are not constant after removing outliers");
  const df = nKept - 2;
  const ci = fisherInterval(r, nKept, { level });
  const adjustedT = Math.abs(r) < 1 ? Math.abs(r) * Math.sqrt((n - 2) / (1 - r * r)) : null;
  const adjustedCritical = 6.947 / n + 2.3197;
  return {
    n,
    nKept,
    outliers,
    r,
    t: correlationT(r, df),
    df,
    p: correlationP(r, df),
    ciLow: ci.low,
    ciHigh: ci.high,
    adjustedT,
    adjustedCritical,
    significantAt05: adjustedT === null ? true : adjustedT >= adjustedCritical,
  };
}
