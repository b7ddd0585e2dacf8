/** Argument checks shared by the distribution families; each throws StatsError naming the function. */
import { StatsError } from "../errors";

/** Degrees of freedom must be positive and finite. */
export function checkDf(df: number, name: string): void {
  if (!(df > 0) || !Number.isFinite(df))
    throw new StatsError(`${name} requires positive finite degrees of freedom (got ${df})`);
}

/** A quantile's probability must lie strictly between 0 and 1. */
export function checkProbability(p: number, name: string): void {
  if (!(p > 0 && p < 1)) throw new StatsError(`${name} requires 0 < p < 1 (got ${p})`);
}

/** A distribution function's argument must be a number (±Infinity allowed). */
export function checkNumber(x: number, name: string): void {
  if (Number.isNaN(x)) throw new StatsError(`${name} requires a number`);
}
