/**
 * What every stage of a fit shares: the options a caller passes (progress,
 * cancelling), the confidence level, the failure helpers (a StatsError, the
 * "cancelled" error, a region's name put in front of its errors) and the
 * last check on a finished result (no NaN or ±Infinity leaves the engine).
 */
import { StatsError } from "../errors";
import type { LinearPermutationResult, SharedLinearPermutationInput } from "../permutation";
import type { PredictionPartial } from "../prediction/split";
import type { CurveStatistics } from "../specification-curve/joint";

export interface RunFitOptions {
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
  /**
   * Answers the least-squares permutation test in place of computing it
   * here: given the test's input, what `sharedLinearPermutationTest` would
   * return (a fit whose chunks worker processes computed merges them here).
   */
  linearPermutation?: (input: SharedLinearPermutationInput) => LinearPermutationResult;
  /**
   * Answers the null draws of a specification curve's joint test (a fit
   * recording "blocks-v1") in place of drawing them here: what
   * `curveNullBlock` gives for blocks 0, 1, … in order, concatenated (a
   * fit whose blocks threads or worker processes computed merges them here).
   */
  curveNulls?: () => readonly CurveStatistics[];
  /**
   * Answers every outer split of a prediction fit in place of computing
   * them here: what `predictionSplit` gives for each split of the fit's
   * plan, in any order (a fit whose splits threads or worker processes
   * computed merges them here).
   */
  predictionPartials?: () => readonly PredictionPartial[];
}

/** `source[rows[k]]` for each k: the values of a region's participants, in its order. Cost O(rows). */
export function valuesAt(source: ArrayLike<number | null>, rows: readonly number[]): Float64Array {
  const out = new Float64Array(rows.length);
  for (let k = 0; k < rows.length; k++) out[k] = source[rows[k]] as number;
  return out;
}

/**
 * A key naming a set of participant rows (the indices joined), for caches
 * of what depends only on the rows (a decomposition, a block of regions).
 * Kept for a frozen array (the rows regions share, prepare.ts), which is
 * asked for once per region.
 */
export function rowsKey(rows: readonly number[]): string {
  if (!Object.isFrozen(rows)) return rows.join(",");
  let key = rowsKeys.get(rows);
  if (key === undefined) {
    key = rows.join(",");
    rowsKeys.set(rows, key);
  }
  return key;
}

const rowsKeys = new WeakMap<readonly number[], string>();

/** Confidence level of every interval in a fit. */
export const FIT_LEVEL = 0.95;

/** Throws a StatsError with the message (a precondition the fit does not meet). */
export function fail(message: string): never {
  throw new StatsError(message);
}

/** Throws the StatsError of a fit its caller cancelled (code "cancelled"). */
export function cancelled(): never {
  throw new StatsError("the fit was cancelled", "cancelled");
}

/** Runs f, putting "region '<name>': " in front of the message of any StatsError it throws (once). */
export function inRegion<T>(region: string, f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (e instanceof StatsError && e.code !== "cancelled" && !e.message.startsWith("region '")) {
      throw new StatsError(`region '${region}': ${e.message}`, e.code);
    }
    throw e;
  }
}

/** Throws if any number in the result is NaN or ±Infinity: no such value may leave the engine. */
export function assertFinite(value: unknown, path: string): void {
  const bad = findNonFinite(value);
  if (bad !== null) throw nonFiniteError(`${path}${bad}`);
}

/** The error of a non-finite number found at `at` (a path into the result). */
export function nonFiniteError(at: string): StatsError {
  return new StatsError(`internal: the fit produced a non-finite number at ${at}`);
}

/** Where in `value` a number is not finite ("" for `value` itself), as a path, else null. */
export function findNonFinite(value: unknown): string | null {
  if (typeof value === "number") return Number.isFinite(value) ? null : "";
  if (value === null || typeof value !== "object") return null;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const v = value[i];
      if (typeof v === "number" ? !Number.isFinite(v) : v !== null && typeof v === "object") {
        const inner = findNonFinite(v);
        if (inner !== null) return `[${i}]${inner}`;
      }
    }
    return null;
  }
  const record = value as Record<string, unknown>;
  for (const key in record) {
    const v = record[key];
    if (typeof v === "number" ? !Number.isFinite(v) : v !== null && typeof v === "object") {
      const inner = findNonFinite(v);
      if (inner !== null) return `.${key}${inner}`;
    }
  }
  return null;
}
