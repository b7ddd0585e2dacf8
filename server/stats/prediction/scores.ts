/**
 * Out-of-sample scores of held-out predictions: Pearson's r between observed
 * and predicted values, the prediction R² = 1 − Σ(o − p)²/Σ(o − ō)² with ō
 * the mean of the held-out observed values (the "coefficient of
 * determination" on test data; Poldrack, Huckins & Varoquaux 2020, JAMA
 * Psychiatry 77:534–540, who recommend it beside r because r ignores bias
 * and scale), and the mean absolute error. Computed from running sums so
 * that permutation loops need no stored predictions. Cost O(1) per value.
 */
import type { Scores } from "../../../contract/prediction";

export type { Scores };

/** Numbers per ScoreSums in a serialised array (`writeTo`, `addFrom`). */
export const SCORE_SUM_LENGTH = 8;

/** Running sums of (observed, predicted) pairs. */
export class ScoreSums {
  count = 0;
  so = 0;
  sp = 0;
  soo = 0;
  spp = 0;
  sop = 0;
  sse = 0;
  sabs = 0;

  add(observed: number, predicted: number): void {
    this.count++;
    this.so += observed;
    this.sp += predicted;
    this.soo += observed * observed;
    this.spp += predicted * predicted;
    this.sop += observed * predicted;
    const e = observed - predicted;
    this.sse += e * e;
    this.sabs += Math.abs(e);
  }

  /** Writes the sums to `out` from `offset` (SCORE_SUM_LENGTH numbers), for a serialisable partial. */
  writeTo(out: Float64Array, offset: number): void {
    out[offset] = this.count;
    out[offset + 1] = this.so;
    out[offset + 2] = this.sp;
    out[offset + 3] = this.soo;
    out[offset + 4] = this.spp;
    out[offset + 5] = this.sop;
    out[offset + 6] = this.sse;
    out[offset + 7] = this.sabs;
  }

  /** Adds sums written by `writeTo` (the pairs of another set of rows). */
  addFrom(sums: Float64Array, offset: number): void {
    this.count += sums[offset];
    this.so += sums[offset + 1];
    this.sp += sums[offset + 2];
    this.soo += sums[offset + 3];
    this.spp += sums[offset + 4];
    this.sop += sums[offset + 5];
    this.sse += sums[offset + 6];
    this.sabs += sums[offset + 7];
  }

  scores(): Scores {
    const n = this.count;
    const sxx = this.soo - (this.so * this.so) / n;
    const syy = this.spp - (this.sp * this.sp) / n;
    const sxy = this.sop - (this.so * this.sp) / n;
    return {
      r: sxx > 0 && syy > 0 ? sxy / Math.sqrt(sxx * syy) : null,
      r2: sxx > 0 ? 1 - this.sse / sxx : null,
      mae: this.sabs / n,
    };
  }
}

/** Scores of paired arrays, computed directly (two passes, for reported values). */
export function scorePairs(observed: ArrayLike<number>, predicted: ArrayLike<number>): Scores {
  const n = observed.length;
  let mo = 0;
  let mp = 0;
  for (let i = 0; i < n; i++) {
    mo += observed[i];
    mp += predicted[i];
  }
  mo /= n;
  mp /= n;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  let sse = 0;
  let sabs = 0;
  for (let i = 0; i < n; i++) {
    const a = observed[i] - mo;
    const b = predicted[i] - mp;
    sxx += a * a;
    syy += b * b;
    sxy += a * b;
    const e = observed[i] - predicted[i];
    sse += e * e;
    sabs += Math.abs(e);
  }
  return {
    r: sxx > 0 && syy > 0 ? sxy / Math.sqrt(sxx * syy) : null,
    r2: sxx > 0 ? 1 - sse / sxx : null,
    mae: sabs / n,
  };
}

/** Mean of values; null if any is null or there are none. */
export function meanOrNull(values: readonly (number | null)[]): number | null {
  if (values.length === 0 || values.some((v) => v === null)) return null;
  return (values as number[]).reduce((a, b) => a + b, 0) / values.length;
}

/** Sample standard deviation (n − 1); null with fewer than two values or any null. */
export function sdOrNull(values: readonly (number | null)[]): number | null {
  const mean = meanOrNull(values);
  if (mean === null || values.length < 2) return null;
  let ss = 0;
  for (const v of values as number[]) ss += (v - mean) ** 2;
  return Math.sqrt(ss / (values.length - 1));
}
