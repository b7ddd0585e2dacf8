/**
 * Invented data for the permutation tests of whole fits (a seeded
 * generator; not a reference data set): `n` participants, four regions,
 * numeric columns age and motion, a two-level group (every third
 * participant a patient) and a two-level sex column.
 */
import type { FitData } from "../../../contract/spec";
import { createRng } from "../../../server/stats/rng";

export const permutationRegions = [
  "left insula",
  "right insula",
  "precuneus",
  "left amygdala",
] as const;

export function permutationData(n: number, seed: number): FitData {
  const rng = createRng(seed);
  const normal = () => {
    let s = 0;
    for (let i = 0; i < 12; i++) s += rng.next();
    return s - 6;
  };
  const participants = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
  const age: (number | null)[] = participants.map(() => 20 + Math.floor(rng.next() * 40));
  const motion: (number | null)[] = participants.map(() => Math.round(rng.next() * 100) / 100);
  const group: (string | null)[] = participants.map((_, i) =>
    i % 3 === 0 ? "patient" : "control",
  );
  const sex: (string | null)[] = participants.map(() => (rng.next() < 0.5 ? "F" : "M"));
  const values = permutationRegions.map((_, r) =>
    Float64Array.from(
      participants,
      (_, i) =>
        0.3 +
        0.02 * r * ((age[i] as number) - 40) +
        (group[i] === "patient" ? 0.4 * (r % 2) : 0) +
        normal(),
    ),
  );
  return {
    participants,
    regions: [...permutationRegions],
    values,
    numericColumns: { age, motion },
    categoricalColumns: { group, sex },
  };
}

/** A copy of `data` with the given cells emptied (NaN): [region index, participant index]. */
export function withEmptyCells(
  data: FitData,
  cells: readonly (readonly [number, number])[],
): FitData {
  const values = data.values.map((v) => Float64Array.from(v));
  for (const [r, i] of cells) values[r][i] = Number.NaN;
  return { ...data, values };
}
