/**
 * Cross-validation splits: k-fold (repeated) or leave-one-out, optionally
 * stratified by a group label, drawn from a seeded generator.
 *
 * k-fold cross-validation as in Hastie, Tibshirani & Friedman (2009), The
 * Elements of Statistical Learning, 2nd ed., §7.10.1; stratification by group
 * so that each fold keeps the group proportions (Kohavi 1995, "A study of
 * cross-validation and bootstrap for accuracy estimation and model
 * selection", IJCAI, §3); repeated with fresh random partitions (Varoquaux et
 * al. 2017, NeuroImage 145:166–179). Shuffles are the engine's Fisher–Yates
 * draws (rearrangements.ts) from the project's generator, so the splits
 * depend only on the seed.
 */
import { StatsError } from "../errors";
import type { Rng } from "../rng";

/** One training/held-out split; indices are sorted ascending. */
export interface Split {
  /** 0-based repeat of the partition. */
  repeat: number;
  /** 0-based fold within the repeat. */
  fold: number;
  train: Int32Array;
  held: Int32Array;
}

export interface FoldOptions {
  /** Number of units to split. */
  n: number;
  /** k (2 ≤ k ≤ n) or "leave-one-out". */
  folds: number | "leave-one-out";
  /** Independent random partitions (must be 1 for leave-one-out). */
  repeats: number;
  /** Group label per unit (null is a label of its own); stratifies k-fold splits. */
  group?: readonly (string | null)[];
  rng: Rng;
}

/**
 * Fold number of each unit for one k-fold partition. Units are shuffled within
 * each stratum (strata in sorted label order) and dealt round-robin to the
 * folds with one counter running across strata, so every fold holds the floor
 * or the ceiling of each stratum's share n_s/k and fold sizes differ by at most 1.
 */
function assignFolds(
  n: number,
  k: number,
  group: readonly (string | null)[] | undefined,
  rng: Rng,
): Int32Array {
  const strata = new Map<string, number[]>();
  for (let i = 0; i < n; i++) {
    const key = group ? (group[i] === null ? "\u0000" : `=${group[i]}`) : "";
    const members = strata.get(key);
    if (members) members.push(i);
    else strata.set(key, [i]);
  }
  const keys = [...strata.keys()].sort();
  const fold = new Int32Array(n);
  let counter = 0;
  for (const key of keys) {
    const members = Int32Array.from(strata.get(key) ?? []);
    rng.shuffle(members);
    for (const unit of members) {
      fold[unit] = counter % k;
      counter++;
    }
  }
  return fold;
}

/**
 * The splits of repeated k-fold or leave-one-out cross-validation, in order
 * repeat by repeat, fold by fold. Leave-one-out gives n splits (unit i held
 * out in fold i) and draws nothing from the generator. Cost O(n·k·repeats).
 * Throws StatsError when k is not an integer in [2, n], when repeats is not a
 * positive integer (or not 1 for leave-one-out), or when a group has fewer
 * units than folds.
 */
export function crossValidationSplits(options: FoldOptions): Split[] {
  const { n, folds, repeats, group, rng } = options;
  if (!(Number.isInteger(n) && n >= 2))
    throw new StatsError("cross-validation requires at least two participants");
  if (!(Number.isInteger(repeats) && repeats >= 1))
    throw new StatsError("repeats must be a positive integer");
  const splits: Split[] = [];
  if (folds === "leave-one-out") {
    if (repeats !== 1) throw new StatsError("repeats must be 1 for leave-one-out");
    for (let i = 0; i < n; i++) {
      const train = new Int32Array(n - 1);
      for (let j = 0, w = 0; j < n; j++) if (j !== i) train[w++] = j;
      splits.push({ repeat: 0, fold: i, train, held: Int32Array.of(i) });
    }
    return splits;
  }
  if (!(Number.isInteger(folds) && folds >= 2 && folds <= n))
    throw new StatsError("folds must be at least 2 and at most the number of participants");
  if (group) {
    if (group.length !== n) throw new StatsError("group must have one label per participant");
    const counts = new Map<string | null, number>();
    for (const g of group) counts.set(g, (counts.get(g) ?? 0) + 1);
    for (const [label, count] of counts) {
      if (count < folds)
        throw new StatsError(
          `folds stratified by group require at least ${folds} participants per group (group '${label ?? "none"}' has ${count})`,
        );
    }
  }
  for (let repeat = 0; repeat < repeats; repeat++) {
    const fold = assignFolds(n, folds, group, rng);
    for (let f = 0; f < folds; f++) {
      let size = 0;
      for (let i = 0; i < n; i++) if (fold[i] === f) size++;
      const held = new Int32Array(size);
      const train = new Int32Array(n - size);
      for (let i = 0, h = 0, t = 0; i < n; i++) {
        if (fold[i] === f) held[h++] = i;
        else train[t++] = i;
      }
      splits.push({ repeat, fold: f, train, held });
    }
  }
  return splits;
}
