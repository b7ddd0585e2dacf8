/**
 * Comparing and probing correlations:
 *
 * - two independent correlations by Fisher's z test,
 *   z = (atanh r1 − atanh r2)/√(1/(n1 − 3) + 1/(n2 − 3)) (Fisher 1921;
 *   Zar 2010, §19.5), with Zou's (2007, Psychol. Methods 12:399–413)
 *   interval for r1 − r2 built from the two Fisher-z intervals;
 * - the leave-one-out range of Pearson's r (each participant removed in
 *   turn), in O(n) by downdating centred sums;
 * - Pearson's r with and without a set of flagged participants.
 */
import { type CorrelationResult, fisherInterval, pearsonCorrelation } from "./correlation";
import { mean } from "./descriptive";
import { normalTwoSidedP } from "./distributions";
import { require } from "./errors";

export interface IndependentCorrelationComparison {
  difference: number;
  z: number;
  p: number;
  ciLow: number;
  ciHigh: number;
}

/**
 * Fisher z test of H0: ρ1 = ρ2 for correlations from independent groups.
 * Cost O(1). Throws StatsError unless −1 < r < 1 and n ≥ 4 in both groups.
 */
export function compareIndependentCorrelations(
  r1: number,
  n1: number,
  r2: number,
  n2: number,
  options: { level?: number } = {},
): IndependentCorrelationComparison {
  const { level = 0.95 } = options;
  require(Math.abs(r1) < 1 &&
    Math.abs(r2) <
      1, "compareIndependentCorrelations requires correlations strictly between −1 and 1");
  require(n1 >= 4 &&
    n2 >= 4, "compareIndependentCorrelations requires at least four participants per group");
  const z = (Math.atanh(r1) - Math.atanh(r2)) / Math.sqrt(1 / (n1 - 3) + 1 / (n2 - 3));
  const c1 = fisherInterval(r1, n1, { level });
  const c2 = fisherInterval(r2, n2, { level });
  const l1 = c1.low as number;
  const u1 = c1.high as number;
  const l2 = c2.low as number;
  const u2 = c2.high as number;
  const difference = r1 - r2;
  return {
    difference,
    z,
    p: normalTwoSidedP(z),
    ciLow: difference - Math.sqrt((r1 - l1) ** 2 + (u2 - r2) ** 2),
    ciHigh: difference + Math.sqrt((u1 - r1) ** 2 + (r2 - l2) ** 2),
  };
}

export interface LeaveOneOutRange {
  /** r without participant i (null where undefined, e.g. a variable becomes constant). */
  values: (number | null)[];
  min: number;
  max: number;
  minIndex: number;
  maxIndex: number;
}

/**
 * Pearson's r with each participant left out in turn. Cost O(n).
 * Throws StatsError for fewer than four pairs or when no leave-one-out r is defined.
 */
export function leaveOneOutCorrelations(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
): LeaveOneOutRange {
  require(x.length === y.length, "leaveOneOutCorrelations requires two variables of equal length");
  const n = x.length;
  require(n >= 4, "leaveOneOutCorrelations requires at least four pairs");
  const mx = mean(x);
  const my = mean(y);
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const a = x[i] - mx;
    const b = y[i] - my;
    sx += a;
    sy += b;
    sxx += a * a;
    syy += b * b;
    sxy += a * b;
  }
  const values: (number | null)[] = [];
  let min = Infinity;
  let max = -Infinity;
  let minIndex = -1;
  let maxIndex = -1;
  const m = n - 1;
  for (let i = 0; i < n; i++) {
    const a = x[i] - mx;
    const b = y[i] - my;
    const ax = sx - a;
    const ay = sy - b;
    const cxx = sxx - a * a - (ax * ax) / m;
    const cyy = syy - b * b - (ay * ay) / m;
    const cxy = sxy - a * b - (ax * ay) / m;
    const scale = Math.max(sxx, 1e-300);
    const scaleY = Math.max(syy, 1e-300);
    if (cxx <= 1e-12 * scale || cyy <= 1e-12 * scaleY) {
      values.push(null);
      continue;
    }
    const r = Math.max(-1, Math.min(1, cxy / Math.sqrt(cxx * cyy)));
    values.push(r);
    if (r < min) {
      min = r;
      minIndex = i;
    }
    if (r > max) {
      max = r;
      maxIndex = i;
    }
  }
  require(minIndex >=
    0, "leaveOneOutCorrelations requires variables that vary without any one participant");
  return { values, min, max, minIndex, maxIndex };
}

/**
 * Pearson correlation with all participants and without the given indices.
 * `without` is null when fewer than three participants would remain.
 */
export function correlationWithAndWithout(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  excluded: readonly number[],
  options: { level?: number } = {},
): { all: CorrelationResult; without: CorrelationResult | null; removed: number[] } {
  const all = pearsonCorrelation(x, y, options);
  const drop = new Set(excluded);
  const kx: number[] = [];
  const ky: number[] = [];
  for (let i = 0; i < x.length; i++) {
    if (!drop.has(i)) {
      kx.push(x[i]);
      ky.push(y[i]);
    }
  }
  const removed = Array.from(drop)
    .filter((i) => i >= 0 && i < x.length)
    .sort((a, b) => a - b);
  const without =
    kx.length >= 3 && removed.length > 0
      ? pearsonCorrelation(kx, ky, options)
      : removed.length === 0
        ? all
        : null;
  return { all, without, removed };
}
