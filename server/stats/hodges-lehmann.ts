/**
 * Order statistics of pairwise sums without forming all pairs, for the
 * Hodges–Lehmann estimators (Hodges & Lehmann 1963) and their distribution-free
 * confidence intervals (Hollander & Wolfe 1999, §3.3 and §4.3):
 *
 * - Walsh averages (x_i + x_j)/2, i ≤ j: one-sample pseudomedian;
 * - differences x_i − y_j: two-sample shift.
 *
 * The k-th smallest value is found by bisection on the value with an O(n)
 * two-pointer count of pairs at or below it, then snapped to the largest pair
 * value at or below the final bound, so the answer is one of the pairs
 * exactly. Cost O(n log n + 64·n) instead of O(n² log n).
 */
import { require } from "./errors";

function kthBySearch(
  k: number,
  total: number,
  low: number,
  high: number,
  count: (t: number) => number,
  largestAtMost: (t: number) => number,
): number {
  require(k >= 1 && k <= total, "kth pair value requires 1 ≤ k ≤ number of pairs");
  if (count(low) >= k) return low;
  let lo = low; // count(lo) < k
  let hi = high; // count(hi) ≥ k
  for (let iter = 0; iter < 2200; iter++) {
    const mid = lo + (hi - lo) / 2;
    if (mid <= lo || mid >= hi) break;
    if (count(mid) >= k) hi = mid;
    else lo = mid;
  }
  return largestAtMost(hi);
}

/** k-th smallest (1-based) of the Walsh sums s_i + s_j, i ≤ j, for `sorted` ascending. */
export function kthWalshSum(sorted: Float64Array, k: number): number {
  const n = sorted.length;
  const total = (n * (n + 1)) / 2;
  const count = (t: number): number => {
    let c = 0;
    let j = n - 1;
    for (let i = 0; i < n; i++) {
      while (j >= i && sorted[i] + sorted[j] > t) j--;
      if (j < i) break;
      c += j - i + 1;
    }
    return c;
  };
  const largestAtMost = (t: number): number => {
    let best = -Infinity;
    let j = n - 1;
    for (let i = 0; i < n; i++) {
      while (j >= i && sorted[i] + sorted[j] > t) j--;
      if (j < i) break;
      const v = sorted[i] + sorted[j];
      if (v > best) best = v;
    }
    return best;
  };
  return kthBySearch(k, total, 2 * sorted[0], 2 * sorted[n - 1], count, largestAtMost);
}

/** k-th smallest (1-based) of the differences a_i − b_j, for `a`, `b` ascending. */
export function kthDifference(a: Float64Array, b: Float64Array, k: number): number {
  const n1 = a.length;
  const n2 = b.length;
  const total = n1 * n2;
  const count = (t: number): number => {
    // for each a_i, the number of b_j ≥ a_i − t; as a_i grows the bound grows
    let c = 0;
    let j = 0; // first index with b_j ≥ a_i − t
    for (let i = 0; i < n1; i++) {
      while (j < n2 && a[i] - b[j] > t) j++;
      c += n2 - j;
    }
    return c;
  };
  const largestAtMost = (t: number): number => {
    let best = -Infinity;
    let j = 0;
    for (let i = 0; i < n1; i++) {
      while (j < n2 && a[i] - b[j] > t) j++;
      if (j < n2) {
        const v = a[i] - b[j];
        if (v > best) best = v;
      }
    }
    return best;
  };
  return kthBySearch(k, total, a[0] - b[n2 - 1], a[n1 - 1] - b[0], count, largestAtMost);
}

/** Median of the Walsh averages (one-sample Hodges–Lehmann estimate). */
export function walshMedian(sorted: Float64Array): number {
  const n = sorted.length;
  const total = (n * (n + 1)) / 2;
  const lo = kthWalshSum(sorted, Math.floor((total + 1) / 2));
  const hi = total % 2 === 1 ? lo : kthWalshSum(sorted, total / 2 + 1);
  return (lo + hi) / 4;
}

/** Median of the differences a_i − b_j (two-sample Hodges–Lehmann shift). */
export function differenceMedian(a: Float64Array, b: Float64Array): number {
  const total = a.length * b.length;
  const lo = kthDifference(a, b, Math.floor((total + 1) / 2));
  const hi = total % 2 === 1 ? lo : kthDifference(a, b, total / 2 + 1);
  return (lo + hi) / 2;
}
