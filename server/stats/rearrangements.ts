/**
 * Rearrangements for permutation inference: sign flips, two-group label
 * assignments and full permutations, either enumerated exhaustively or drawn
 * at random from a seeded generator.
 *
 * Every sequence starts with the identity (no flip, the observed labels), so
 * the statistic at index 0 of any null distribution is the observed one. The
 * rule for exact versus Monte Carlo inference is the same everywhere: when the
 * number M of distinct rearrangements is at most the requested number of
 * resamples, all M are enumerated (exact p = count / M, the identity among
 * them); otherwise the identity is followed by `resamples` random
 * rearrangements and p = (b + 1) / (m + 1) (Phipson & Smyth 2010, Statistical
 * Applications in Genetics and Molecular Biology 9:39). Both are
 * count(|T*| ≥ |T|) over all evaluated rearrangements divided by their number.
 *
 * The random sequence depends only on the generator's state, never on the
 * data or the number of regions, so independent workers that create the same
 * generator from the same seed visit the same rearrangements.
 */
import { StatsError } from "./errors";
import type { Rng } from "./rng";

/** What is rearranged. */
export type RearrangementKind =
  /** multiply each unit by ±1 (symmetric errors, Winkler et al. 2014) */
  | "signs"
  /** reassign two group labels of fixed sizes (C(n, n1) distinct assignments) */
  | "subsets"
  /** permute all n units (n! distinct orders) */
  | "permutations";

/**
 * Relative tolerance in the two-sided comparison |T*| ≥ |T|: a rearranged
 * statistic counts as at least as extreme when |T*| ≥ |T|·(1 − 1e-10), so
 * mathematically tied rearrangements (the all-flipped sign pattern, the
 * mirrored assignment of equal groups) are counted despite rounding.
 */
export const TIE_TOLERANCE = 1e-10;

/** The threshold a rearranged |T*| must reach to count as at least as extreme as `observed`. */
export function extremeThreshold(observed: number): number {
  return Math.abs(observed) * (1 - TIE_TOLERANCE);
}

/** Number of distinct rearrangements M (may be Infinity for large n). Cost O(n). */
export function countRearrangements(
  kind: RearrangementKind,
  n: number,
  firstGroupSize = 0,
): number {
  if (kind === "signs") return 2 ** n;
  if (kind === "permutations") {
    let f = 1;
    for (let i = 2; i <= n; i++) f *= i;
    return f;
  }
  const k = Math.min(firstGroupSize, n - firstGroupSize);
  let c = 1;
  for (let i = 1; i <= k; i++) c = (c * (n - k + i)) / i;
  return Math.round(c);
}

/**
 * A stateful walk through rearrangements. After each `next()` the arrays
 * `order` (a permutation of 0..n−1) and `signs` (±1 per unit) describe the
 * current rearrangement; `index` counts from 0 (the identity).
 *
 * - "signs": `order` stays the identity, `signs` vary.
 * - "subsets": `order[0..n1−1]` are the units given the first label (sorted),
 *   the rest follow (sorted); `signs` stay +1.
 * - "permutations": `order` is the permutation; `signs` stay +1.
 */
export interface Rearranger {
  readonly kind: RearrangementKind;
  readonly exact: boolean;
  /** Total number of rearrangements the walk visits, the identity included. */
  readonly total: number;
  readonly order: Int32Array;
  readonly signs: Float64Array;
  /** Index of the current rearrangement; −1 before the first `next()`. */
  index: number;
  /** Advances to the next rearrangement (the first call gives the identity). */
  next(): void;
}

/**
 * Creates the walk for `kind` over n units: exhaustive when M ≤ resamples,
 * otherwise the identity followed by `resamples` random draws (uniform sign
 * vectors, or Fisher–Yates shuffles — Durstenfeld 1964 — for labels and
 * permutations). Cost O(n) per step. Throws StatsError for n < 1 or a bad
 * first-group size.
 */
export function createRearranger(input: {
  kind: RearrangementKind;
  n: number;
  resamples: number;
  rng: Rng;
  firstGroupSize?: number;
}): Rearranger {
  const { kind, n, resamples, rng } = input;
  const n1 = input.firstGroupSize ?? 0;
  if (!(Number.isInteger(n) && n >= 1))
    throw new StatsError("rearrangements require at least one unit");
  if (kind === "subsets" && !(Number.isInteger(n1) && n1 >= 1 && n1 < n)) {
    throw new StatsError("rearrangements of two groups require both groups to be non-empty");
  }
  const m = countRearrangements(kind, n, n1);
  const exact = m <= resamples;
  const total = exact ? m : resamples + 1;
  const order = new Int32Array(n);
  const signs = new Float64Array(n).fill(1);
  for (let i = 0; i < n; i++) order[i] = i;

  // subsets, exact: the current combination of first-group units (sorted).
  const combo = new Int32Array(kind === "subsets" ? n1 : 0);
  for (let i = 0; i < combo.length; i++) combo[i] = i;
  const taken = new Uint8Array(kind === "subsets" ? n : 0);

  const walk: Rearranger = {
    kind,
    exact,
    total,
    order,
    signs,
    index: -1,
    next() {
      const k = ++walk.index;
      if (k >= total) throw new StatsError("rearrangements are exhausted");
      if (k === 0) return; // identity: initial state
      if (kind === "signs") {
        if (exact) {
          // k-th sign pattern: bit i of k set → unit i flipped.
          let bits = k;
          for (let i = 0; i < n; i++) {
            signs[i] = bits % 2 === 1 ? -1 : 1;
            bits = Math.floor(bits / 2);
          }
        } else {
          for (let i = 0; i < n; i++) signs[i] = rng.next() < 0.5 ? -1 : 1;
        }
        return;
      }
      if (!exact) {
        for (let i = 0; i < n; i++) order[i] = i;
        rng.shuffle(order);
        if (kind === "subsets") {
          sortRange(order, 0, n1);
          sortRange(order, n1, n);
        }
        return;
      }
      if (kind === "permutations") {
        nextLexicographic(order);
        return;
      }
      // subsets, exact: next combination in lexicographic order.
      let i = n1 - 1;
      while (i >= 0 && combo[i] === n - n1 + i) i--;
      combo[i]++;
      for (let j = i + 1; j < n1; j++) combo[j] = combo[j - 1] + 1;
      taken.fill(0);
      for (let j = 0; j < n1; j++) {
        order[j] = combo[j];
        taken[combo[j]] = 1;
      }
      let w = n1;
      for (let u = 0; u < n; u++) if (taken[u] === 0) order[w++] = u;
    },
  };
  return walk;
}

/** Rearranges `a` into the next permutation in lexicographic order (Knuth 2011, TAOCP 4A, Algorithm L). */
function nextLexicographic(a: Int32Array): void {
  const n = a.length;
  let i = n - 2;
  while (i >= 0 && a[i] >= a[i + 1]) i--;
  if (i < 0) throw new StatsError("rearrangements are exhausted");
  let j = n - 1;
  while (a[j] <= a[i]) j--;
  let t = a[i];
  a[i] = a[j];
  a[j] = t;
  for (let l = i + 1, r = n - 1; l < r; l++, r--) {
    t = a[l];
    a[l] = a[r];
    a[r] = t;
  }
}

function sortRange(a: Int32Array, from: number, to: number): void {
  a.subarray(from, to).sort();
}

/**
 * One rearrangement shared by regions that differ in participants (a brain
 * table with empty cells, participants set aside in one region), so that
 * the maximum statistic over regions is taken over the same rearrangement
 * of the participants, as max-T requires (Westfall & Young 1993,
 * Resampling-Based Multiple Testing, single-step max-T; Winkler et al.
 * 2014, NeuroImage 92:381–397).
 *
 * The draw runs over the N shared participants (in the roster's order):
 * - "signs": one vector of ±1 over all N; a region uses the signs of its
 *   own participants (`regionSigns`).
 * - "permutations": one σ = (σ₀, …, σ_{N−1}); without empty cells
 *   participant i receives the residual of participant σᵢ. A region whose
 *   participants are a₀ < … < a_{m−1} keeps from σ, in σ's order, only the
 *   entries that are its own, c₀, …, c_{m−1}, and aₖ receives the residual
 *   of cₖ (`regionSources`). A uniform σ induces a uniform rearrangement of
 *   every region's own participants, and regions with the same
 *   participants see the same rearrangement.
 *
 * Exact versus Monte Carlo follows the rule of `createRearranger` on all N
 * (2^N sign vectors or N! orders). σ is the inverse of the walk's `order`:
 * the least-squares kernel moves rows of the design by `order`, which is
 * the same as giving participant i the residual of σᵢ, so a least-squares
 * region that has every one of the N participants sees exactly the
 * rearrangements it sees when fitted alone with the same kind of draw.
 */
export interface SharedRearranger {
  readonly kind: "signs" | "permutations";
  readonly exact: boolean;
  /** Rearrangements the walk visits, the identity included. */
  readonly total: number;
  /** Number of shared participants N. */
  readonly n: number;
  /** "signs": the sign of every shared participant. */
  readonly signs: Float64Array;
  /** "permutations": σ, participant i receives the residual of participant sigma[i]. */
  readonly sigma: Int32Array;
  /** "permutations": σ⁻¹, the walk's order (participant order[j] receives the residual of j). */
  readonly order: Int32Array;
  index: number;
  /** Advances to the next rearrangement (the first call gives the identity). */
  next(): void;
}

/**
 * Creates the shared walk over n participants. Cost O(n) per step.
 * Throws StatsError for n < 1.
 */
export function createSharedRearranger(input: {
  kind: "signs" | "permutations";
  n: number;
  resamples: number;
  rng: Rng;
}): SharedRearranger {
  const walk = createRearranger(input);
  const sigma = new Int32Array(input.n);
  const shared: SharedRearranger = {
    kind: input.kind,
    exact: walk.exact,
    total: walk.total,
    n: input.n,
    signs: walk.signs,
    sigma,
    order: walk.order,
    index: -1,
    next() {
      walk.next();
      shared.index = walk.index;
      if (input.kind === "permutations") {
        const order = walk.order;
        for (let j = 0; j < order.length; j++) sigma[order[j]] = j;
      }
    },
  };
  for (let i = 0; i < input.n; i++) sigma[i] = i;
  return shared;
}

/**
 * Checks that `members` are increasing positions among n shared
 * participants and returns each shared participant's position among the
 * members (−1 for the others). Cost O(n). Throws StatsError otherwise.
 */
export function memberPositions(n: number, members: Int32Array): Int32Array {
  const local = new Int32Array(n).fill(-1);
  for (let k = 0; k < members.length; k++) {
    const a = members[k];
    if (!(Number.isInteger(a) && a >= 0 && a < n && (k === 0 || a > members[k - 1]))) {
      throw new StatsError(
        `shared rearrangements require increasing participant positions between 0 and ${n - 1} (got ${a} at ${k})`,
      );
    }
    local[a] = k;
  }
  return local;
}

/**
 * A region's rearrangement under σ: `from[k]` is the region position of
 * the participant whose residual the region's k-th participant receives
 * (the entries of σ that belong to the region, in σ's order). `local` is
 * the region's `memberPositions`. Cost O(N).
 */
export function regionSources(sigma: Int32Array, local: Int32Array, from: Int32Array): void {
  let k = 0;
  for (let t = 0; t < sigma.length; t++) {
    const j = local[sigma[t]];
    if (j >= 0) from[k++] = j;
  }
}

/** A region's signs: the shared signs of its own participants. Cost O(m). */
export function regionSigns(signs: Float64Array, members: Int32Array, out: Float64Array): void {
  for (let k = 0; k < members.length; k++) out[k] = signs[members[k]];
}

/**
 * Checks the cancellation hook and reports progress at most about a hundred
 * times per run. Returns a function to call after each rearrangement.
 * Throws StatsError with code "cancelled" when `shouldCancel()` is true.
 */
export function progressReporter(
  what: string,
  total: number,
  onProgress?: (fraction: number) => void,
  shouldCancel?: () => boolean,
  checkEvery = 1,
): (done: number) => void {
  const step = Math.max(1, Math.floor(total / 100));
  let nextReport = step;
  return (done: number) => {
    if (shouldCancel && done % checkEvery === 0 && shouldCancel()) {
      throw new StatsError(`${what} was cancelled`, "cancelled");
    }
    if (onProgress && (done >= nextReport || done === total)) {
      onProgress(done / total);
      nextReport = done + step;
    }
  };
}
