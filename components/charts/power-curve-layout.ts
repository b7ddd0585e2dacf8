/**
 * Layout of the planner's power curve: power (vertical, as a percentage)
 * against the number of participants N (horizontal), one point per planned
 * N, the target power as a dashed line and the answer N marked where the
 * curve reaches it. Checks the points, orders them by N, reads the curve at
 * any N by linear interpolation, and places axes, path, points, marker,
 * legend entries and the plot's words. The screen's `PowerCurve` and the
 * figure writer (server/figures/) draw from this one layout. Pure: no
 * React, no SVG.
 */
import { scaleLinear } from "d3-scale";
import { chart } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError, requireFinite } from "./chart-input-error";
import type { LegendEntry } from "./legend-entries";
import { formatCount, formatPercent } from "./number-format";
import { linePath } from "./paths";
import { leftMarginFor, plotArea, type PlotArea, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

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

export interface PowerCurveInput {
  /** Power at each N; any order. */
  points: readonly PowerPoint[];
  /** Target power, e.g. 0.8. */
  targetPower: number;
  /** The N the planner recommends, or null when no N on the curve reaches the target. */
  answerN: number | null;
  /** Horizontal axis title, default "Participants (N)". */
  nLabel?: string;
}

export interface PlacedPowerPoint extends PowerPoint {
  cx: number;
  cy: number;
  /** "N = 120: power 81%" */
  words: string;
}

export interface PowerCurveLayout {
  area: PlotArea;
  xAxis: AxisInput;
  yAxis: AxisInput;
  /** The target line across the plot. */
  target: { x1: number; x2: number; y: number };
  /** Path data of the curve through the points in order of N. */
  curvePath: string;
  points: PlacedPowerPoint[];
  /** The answer's marker: a dashed drop line, a dot where the curve reaches it, its label. */
  answer: {
    x: number;
    y1: number;
    y2: number;
    dot: { cx: number; cy: number } | null;
    label: { x: number; y: number; text: string; anchor: "start" | "end" };
  } | null;
}

export const powerCurveAspect = 1.5;

/** Radius of the point drawn at each planned N. */
export const powerPointRadius = 2.5;

/**
 * Checks the whole input and returns the points sorted by N; throws a
 * `ChartInputError` naming `targetPower`, `answerN` or `points[i]…`.
 */
export function checkPowerCurve(input: PowerCurveInput): PowerPoint[] {
  requireFinite(input.targetPower, "targetPower");
  if (input.targetPower <= 0 || input.targetPower >= 1)
    throw new ChartInputError(
      "targetPower",
      `must lie strictly between 0 and 1 (got ${input.targetPower})`,
    );
  if (input.answerN !== null) {
    requireFinite(input.answerN, "answerN");
    if (input.answerN <= 0)
      throw new ChartInputError("answerN", `must be positive (got ${input.answerN})`);
  }
  return checkPowerPoints(input.points);
}

/** The answer in words: "N = 120 reaches 80% power" or "no N on the curve reaches 80% power". */
function answerWords(input: PowerCurveInput): string {
  const target = formatPercent(input.targetPower);
  return input.answerN !== null
    ? `N = ${formatCount(input.answerN)} reaches ${target} power`
    : `no N on the curve reaches ${target} power`;
}

/** The plot's accessible description (the screen's label and the figure's <desc>). */
export function powerCurveDescription(input: PowerCurveInput): string {
  const target = formatPercent(input.targetPower);
  const count = input.points.length;
  return `Power curve: power against the number of participants at ${count} planned N${count === 1 ? "" : "s"}, with the ${target} target marked; ${answerWords(input)}.`;
}

/** The legend: the curve, the target line and, when there is one, the answer's line. */
export function powerCurveLegend(input: PowerCurveInput): LegendEntry[] {
  const entries: LegendEntry[] = [
    { kind: "line", label: "power", colour: chart.curve },
    {
      kind: "line",
      label: `target ${formatPercent(input.targetPower)}`,
      colour: chart.reference,
      dashed: true,
    },
  ];
  if (input.answerN !== null)
    entries.push({
      kind: "line",
      label: `N = ${formatCount(input.answerN)}`,
      colour: chart.estimate,
      dashed: true,
    });
  return entries;
}

/** The whole layout in a drawing of `viewport` size. Throws as `checkPowerCurve`. Cost O(n log n). */
export function powerCurveLayout(input: PowerCurveInput, viewport: Viewport): PowerCurveLayout {
  const sorted = checkPowerCurve(input);
  const yTicks = [0, 0.2, 0.4, 0.6, 0.8, 1];
  const yLabels = formatTicks(yTicks, { scale: 100, suffix: "%" });
  const area = plotArea(viewport, {
    top: 12,
    right: 16,
    bottom: chart.tickText + chart.labelText + 18,
    left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
  });
  const nMax = Math.max(sorted[sorted.length - 1].n, input.answerN ?? 0);
  const xCount = tickCountFor(area.width);
  const xDomain = niceDomain([0, nMax], xCount);
  const xTicks = tickValues(xDomain, xCount);
  const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
  const y = scaleLinear().domain([0, 1]).range([area.bottom, area.top]);
  let answer: PowerCurveLayout["answer"] = null;
  if (input.answerN !== null) {
    const ax = x(input.answerN);
    const answerPower = interpolatePower(sorted, input.answerN);
    const top = answerPower !== null ? y(answerPower) : area.top;
    const right = ax > (area.left + area.right) / 2;
    answer = {
      x: ax,
      y1: area.bottom,
      y2: top,
      dot: answerPower !== null ? { cx: ax, cy: top } : null,
      label: {
        x: right ? ax - 6 : ax + 6,
        y: top + 16,
        text: `N = ${formatCount(input.answerN)}`,
        anchor: right ? "end" : "start",
      },
    };
  }
  return {
    area,
    yAxis: {
      orientation: "left",
      area,
      scale: y,
      ticks: yTicks,
      labels: yLabels,
      title: "Power",
      grid: true,
    },
    xAxis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks: xTicks,
      labels: xTicks.map((t) => formatCount(t)),
      title: input.nLabel ?? "Participants (N)",
    },
    target: { x1: area.left, x2: area.right, y: y(input.targetPower) },
    curvePath: linePath(
      sorted.map((p) => ({ x: p.n, y: p.power })),
      x,
      y,
    ),
    points: sorted.map((p) => ({
      ...p,
      cx: x(p.n),
      cy: y(p.power),
      words: `N = ${formatCount(p.n)}: power ${formatPercent(p.power)}`,
    })),
    answer,
  };
}
