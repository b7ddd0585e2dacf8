/**
 * Standardised mean differences with confidence intervals: Cohen's d (one
 * sample and two independent samples) and Hedges' g.
 *
 * Intervals invert the noncentral t distribution in its noncentrality
 * parameter (Steiger & Fouladi 1997; Cumming & Finch 2001): with observed t on
 * ν df, the limits δ_L, δ_U solve P(T ≤ t | ν, δ_L) = 1 − α/2 and
 * P(T ≤ t | ν, δ_U) = α/2, and are rescaled to d. Hedges' g multiplies d and
 * its limits by the exact small-sample factor
 * J(ν) = Γ(ν/2) / (√(ν/2) Γ((ν−1)/2)) (Hedges 1981).
 */
import { mean, sampleVariance } from "./descriptive";
import { logGamma, noncentralTCdf } from "./distributions";
import { StatsError, require } from "./errors";
import { brentRoot } from "./roots";

export interface EffectSize {
  value: number;
  ciLow: number;
  ciHigh: number;
}

/**
 * Confidence interval for the noncentrality δ of a noncentral t with ν = df,
 * given the observed t. Cost: about 20–40 noncentral t evaluations per limit.
 * Throws StatsError for a non-finite t or df ≤ 0.
 */
export function noncentralityInterval(
  t: number,
  df: number,
  level = 0.95,
): { low: number; high: number } {
  require(Number.isFinite(t), "noncentralityInterval requires a finite t");
  require(df > 0, "noncentralityInterval requires positive degrees of freedom");
  require(level > 0 && level < 1, "noncentralityInterval requires 0 < level < 1");
  const solve = (target: number): number => {
    const g = (delta: number) => noncentralTCdf(t, df, delta) - target;
    // g decreases in δ; bracket the root by stepping out from t.
    let step = Math.max(1, Math.abs(t) * 0.25);
    let lo = t;
    let hi = t;
    let k = 0;
    while (g(lo) <= 0) {
      lo -= step;
      step *= 2;
      if (++k > 80) throw new StatsError("noncentralityInterval could not bracket the lower limit");
    }
    step = Math.max(1, Math.abs(t) * 0.25);
    k = 0;
    while (g(hi) >= 0) {
      hi += step;
      step *= 2;
      if (++k > 80) throw new StatsError("noncentralityInterval could not bracket the upper limit");
    }
    return brentRoot(g, lo, hi, 1e-9);
  };
  return { low: solve(0.5 + level / 2), high: solve(0.5 - level / 2) };
}

/** Hedges' exact bias-correction factor J(ν) = Γ(ν/2)/(√(ν/2)·Γ((ν−1)/2)). Requires ν > 1. Cost O(1). */
export function hedgesCorrection(df: number): number {
  require(df > 1, "hedgesCorrection requires more than one degree of freedom");
  return Math.exp(logGamma(df / 2) - 0.5 * Math.log(df / 2) - logGamma((df - 1) / 2));
}

/**
 * One-sample Cohen's d = (x̄ − mu)/s with the noncentral-t interval
 * (t = d√n, ν = n − 1). Cost O(n) plus the interval inversion.
 * Throws StatsError for fewer than two values or zero variance.
 */
export function cohensDOneSample(
  x: ArrayLike<number>,
  options: { mu?: number; level?: number } = {},
): EffectSize {
  const { mu = 0, level = 0.95 } = options;
  require(x.length >= 2, "cohensDOneSample requires at least two values");
  const n = x.length;
  const sd = Math.sqrt(sampleVariance(x));
  require(sd > 0, "cohensDOneSample requires values that are not all equal");
  const d = (mean(x) - mu) / sd;
  const { low, high } = noncentralityInterval(d * Math.sqrt(n), n - 1, level);
  return { value: d, ciLow: low / Math.sqrt(n), ciHigh: high / Math.sqrt(n) };
}

/**
 * Two-sample Cohen's d = (x̄1 − x̄2)/s_pooled with the noncentral-t interval
 * (t = d·√(n1n2/(n1+n2)), ν = n1 + n2 − 2), and Hedges' g = J(ν)·d with its
 * interval J(ν)·[d_L, d_U]. Cost O(n1 + n2) plus the interval inversion.
 * Throws StatsError for fewer than two values per group or zero pooled variance.
 */
export function standardizedMeanDifference(
  x1: ArrayLike<number>,
  x2: ArrayLike<number>,
  options: { level?: number } = {},
): { d: EffectSize; g: EffectSize } {
  const { level = 0.95 } = options;
  require(x1.length >= 2 &&
    x2.length >= 2, "standardizedMeanDifference requires at least two values per group");
  const n1 = x1.length;
  const n2 = x2.length;
  const df = n1 + n2 - 2;
  const sp = Math.sqrt(((n1 - 1) * sampleVariance(x1) + (n2 - 1) * sampleVariance(x2)) / df);
  require(sp > 0, "standardizedMeanDifference requires values that are not all equal");
  const d = (mean(x1) - mean(x2)) / sp;
  return fromT(d, Math.sqrt((n1 * n2) / (n1 + n2)), df, level);
}

/**
 * d and g from a standardised difference whose t statistic is d·scale on df
 * degrees of freedom (used for covariate-adjusted differences too).
 */
export function effectSizesFromT(
  d: number,
  scale: number,
  df: number,
  level = 0.95,
): { d: EffectSize; g: EffectSize } {
  require(scale > 0 &&
    df > 1, "effectSizesFromT requires a positive scale and more than one degree of freedom");
  return fromT(d, scale, df, level);
}

function fromT(
  d: number,
  scale: number,
  df: number,
  level: number,
): { d: EffectSize; g: EffectSize } {
  const { low, high } = noncentralityInterval(d * scale, df, level);
  const j = hedgesCorrection(df);
  const dCi = { value: d, ciLow: low / scale, ciHigh: high / scale };
  return { d: dCi, g: { value: j * d, ciLow: j * dCi.ciLow, ciHigh: j * dCi.ciHigh } };
}
