/**
 * Layout of a prediction fit's learning curve: held-out r and r² against
 * the number of training rows, each with its spread over repeats (± one
 * standard deviation) as a band, a dashed line at zero, the legend and the
 * plot's words. The screen's `LearningCurvePlot` and the figure writer
 * (server/figures/) draw from this one layout. Pure: no React, no SVG.
 */
import { scaleLinear } from "d3-scale";
import type { LearningCurvePoint } from "../../contract/prediction";
import { type CurvePoint, curveSeries } from "../fit/prediction-layout";
import { chart, marks } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError } from "./chart-input-error";
import type { LegendEntry } from "./legend-entries";
import { formatCount, formatFixed } from "./number-format";
import { bandPath, linePath } from "./paths";
import { leftMarginFor, paddedExtent, type PlotArea, plotArea, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export const learningCurveAspect = 1.5;

/** The two series' colours and band opacities. */
export const learningCurveStyle = {
  r: { colour: marks.blue, bandOpacity: 0.18 },
  r2: { colour: marks.vermillion, bandOpacity: 0.14 },
} as const;

export interface LearningCurveSeries {
  r: CurvePoint[];
  r2: CurvePoint[];
}

export interface PlacedCurvePoint extends CurvePoint {
  cx: number;
  cy: number;
}

export interface LearningCurveLayout {
  area: PlotArea;
  xAxis: AxisInput;
  yAxis: AxisInput;
  zero: { x1: number; x2: number; y: number };
  /** Band (value ± spread) and line path of each series, and its placed points. */
  r: { band: string; line: string; points: PlacedCurvePoint[] };
  r2: { band: string; line: string; points: PlacedCurvePoint[] };
}

/** Both series; throws a `ChartInputError` naming `learningCurve…` when there is nothing to draw. */
export function learningCurveSeries(points: readonly LearningCurvePoint[]): LearningCurveSeries {
  const r = curveSeries(points, "r");
  const r2 = curveSeries(points, "r2");
  if (r.length === 0 && r2.length === 0)
    throw new ChartInputError("learningCurve", "holds no scores");
  return { r, r2 };
}

function hasBand(points: readonly LearningCurvePoint[]): boolean {
  return points.some((p) => p.rSpread !== null || p.r2Spread !== null);
}

/** The plot's accessible description (the screen's label and the figure's <desc>). */
export function learningCurveDescription(points: readonly LearningCurvePoint[]): string {
  const sizes = [...points]
    .sort((a, b) => a.trainingRows - b.trainingRows)
    .map(
      (p) =>
        `${formatCount(p.trainingRows)} rows: r ${formatFixed(p.r, 2)}, r² ${formatFixed(p.r2, 2)}`,
    );
  return `Learning curve: held-out r and r² against the number of training rows${hasBand(points) ? ", with the spread over repeats as bands" : ""}.${sizes.length > 0 ? ` ${sizes.join("; ")}.` : ""}`;
}

/** The legend: both lines and, with more than one repeat, the band. */
export function learningCurveLegend(points: readonly LearningCurvePoint[]): LegendEntry[] {
  const entries: LegendEntry[] = [
    { kind: "line", label: "r", colour: learningCurveStyle.r.colour },
    { kind: "line", label: "r²", colour: learningCurveStyle.r2.colour, dashed: true },
  ];
  if (hasBand(points))
    entries.push({ kind: "band", label: "± SD over repeats", colour: "rgba(0,114,178,0.18)" });
  return entries;
}

/** The whole layout in a drawing of `viewport` size. Throws as `learningCurveSeries`. Cost O(n log n). */
export function learningCurveLayout(
  points: readonly LearningCurvePoint[],
  viewport: Viewport,
): LearningCurveLayout {
  const series = learningCurveSeries(points);
  const all = [...series.r, ...series.r2];
  const yCount = tickCountFor(viewport.height - 50, 30);
  const yDomain = niceDomain(
    paddedExtent(
      all.flatMap((p) => [p.low, p.high]),
      { include: [0], pad: 0.05 },
    ),
    yCount,
  );
  const yTicks = tickValues(yDomain, yCount);
  const yLabels = formatTicks(yTicks);
  const area = plotArea(viewport, {
    top: 10,
    right: 16,
    bottom: chart.tickText + chart.labelText + 18,
    left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
  });
  const xCount = tickCountFor(area.width);
  const xDomain = niceDomain([0, Math.max(...all.map((p) => p.x))], xCount);
  const xTicks = tickValues(xDomain, xCount);
  const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
  const y = scaleLinear().domain(yDomain).range([area.bottom, area.top]);
  const placed = (pts: readonly CurvePoint[]) => ({
    band: bandPath(
      pts.map((p) => ({ x: p.x, fit: p.value, low: p.low, high: p.high })),
      x,
      y,
    ),
    line: linePath(
      pts.map((p) => ({ x: p.x, y: p.value })),
      x,
      y,
    ),
    points: pts.map((p) => ({ ...p, cx: x(p.x), cy: y(p.value) })),
  });
  return {
    area,
    yAxis: {
      orientation: "left",
      area,
      scale: y,
      ticks: yTicks,
      labels: yLabels,
      title: "Held-out score",
      grid: true,
    },
    xAxis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks: xTicks,
      labels: xTicks.map((t) => formatCount(t)),
      title: "Training rows",
    },
    zero: { x1: area.left, x2: area.right, y: y(0) },
    r: placed(series.r),
    r2: placed(series.r2),
  };
}
