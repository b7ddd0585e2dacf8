/**
 * Nonparametric bootstrap confidence intervals: percentile and
 * bias-corrected and accelerated (BCa).
 */
import { normalCdf, normalQuantile } from "./distributions";
import { StatsError } from "./errors";
import type { Rng } from "./rng";

export interface BootstrapInput {
  /** number of units resampled with replacement */
  n: number;
  /**
   * The statistic on a resample: `indices` (length n for a bootstrap
   * resample, n − 1 for a jackknife leave-one-out set) index the units.
   * Called with a fresh array each time.
   */
  statistic: (indices: Int32Array) => number;
  resamples: number;
  rng: Rng;
  /** confidence level, default 0.95 */
  level?: number;
  method: "percentile" | "bca";
}

export interface BootstrapResult {
  /** the statistic on the original sample */
  estimate: number;
  ciLow: number;
  ciHigh: number;
  /** bootstrap standard error: standard deviation of the finite replicates (divisor B − 1) */
  se: number;
  /** the finite bootstrap replicates, in the order drawn */
  distribution: Float64Array;
  /** resamples whose statistic was not finite and were left out */
  discarded: number;
  /** BCa only: bias correction ẑ0 */
  biasCorrection?: number;
  /** BCa only: jackknife acceleration â */
  acceleration?: number;
}

/** Largest share of non-finite bootstrap replicates tolerated before the interval is refused. */
export const MAX_DISCARDED_SHARE = 0.1;

/**
 * Bootstrap confidence interval by resampling units with replacement
 * (Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 13–14).
 *
 * - "percentile": the α/2 and 1 − α/2 quantiles of the replicates (ch. 13).
 * - "bca": the quantiles at α₁ = Φ(ẑ0 + (ẑ0 + z_{α/2})/(1 − â(ẑ0 + z_{α/2})))
 *   and α₂ likewise with z_{1−α/2} (Efron 1987, JASA 82:171–185; E&T 1993
 *   eq. 14.10), with ẑ0 = Φ⁻¹(share of replicates below the estimate, ties
 *   counted half) (E&T eq. 14.14; the half-count of ties is a common
 *   adjustment for discrete statistics such as the median) and â from the
 *   jackknife, â = Σ(θ̄ − θ₍ᵢ₎)³ / (6·[Σ(θ̄ − θ₍ᵢ₎)²]^{3/2}) (E&T eq. 14.15; â =
 *   0 when all leave-one-out values are equal). Where 1 − â(ẑ0 + z) ≤ 0 the
 *   level is taken at its limit (0 or 1).
 *
 * Quantiles interpolate linearly between order statistics (Hyndman & Fan
 * 1996, definition 7); levels beyond the replicates' range give their minimum
 * or maximum.
 *
 * Non-finite replicates (for example a correlation of a resample in which one
 * variable is constant) are left out of the distribution and counted in
 * `discarded`; the interval describes the resamples on which the statistic
 * exists. More than 10 % non-finite replicates throws.
 *
 * Cost: `resamples` + 1 (+ n for BCa) calls of `statistic`, O(n) each for the
 * indices, and O(B log B) to sort. Preconditions: n ≥ 2 (n ≥ 3 for BCa),
 * integer resamples ≥ 2, 0 < level < 1, finite estimate, finite jackknife
 * values for BCa, an estimate not below or above every replicate for BCa.
 * Throws StatsError otherwise.
 */
export function bootstrapInterval(input: BootstrapInput): BootstrapResult {
  const name = "bootstrapInterval";
  const { n, statistic, resamples, rng, method } = input;
  const level = input.level ?? 0.95;
  if (method !== "percentile" && method !== "bca") {
    throw new StatsError(`${name} requires method "percentile" or "bca" (got ${String(method)})`);
  }
  const minN = method === "bca" ? 3 : 2;
  if (!(Number.isInteger(n) && n >= minN))
    throw new StatsError(`${name} requires at least ${minN} units (got n = ${n})`);
  if (!(Number.isInteger(resamples) && resamples >= 2)) {
    throw new StatsError(
      `${name} requires resamples to be an integer of at least 2 (got ${resamples})`,
    );
  }
  if (!(level > 0 && level < 1))
    throw new StatsError(`${name} requires 0 < level < 1 (got ${level})`);

  const identity = new Int32Array(n);
  for (let i = 0; i < n; i++) identity[i] = i;
  const estimate = statistic(identity);
  if (!Number.isFinite(estimate))
    throw new StatsError(
      `${name} requires a finite estimate on the original sample (got ${estimate})`,
    );

  const draws = new Float64Array(resamples);
  let kept = 0;
  for (let b = 0; b < resamples; b++) {
    const indices = new Int32Array(n);
    for (let i = 0; i < n; i++) indices[i] = rng.int(n);
    const value = statistic(indices);
    if (Number.isFinite(value)) draws[kept++] = value;
  }
  const discarded = resamples - kept;
  if (discarded > MAX_DISCARDED_SHARE * resamples || kept < 2) {
    throw new StatsError(
      `${name} requires a finite statistic on at least 90% of resamples (${discarded} of ${resamples} were not finite)`,
    );
  }
  const distribution = draws.slice(0, kept);
  const sorted = Float64Array.from(distribution).sort();
  let sum = 0;
  for (let b = 0; b < kept; b++) sum += distribution[b];
  const mean = sum / kept;
  let ss = 0;
  for (let b = 0; b < kept; b++) ss += (distribution[b] - mean) ** 2;
  const se = Math.sqrt(ss / (kept - 1));

  const alpha = 1 - level;
  if (method === "percentile") {
    return {
      estimate,
      ciLow: quantileSorted(sorted, alpha / 2),
      ciHigh: quantileSorted(sorted, 1 - alpha / 2),
      se,
      distribution,
      discarded,
    };
  }

  let below = 0;
  let ties = 0;
  for (let b = 0; b < kept; b++) {
    if (sorted[b] < estimate) below++;
    else if (sorted[b] === estimate) ties++;
  }
  const share = (below + 0.5 * ties) / kept;
  if (!(share > 0 && share < 1)) {
    throw new StatsError(
      `${name} requires the estimate to lie within the bootstrap distribution for BCa`,
    );
  }
  const z0 = normalQuantile(share);
  const acceleration = jackknifeAcceleration(n, statistic, name);
  const adjusted = (z: number): number => {
    const w = z0 + z;
    const denominator = 1 - acceleration * w;
    if (denominator <= 0) return w > 0 ? 1 : 0;
    return normalCdf(z0 + w / denominator);
  };
  const zLow = normalQuantile(alpha / 2);
  return {
    estimate,
    ciLow: quantileSorted(sorted, adjusted(zLow)),
    ciHigh: quantileSorted(sorted, adjusted(-zLow)),
    se,
    distribution,
    discarded,
    biasCorrection: z0,
    acceleration,
  };
}

/**
 * Jackknife acceleration â (Efron & Tibshirani 1993, eq. 14.15) from the n
 * leave-one-out values of the statistic. Cost n calls of `statistic`.
 * Throws StatsError when a leave-one-out value is not finite.
 */
function jackknifeAcceleration(
  n: number,
  statistic: (indices: Int32Array) => number,
  name: string,
): number {
  const values = new Float64Array(n);
  for (let leave = 0; leave < n; leave++) {
    const indices = new Int32Array(n - 1);
    for (let i = 0, w = 0; i < n; i++) if (i !== leave) indices[w++] = i;
    const v = statistic(indices);
    if (!Number.isFinite(v)) {
      throw new StatsError(
        `${name} requires a finite statistic when each unit is left out for BCa (unit ${leave} gave ${v})`,
      );
    }
    values[leave] = v;
  }
  let mean = 0;
  for (let i = 0; i < n; i++) mean += values[i];
  mean /= n;
  let s2 = 0;
  let s3 = 0;
  for (let i = 0; i < n; i++) {
    const d = mean - values[i];
    s2 += d * d;
    s3 += d * d * d;
  }
  return s2 > 0 ? s3 / (6 * s2 ** 1.5) : 0;
}

/** Quantile of sorted values by linear interpolation (Hyndman & Fan 1996, definition 7). Cost O(1). */
function quantileSorted(sorted: Float64Array, q: number): number {
  const last = sorted.length - 1;
  if (q <= 0) return sorted[0];
  if (q >= 1) return sorted[last];
  const h = last * q;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, last);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}
