/**
 * The words of the attenuation note beside an association result: the
 * observed r with its interval, the largest r the two measures allow
 * (√(rel_brain · rel_trait)), the corrected r with its interval, and the
 * plain-words caution. Kept free of React Native so it can be tested alone.
 *
 * Bad input (a reliability outside (0, 1], a correlation outside [−1, 1], an
 * interval that does not hold its value) throws a `ChartInputError` naming
 * the field.
 */
import type { Attenuation } from "../../contract/views/fits";
import { ChartInputError, requireFinite } from "../charts/chart-input-error";
import { formatFixed } from "../charts/number-format";

/** The attenuation object a fit's association region carries (contract/views/fits.ts). */
export type AttenuationInput = Attenuation;

export interface AttenuationWords {
  observed: string;
  ceiling: string;
  corrected: string;
  /** How the ceiling is made: "√(0.62 × 0.81) = 0.71". */
  ceilingWorking: string;
  reliabilities: string;
  caution: string | null;
  method: string;
}

const r2 = (x: number) => formatFixed(x, 2);

function interval(low: number, high: number): string {
  return `95% CI ${r2(low)} to ${r2(high)}`;
}

/** Checks the attenuation object and words it. Throws ChartInputError on bad input. */
export function attenuationWords(a: AttenuationInput): AttenuationWords {
  for (const field of ["reliabilityBrain", "reliabilityTrait"] as const) {
    const v = requireFinite(a[field], field);
    if (!(v > 0 && v <= 1))
      throw new ChartInputError(field, `must be greater than 0 and at most 1 (got ${v})`);
  }
  for (const field of [
    "observed",
    "observedCiLow",
    "observedCiHigh",
    "disattenuatedCiLow",
    "disattenuatedCiHigh",
  ] as const) {
    const v = requireFinite(a[field], field);
    if (v < -1 || v > 1) throw new ChartInputError(field, `must lie between −1 and 1 (got ${v})`);
  }
  const ceiling = requireFinite(a.ceiling, "ceiling");
  const corrected = requireFinite(a.disattenuated, "disattenuated");
  if (!(a.observedCiLow <= a.observed && a.observed <= a.observedCiHigh)) {
    throw new ChartInputError(
      "observedCiLow",
      `the interval ${a.observedCiLow} to ${a.observedCiHigh} must hold the observed r ${a.observed}`,
    );
  }
  if (a.disattenuatedCiLow > a.disattenuatedCiHigh) {
    throw new ChartInputError(
      "disattenuatedCiLow",
      `must not exceed disattenuatedCiHigh (${a.disattenuatedCiLow} > ${a.disattenuatedCiHigh})`,
    );
  }
  const form = a.reliabilityBrainForm ?? "brain reliability";
  const trait = a.trait ? `${a.trait}` : "the trait";
  return {
    observed: `Observed r = ${r2(a.observed)} (${interval(a.observedCiLow, a.observedCiHigh)})`,
    ceiling: `Largest r these measures allow: ${r2(ceiling)}`,
    ceilingWorking: `√(${r2(a.reliabilityBrain)} × ${r2(a.reliabilityTrait)}) = ${r2(ceiling)}`,
    corrected: `Corrected for unreliability: r = ${r2(corrected)} (${interval(a.disattenuatedCiLow, a.disattenuatedCiHigh)})`,
    reliabilities: `Brain: ${form} = ${r2(a.reliabilityBrain)} across sessions. ${trait}: ${r2(a.reliabilityTrait)}, as stated (${a.traitSource}).`,
    caution: a.caution,
    method:
      "Spearman's correction for attenuation (1904): r / √(rel_brain · rel_trait); the interval is the observed r's Fisher z interval divided the same way, treating both reliabilities as known.",
  };
}
