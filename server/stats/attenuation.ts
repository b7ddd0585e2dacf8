/**
 * Spearman's correction for attenuation: what an observed brain–trait
 * correlation would be if both measures were perfectly reliable, and the
 * ceiling that unreliability puts on the observed correlation.
 */
import { StatsError } from "./errors";
import { normalQuantile } from "./distributions";

export interface AttenuationInput {
  /** Observed Pearson correlation, −1 < r < 1. */
  r: number;
  /** Participants the correlation was computed on (≥ 4, for the Fisher z interval). */
  n: number;
  /** Reliability of the brain measure (e.g. an ICC), 0 < rel ≤ 1. */
  reliabilityBrain: number;
  /** Reliability of the trait measure, 0 < rel ≤ 1. */
  reliabilityTrait: number;
  /** Confidence level, default 0.95. */
  level?: number;
}

export interface AttenuationResult {
  observed: number;
  observedCiLow: number;
  observedCiHigh: number;
  /** r / √(rel_brain · rel_trait); not clipped, so a value beyond ±1 stays visible. */
  corrected: number;
  /** The observed interval bounds divided the same way, clipped to [−1, 1]. */
  correctedCiLow: number;
  correctedCiHigh: number;
  /** The largest observed correlation the reliabilities allow, √(rel_brain · rel_trait). */
  ceiling: number;
  /** Plain-words caution, or null when none applies. */
  caution: string | null;
}

/** Share of the ceiling above which an observed correlation counts as "near the ceiling" (common practice, no source). */
export const NEAR_CEILING_SHARE = 0.9;

function clip(x: number): number {
  return Math.max(-1, Math.min(1, x));
}

/**
 * Spearman's correction for attenuation (Spearman 1904, American Journal of
 * Psychology 15:72–101): r_c = r / √(rel_brain · rel_trait).
 *
 * Interval: the Fisher z interval of r (Fisher 1921), tanh(atanh(r) ± z_{1−α/2}
 * / √(n − 3)), with each bound divided by the same √(rel_brain · rel_trait)
 * and clipped to [−1, 1]; this treats the reliabilities as known
 * (Hunter & Schmidt 2004, Methods of Meta-Analysis, 2nd ed., ch. 3).
 *
 * Caution when |r_c| > 1 (the reliabilities are too low for the observed r,
 * or r is inflated by chance) or when |r| ≥ 0.9 of the ceiling.
 *
 * Cost O(1). Preconditions: −1 < r < 1, integer n ≥ 4, reliabilities in
 * (0, 1], 0 < level < 1. Throws StatsError naming the field otherwise.
 */
export function correctForAttenuation(input: AttenuationInput): AttenuationResult {
  const { r, n, reliabilityBrain, reliabilityTrait } = input;
  const level = input.level ?? 0.95;
  if (!(Number.isFinite(r) && r > -1 && r < 1))
    throw new StatsError(
      `correctForAttenuation requires a correlation r between −1 and 1 (got ${r})`,
    );
  if (!(Number.isInteger(n) && n >= 4))
    throw new StatsError(`correctForAttenuation requires n of at least 4 participants (got ${n})`);
  for (const [name, value] of [
    ["reliabilityBrain", reliabilityBrain],
    ["reliabilityTrait", reliabilityTrait],
  ] as const) {
    if (!(value > 0 && value <= 1))
      throw new StatsError(
        `correctForAttenuation requires ${name} greater than 0 and at most 1 (got ${value})`,
      );
  }
  if (!(level > 0 && level < 1))
    throw new StatsError(
      `correctForAttenuation requires a confidence level between 0 and 1 (got ${level})`,
    );

  const ceiling = Math.sqrt(reliabilityBrain * reliabilityTrait);
  const half = normalQuantile(0.5 + level / 2) / Math.sqrt(n - 3);
  const z = Math.atanh(r);
  const observedCiLow = Math.tanh(z - half);
  const observedCiHigh = Math.tanh(z + half);
  const corrected = r / ceiling;

  let caution: string | null = null;
  if (Math.abs(corrected) > 1) {
    caution =
      `The corrected correlation (${corrected.toFixed(2)}) is larger than 1 in size, which no true correlation can be. ` +
      "The reliabilities are probably underestimated, or the observed correlation is inflated by chance; report the observed correlation and its interval.";
  } else if (Math.abs(r) >= NEAR_CEILING_SHARE * ceiling) {
    caution =
      `The observed correlation (${r.toFixed(2)}) is close to the largest value these reliabilities allow (${ceiling.toFixed(2)}). ` +
      "The corrected value is then very sensitive to the reliability estimates; treat it with caution.";
  }
  return {
    observed: r,
    observedCiLow,
    observedCiHigh,
    corrected,
    correctedCiLow: clip(observedCiLow / ceiling),
    correctedCiHigh: clip(observedCiHigh / ceiling),
    ceiling,
    caution,
  };
}
