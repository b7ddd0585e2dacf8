/**
 * Layout of a strip plot: which group each participant belongs to, where in
 * the group's column their mark sits (deterministic jitter from the id), and
 * the count per group for the group labels. Points sit in the left part of
 * each column and the group's mean and interval to their right.
 */
import { ChartInputError, requireFinite } from "./chart-input-error";
import { jitterUnit } from "./jitter";

export interface StripGroupInput {
  key: string;
  label: string;
  mean: number;
  low: number | null;
  high: number | null;
}

export interface StripPointInput {
  id: string;
  group: string;
  value: number | null;
}

/** Column geometry as fractions of the column width, measured from its centre. */
export const stripGeometry = {
  /** Centre of the point cloud. */
  cloudCentre: -0.12,
  /** Half-width of the jitter. */
  cloudHalfWidth: 0.2,
  /** Where the mean and interval are drawn. */
  summary: 0.28,
  /** Half-width of the mean's bar. */
  meanHalfWidth: 0.09,
} as const;

export interface StripPlacement {
  /** Index into `groups`. */
  group: number;
  /** Offset from the column centre, as a fraction of the column width. */
  offset: number;
}

/**
 * Checks the groups (one or two, distinct keys, finite mean, low ≤ high)
 * and the points (known group, distinct ids), then places every point with a
 * finite value. Throws a `ChartInputError` naming the field. Cost O(n).
 */
export function stripLayout(
  groups: readonly StripGroupInput[],
  points: readonly StripPointInput[],
): { placements: Map<string, StripPlacement>; counts: number[] } {
  if (groups.length < 1 || groups.length > 2)
    throw new ChartInputError("groups", `must hold one or two groups (got ${groups.length})`);
  const index = new Map<string, number>();
  groups.forEach((g, i) => {
    if (index.has(g.key))
      throw new ChartInputError(`groups[${i}].key`, `"${g.key}" appears more than once`);
    index.set(g.key, i);
    requireFinite(g.mean, `groups[${i}].mean`);
    if (g.low !== null) requireFinite(g.low, `groups[${i}].low`);
    if (g.high !== null) requireFinite(g.high, `groups[${i}].high`);
    if (g.low !== null && g.high !== null && g.low > g.high)
      throw new ChartInputError(`groups[${i}].low`, `is above high (${g.low} > ${g.high})`);
  });
  const placements = new Map<string, StripPlacement>();
  const counts = groups.map(() => 0);
  points.forEach((p, i) => {
    const g = index.get(p.group);
    if (g === undefined)
      throw new ChartInputError(
        `points[${i}].group`,
        `"${p.group}" is not one of the groups (${groups.map((x) => x.key).join(", ")})`,
      );
    if (placements.has(p.id))
      throw new ChartInputError(`points[${i}].id`, `"${p.id}" appears more than once`);
    if (p.value === null || !Number.isFinite(p.value)) return;
    placements.set(p.id, {
      group: g,
      offset: stripGeometry.cloudCentre + jitterUnit(p.id) * stripGeometry.cloudHalfWidth,
    });
    counts[g] += 1;
  });
  return { placements, counts };
}
