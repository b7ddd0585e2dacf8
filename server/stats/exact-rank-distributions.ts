/**
 * Exact null distributions of rank statistics, for samples without ties:
 *
 * - Wilcoxon signed-rank V (sum of positive ranks among n): the number of
 *   subsets of {1…n} with sum v, over 2^n (Hollander & Wolfe 1999, §3.1).
 * - Mann–Whitney U (pairs with first > second): the recursion
 *   P_{m,n}(u) = m/(m+n)·P_{m−1,n}(u−n) + n/(m+n)·P_{m,n−1}(u)
 *   (Mann & Whitney 1947).
 * - Kendall's inversion count I among n (Mahonian numbers):
 *   P_k(i) = (1/k)·Σ_{j<k} P_{k−1}(i−j) (Kendall 1938).
 * - Spearman's S = Σd² among n ≤ 10, by exact enumeration of all n!
 *   permutations.
 *
 * Each returns probabilities indexed by the statistic's value and is cached
 * per size (the cache holds only these deterministic tables).
 */
import { require } from "./errors";

const signedRankCache = new Map<number, Float64Array>();
const rankSumCache = new Map<string, Float64Array>();
const kendallCache = new Map<number, Float64Array>();
const spearmanCache = new Map<number, Float64Array>();

/** P(V = v), v = 0 … n(n+1)/2. Cost O(n³); n ≤ 1000. */
export function signedRankDistribution(n: number): Float64Array {
  require(Number.isInteger(n) &&
    n >= 1 &&
    n <= 1000, "signedRankDistribution requires 1 ≤ n ≤ 1000");
  const hit = signedRankCache.get(n);
  if (hit) return hit;
  const max = (n * (n + 1)) / 2;
  const p = new Float64Array(max + 1);
  p[0] = 1;
  let top = 0;
  for (let k = 1; k <= n; k++) {
    // adding rank k: each subset either contains k or not, with probability 1/2
    for (let v = top + k; v >= 0; v--) {
      p[v] = 0.5 * (p[v] + (v >= k ? p[v - k] : 0));
    }
    top += k;
  }
  signedRankCache.set(n, p);
  return p;
}

/** P(U = u), u = 0 … n1·n2, for group sizes n1, n2 (≤ 200 each). Cost O(n1²·n2²). */
export function rankSumDistribution(n1: number, n2: number): Float64Array {
  require(Number.isInteger(n1) &&
    Number.isInteger(n2) &&
    n1 >= 1 &&
    n2 >= 1 &&
    n1 <= 200 &&
    n2 <= 200, "rankSumDistribution requires group sizes between 1 and 200");
  const key = `${n1},${n2}`;
  const hit = rankSumCache.get(key);
  if (hit) return hit;
  // prev[n] = P_{m−1, n}; cur[n] = P_{m, n}
  let prev: Float64Array[] = [];
  for (let n = 0; n <= n2; n++) prev.push(Float64Array.of(1)); // m = 0: U = 0
  for (let m = 1; m <= n1; m++) {
    const cur: Float64Array[] = [Float64Array.of(1)]; // n = 0: U = 0
    for (let n = 1; n <= n2; n++) {
      const a = prev[n]; // P_{m−1,n}, support 0 … (m−1)n
      const b = cur[n - 1]; // P_{m,n−1}, support 0 … m(n−1)
      const out = new Float64Array(m * n + 1);
      const wa = m / (m + n);
      const wb = n / (m + n);
      for (let u = 0; u < a.length; u++) out[u + n] += wa * a[u];
      for (let u = 0; u < b.length; u++) out[u] += wb * b[u];
      cur.push(out);
    }
    prev = cur;
  }
  const result = prev[n2];
  rankSumCache.set(key, result);
  return result;
}

/** P(I = i), i = 0 … n(n−1)/2, the number of inversions of a random permutation. Cost O(n³); n ≤ 500. */
export function kendallDistribution(n: number): Float64Array {
  require(Number.isInteger(n) && n >= 1 && n <= 500, "kendallDistribution requires 1 ≤ n ≤ 500");
  const hit = kendallCache.get(n);
  if (hit) return hit;
  let p = Float64Array.of(1);
  for (let k = 2; k <= n; k++) {
    const next = new Float64Array(p.length + k - 1);
    let window = 0;
    for (let i = 0; i < next.length; i++) {
      if (i < p.length) window += p[i];
      if (i - k >= 0) window -= p[i - k];
      next[i] = window / k;
    }
    p = next;
  }
  kendallCache.set(n, p);
  return p;
}

/**
 * P(S = s), s = 0 … (n³−n)/3, with S = Σ(rank_i − π(i))² over all n!
 * permutations π, by exact enumeration (Heap's algorithm). Cost O(n!·n);
 * n ≤ 10.
 */
export function spearmanDistribution(n: number): Float64Array {
  require(Number.isInteger(n) && n >= 2 && n <= 10, "spearmanDistribution requires 2 ≤ n ≤ 10");
  const hit = spearmanCache.get(n);
  if (hit) return hit;
  const max = (n * n * n - n) / 3;
  const counts = new Float64Array(max + 1);
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  const sumSq = () => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      const d = perm[i] - i;
      s += d * d;
    }
    return s;
  };
  counts[sumSq()]++;
  const c = new Int32Array(n);
  let i = 0;
  let total = 1;
  while (i < n) {
    if (c[i] < i) {
      const j = i % 2 === 0 ? 0 : c[i];
      const t = perm[j];
      perm[j] = perm[i];
      perm[i] = t;
      counts[sumSq()]++;
      total++;
      c[i]++;
      i = 0;
    } else {
      c[i] = 0;
      i++;
    }
  }
  for (let s = 0; s <= max; s++) counts[s] /= total;
  spearmanCache.set(n, counts);
  return counts;
}

/**
 * Two-sided exact p-value for an integer statistic with the given null
 * probabilities: min(1, 2·min(P(X ≤ x), P(X ≥ x))), the doubling rule used by
 * the general-purpose statistics environment R for its exact rank tests.
 */
export function twoSidedExactP(dist: Float64Array, x: number): number {
  const k = Math.round(x);
  let lower = 0;
  let upper = 0;
  for (let v = 0; v < dist.length; v++) {
    if (v <= k) lower += dist[v];
    if (v >= k) upper += dist[v];
  }
  return Math.min(1, 2 * Math.min(lower, upper));
}

/** Smallest v with P(X ≤ v) ≥ q (the lower q-quantile of a discrete distribution). */
export function discreteQuantile(dist: Float64Array, q: number): number {
  let cum = 0;
  for (let v = 0; v < dist.length; v++) {
    cum += dist[v];
    if (cum >= q * (1 - 1e-12)) return v;
  }
  return dist.length - 1;
}
