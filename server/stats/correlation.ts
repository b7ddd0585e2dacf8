/**
 * Pearson's product-moment correlation with its t test and Fisher-z interval
 * (Fisher 1921; Zar 2010, §19.2–19.5), and the shared helpers for
 * correlation p-values and Fisher-z intervals.
 */
import { mean } from "./descriptive";
import { normalQuantile, studentTTwoSidedP } from "./distributions";
import { require } from "./errors";

export interface CorrelationResult {
  n: number;
  r: number;
  /** t = r√(df/(1 − r²)); null when |r| = 1. */
  t: number | null;
  df: number;
  p: number;
  /** Interval for the correlation; null when too few participants for it. */
  ciLow: number | null;
  ciHigh: number | null;
}

/**
 * Two-sided p-value of H0: ρ = 0 from r on df degrees of freedom,
 * P(|T_df| ≥ |t|) = I_{1−r²}(df/2, 1/2). Cost O(1).
 */
export function correlationP(r: number, df: number): number {
  if (Math.abs(r) >= 1) return 0;
  return studentTTwoSidedP(r * Math.sqrt(df / (1 - r * r)), df);
}

/** t statistic of a correlation, null when |r| = 1. */
export function correlationT(r: number, df: number): number | null {
  if (Math.abs(r) >= 1) return null;
  return r * Math.sqrt(df / (1 - r * r));
}

/**
 * Fisher-z interval tanh(atanh(r) ± z_{1−α/2}·√(scale/(n − 3 − k))) for a
 * correlation partialling out k variables (Fisher 1924). `scale` is 1 for
 * Pearson; callers may pass another variance (Spearman 1.06/(n − 3), Kendall
 * 0.437/(n − 4), Fieller, Hartley & Pearson 1957).
 * Returns nulls when n − 3 − k ≤ 0.
 */
export function fisherInterval(
  r: number,
  n: number,
  options: { k?: number; level?: number; variance?: number } = {},
): { low: number | null; high: number | null } {
  const { k = 0, level = 0.95 } = options;
  const m = n - 3 - k;
  const variance = options.variance ?? (m > 0 ? 1 / m : Number.NaN);
  if (!(m > 0) || !(variance > 0)) return { low: null, high: null };
  if (Math.abs(r) >= 1) return { low: r, high: r };
  const z = Math.atanh(r);
  const half = normalQuantile(0.5 + level / 2) * Math.sqrt(variance);
  return { low: Math.tanh(z - half), high: Math.tanh(z + half) };
}

/** Pearson r of two equal-length arrays (no checks). Returns 0/0 as null. */
export function pearsonR(x: ArrayLike<number>, y: ArrayLike<number>): number | null {
  const n = x.length;
  const mx = mean(x);
  const my = mean(y);
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  if (!(sxx > 0 && syy > 0)) return null;
  const r = sxy / Math.sqrt(sxx * syy);
  return r > 1 ? 1 : r < -1 ? -1 : r;
}

/**
 * Pearson correlation, t test on n − 2 df and Fisher-z interval with
 * variance 1/(n − 3). Cost O(n). Throws StatsError for fewer than three pairs,
 * unequal lengths, non-finite values or a constant variable.
 */
export function pearsonCorrelation(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  options: { level?: number } = {},
): CorrelationResult {
  const { level = 0.95 } = options;
  require(x.length === y.length, "pearsonCorrelation requires two variables of equal length");
  const n = x.length;
  require(n >= 3, "pearsonCorrelation requires at least three pairs");
  for (let i = 0; i < n; i++)
    require(Number.isFinite(x[i]) &&
      Number.isFinite(y[i]), "pearsonCorrelation requires finite values");
  const r = pearsonR(x, y);
  require(r !== null, "pearsonCorrelation requires variables that are not constant");
  const df = n - 2;
  const ci = fisherInterval(r, n, { level });
  return {
    n,
    r,
    t: correlationT(r, df),
    df,
    p: correlationP(r, df),
    ciLow: ci.low,
    ciHigh: ci.high,
  };
}
