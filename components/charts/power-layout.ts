/**
 * Layout of a power curve (power against the number of participants): checks
 * the points, orders them by N and reads the curve at any N by linear
 * interpolation between neighbouring points, to place the answer's marker.
 */
import { ChartInputError, requireFinite } from "./chart-input-error";

export interface PowerPoint {
  n: number;
  power: number;
}

/**
 * The points sorted by N after checking that every N is a positive finite
 * number, N values are distinct, and every power lies in [0, 1]. Throws a
 * `ChartInputError` naming `points[i].n` or `points[i].power` (i is the
 * position in the input). Cost O(n log n).
 */
export function checkPowerPoints(points: readonly PowerPoint[]): PowerPoint[] {
  if (points.length === 0) throw new ChartInputError("points", "must hold at least one point");
  points.forEach((p, i) => {
    requireFinite(p.n, `points[${i}].n`);
    requireFinite(p.power, `points[${i}].power`);
    if (p.n <= 0) throw new ChartInputError(`points[${i}].n`, `must be positive (got ${p.n})`);
    if (p.power < 0 || p.power > 1)
      throw new ChartInputError(`points[${i}].power`, `must lie in [0, 1] (got ${p.power})`);
  });
  const sorted = points.map((p) => ({ n: p.n, power: p.power })).sort((a, b) => a.n - b.n);
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i].n === sorted[i - 1].n)
      throw new ChartInputError("points", `N = ${sorted[i].n} appears more than once`);
  }
  return sorted;
}

/**
 * Power at `n` read off sorted `points` by linear interpolation; null when
 * `n` lies outside the curve's N range. Cost O(log n) after sorting.
 */
export function interpolatePower(sorted: readonly PowerPoint[], n: number): number | null {
  if (sorted.length === 0 || !Number.isFinite(n)) return null;
  if (n < sorted[0].n || n > sorted[sorted.length - 1].n) return null;
  let lo = 0;
  let hi = sorted.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid].n <= n) lo = mid;
    else hi = mid;
  }
  const a = sorted[lo];
  const b = sorted[hi];
  if (a.n === n || b.n === a.n) return a.power;
  if (b.n === n) return b.power;
  return a.power + ((b.power - a.power) * (n - a.n)) / (b.n - a.n);
}
