/**
 * Descriptive helpers shared by the engine's tests: mean, sample variance,
 * median, order statistics by selection, the ideal fourths and the median
 * absolute deviation. Inputs are read-only; nothing is mutated.
 */
import { StatsError } from "./errors";

export type Numbers = ArrayLike<number>;

/** Arithmetic mean. Cost O(n). Throws StatsError on an empty input. */
export function mean(x: Numbers): number {
  const n = x.length;
  if (n === 0) throw new StatsError("mean requires at least one value");
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i];
  let m = s / n;
  // One correction pass (two-pass mean) keeps the result exact to rounding.
  let c = 0;
  for (let i = 0; i < n; i++) c += x[i] - m;
  m += c / n;
  return m;
}

/** Sample variance with divisor n − 1 (two-pass). Cost O(n). Requires n ≥ 2. */
export function sampleVariance(x: Numbers): number {
  const n = x.length;
  if (n < 2) throw new StatsError("sampleVariance requires at least two values");
  const m = mean(x);
  let ss = 0;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const d = x[i] - m;
    ss += d * d;
    c += d;
  }
  return (ss - (c * c) / n) / (n - 1);
}

/** Sample standard deviation (divisor n − 1). Cost O(n). Requires n ≥ 2. */
export function sampleSd(x: Numbers): number {
  return Math.sqrt(sampleVariance(x));
}

/** Sorted copy as a Float64Array (ascending). Cost O(n log n). */
export function sortedCopy(x: Numbers): Float64Array {
  const s = Float64Array.from(x as ArrayLike<number>);
  s.sort();
  return s;
}

/**
 * Median (mean of the two middle values for even n), by selection on a
 * copy: the same order statistics, so the same value, as sorting. Expected
 * cost O(n). Throws on empty input.
 */
export function median(x: Numbers): number {
  const n = x.length;
  if (n === 0) throw new StatsError("median requires at least one value");
  const s = Float64Array.from(x as ArrayLike<number>);
  const h = n >> 1;
  if (s.some(Number.isNaN)) {
    // Selection needs ordered values; sorting puts NaN last, as before.
    s.sort();
    return n % 2 === 1 ? s[h] : 0.5 * (s[h - 1] + s[h]);
  }
  const upper = selectInPlace(s, h);
  if (n % 2 === 1) return upper;
  // After selecting the h-th value, every value left of it is no larger: the (h−1)-th is their maximum.
  let lower = s[0];
  for (let i = 1; i < h; i++) if (s[i] > lower) lower = s[i];
  return 0.5 * (lower + upper);
}

/**
 * k-th smallest value (k is 0-based) by Hoare's selection (quickselect with
 * median-of-three pivots), working in place on `scratch`, which it reorders.
 * Expected cost O(n).
 */
export function selectInPlace(scratch: Float64Array, k: number): number {
  let lo = 0;
  let hi = scratch.length - 1;
  if (k < 0 || k > hi)
    throw new StatsError(`selectInPlace requires 0 ≤ k < n (got k = ${k}, n = ${scratch.length})`);
  while (hi > lo) {
    const mid = (lo + hi) >> 1;
    // median of three as pivot
    let a = scratch[lo];
    let b = scratch[mid];
    let c = scratch[hi];
    if (a > b) [a, b] = [b, a];
    if (b > c) [b, c] = [c, b];
    if (a > b) [a, b] = [b, a];
    const pivot = b;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (scratch[i] < pivot) i++;
      while (scratch[j] > pivot) j--;
      if (i <= j) {
        const t = scratch[i];
        scratch[i] = scratch[j];
        scratch[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return scratch[k];
  }
  return scratch[k];
}

/**
 * Ideal fourths (Frigge, Hoaglin & Iglewicz 1989; Wilcox 2012 §3.12.5):
 * with j = ⌊n/4 + 5/12⌋ and h = n/4 + 5/12 − j, the lower fourth is
 * (1 − h)·x(j) + h·x(j+1) and the upper fourth (1 − h)·x(n−j+1) + h·x(n−j)
 * (1-based order statistics). Cost O(n log n). Requires n ≥ 2.
 */
export function idealFourths(x: Numbers): { lower: number; upper: number } {
  const n = x.length;
  if (n < 2) throw new StatsError("idealFourths requires at least two values");
  const s = sortedCopy(x);
  const q = n / 4 + 5 / 12;
  const j = Math.floor(q);
  const h = q - j;
  const at = (k: number) => s[Math.min(Math.max(k, 1), n) - 1];
  return {
    lower: (1 - h) * at(j) + h * at(j + 1),
    upper: (1 - h) * at(n - j + 1) + h * at(n - j),
  };
}

/**
 * Median absolute deviation from the median, unscaled (multiply by 1.4826
 * for a consistent estimate of σ under normality). Cost O(n log n).
 */
export function medianAbsoluteDeviation(x: Numbers): number {
  const m = median(x);
  const d = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) d[i] = Math.abs(x[i] - m);
  return median(d);
}
