/**
 * Axis ticks: "nice" round values (steps of 1, 2 or 5 times a power of ten,
 * the rule d3-scale implements) and their labels, printed with just enough
 * decimals to tell neighbouring ticks apart.
 */
import { scaleLinear } from "d3-scale";
import { formatFixed } from "./number-format";

export type Domain = readonly [number, number];

/** About how many ticks fit along `lengthPx` pixels with at least `spacingPx` between them (at least 2). */
export function tickCountFor(lengthPx: number, spacingPx = 56): number {
  if (!(lengthPx > 0) || !(spacingPx > 0)) return 2;
  return Math.max(2, Math.floor(lengthPx / spacingPx));
}

/** Widens `domain` outwards to round values so the first and last ticks sit on its ends. */
export function niceDomain(domain: Domain, count: number): [number, number] {
  const [a, b] = scaleLinear().domain([domain[0], domain[1]]).nice(count).domain();
  return [a, b];
}

/** About `count` round tick values inside `domain`, ascending. */
export function tickValues(domain: Domain, count: number): number[] {
  const lo = Math.min(domain[0], domain[1]);
  const hi = Math.max(domain[0], domain[1]);
  return scaleLinear().domain([lo, hi]).ticks(count);
}

/**
 * The fewest decimals (0–12) that write `step` exactly: 5 → 0, 0.2 → 1,
 * 0.05 → 2, 2.5 → 1. Cost O(1).
 */
export function stepDecimals(step: number): number {
  const size = Math.abs(step);
  if (!Number.isFinite(size) || size === 0) return 0;
  for (let d = 0; d <= 12; d++) {
    const scaled = size * 10 ** d;
    if (Math.abs(scaled - Math.round(scaled)) <= 1e-9 * Math.max(1, scaled)) return d;
  }
  return 12;
}

/**
 * Labels for ascending, evenly spaced tick values: every label gets the
 * decimals of the step, so [0, 0.5, 1] prints "0.0", "0.5", "1.0", and
 * negative ticks use the minus sign. Optional `suffix` (for example "%")
 * is appended to each label.
 */
export function formatTicks(
  ticks: readonly number[],
  options: { scale?: number; suffix?: string } = {},
): string[] {
  const scale = options.scale ?? 1;
  const suffix = options.suffix ?? "";
  const step =
    ticks.length > 1 ? (ticks[1] - ticks[0]) * scale : ticks.length === 1 ? ticks[0] * scale : 0;
  const decimals = stepDecimals(step);
  return ticks.map((t) => formatFixed(t * scale, decimals) + suffix);
}
