/**
 * SVG path data for lines and bands, from data points and two scales.
 * Points with a missing coordinate break the line (a gap) rather than
 * joining across it.
 */
import { round2 } from "./marks";

export type Scale = (value: number) => number;

/** Path data of a polyline through (x, y) points in the given order; a non-finite point starts a new piece. */
export function linePath(
  points: readonly { x: number; y: number }[],
  sx: Scale,
  sy: Scale,
): string {
  let d = "";
  let pen = false;
  for (const p of points) {
    if (!Number.isFinite(p.x) || !Number.isFinite(p.y)) {
      pen = false;
      continue;
    }
    d += `${pen ? "L" : "M"}${round2(sx(p.x))},${round2(sy(p.y))}`;
    pen = true;
  }
  return d;
}

export interface BandPoint {
  x: number;
  fit: number;
  low: number;
  high: number;
}

/**
 * Path data of a closed band: along `high` in ascending x, then back along
 * `low`. Points are sorted by x first; points with a non-finite field are
 * left out. Empty when fewer than two points remain. Cost O(n log n).
 */
export function bandPath(band: readonly BandPoint[], sx: Scale, sy: Scale): string {
  const pts = band
    .filter((b) => [b.x, b.low, b.high].every(Number.isFinite))
    .sort((a, b) => a.x - b.x);
  if (pts.length < 2) return "";
  const upper = pts
    .map((b, i) => `${i === 0 ? "M" : "L"}${round2(sx(b.x))},${round2(sy(b.high))}`)
    .join("");
  const lower = pts
    .slice()
    .reverse()
    .map((b) => `L${round2(sx(b.x))},${round2(sy(b.low))}`)
    .join("");
  return `${upper}${lower}Z`;
}
