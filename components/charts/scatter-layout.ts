/**
 * Layout of the scatter plot of a trait against the contrast value: which
 * participants are drawn (both values present), the scales, ticks and axis
 * titles, every mark's place and accessible name, the fitted line and its
 * band as path data, the legend entries and the plot's description. The
 * screen's `ScatterPlot` and the figure writer (server/figures/) draw from
 * this one layout. Pure: no React, no SVG.
 */
import { scaleLinear } from "d3-scale";
import { chart, markRoles } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError } from "./chart-input-error";
import type { PlacedMark, ParticipantMark } from "./chart-types";
import { type LegendEntry, markEntries } from "./legend-entries";
import { describePoint, legendItemsFor } from "./marks";
import { type BandPoint, bandPath, linePath } from "./paths";
import { leftMarginFor, paddedExtent, plotArea, type PlotArea, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface ScatterPoint extends ParticipantMark {
  /** Trait value (null when missing). */
  x: number | null;
  /** Contrast value (null when missing). */
  y: number | null;
}

export interface ScatterInput {
  points: readonly ScatterPoint[];
  /** Fitted line and its band at increasing x: { x, fit, low, high }. */
  band?: readonly BandPoint[];
  /** Axis titles with units, e.g. "Age (years)", "Contrast value (a.u.)". */
  xLabel: string;
  yLabel: string;
  /** Short names for accessible labels: "sub-12: age 31, contrast 0.42". */
  xName?: string;
  yName?: string;
  /** Legend words for the band, e.g. "95% confidence band". */
  bandLabel?: string;
}

/** A participant's mark placed in the drawing. */
export type PlacedPoint = PlacedMark;

export interface ScatterLayout {
  area: PlotArea;
  xAxis: AxisInput;
  yAxis: AxisInput;
  marks: PlacedPoint[];
  /** Path data of the band and of the fitted line ("" when there is no band). */
  bandPath: string;
  linePath: string;
}

export const scatterAspect = 1.25;

type Shown = ScatterPoint & { x: number; y: number };

const isFiniteNumber = (v: number | null): v is number => v !== null && Number.isFinite(v);

/** Checks the ids (present, distinct); throws a ChartInputError naming the field. */
export function checkScatter(points: readonly ScatterPoint[]): void {
  const seen = new Set<string>();
  points.forEach((p, i) => {
    if (!p.id) throw new ChartInputError(`points[${i}].id`, "must name a participant");
    if (seen.has(p.id))
      throw new ChartInputError(`points[${i}].id`, `"${p.id}" appears more than once`);
    seen.add(p.id);
  });
}

/** The participants drawn: those with both values. */
export function scatterShown(points: readonly ScatterPoint[]): Shown[] {
  return points.filter((p): p is Shown => isFiniteNumber(p.x) && isFiniteNumber(p.y));
}

/** The legend: marks present, then the fitted line and its band when there is one. */
export function scatterLegend(input: ScatterInput): LegendEntry[] {
  const entries = markEntries(legendItemsFor(scatterShown(input.points)));
  if ((input.band ?? []).length > 0) {
    entries.push({ kind: "line", label: "fitted line", colour: markRoles.fit });
    entries.push({
      kind: "band",
      label: input.bandLabel ?? "95% confidence band",
      colour: markRoles.band,
    });
  }
  return entries;
}

/** The plot's accessible description, counting participants left out for a missing value. */
export function scatterDescription(input: ScatterInput): string {
  const shown = scatterShown(input.points).length;
  const hidden = input.points.length - shown;
  return (
    `Scatter plot of ${input.yLabel} against ${input.xLabel} for ${shown} participant${shown === 1 ? "" : "s"}` +
    ((input.band ?? []).length > 0 ? ", with the fitted line and its band" : "") +
    (hidden > 0 ? `; ${hidden} without both values not shown` : "") +
    "."
  );
}

/** The whole layout in a drawing of `viewport` size. Cost O(n + band). */
export function scatterLayout(input: ScatterInput, viewport: Viewport): ScatterLayout {
  const shown = scatterShown(input.points);
  const band = input.band ?? [];
  const xName = input.xName ?? "trait";
  const yName = input.yName ?? "contrast";
  const yCount = tickCountFor(viewport.height - 60, 44);
  const yDomain = niceDomain(
    paddedExtent([...shown.map((p) => p.y), ...band.flatMap((b) => [b.low, b.high, b.fit])]),
    yCount,
  );
  const yTicks = tickValues(yDomain, yCount);
  const yLabels = formatTicks(yTicks);
  const left = leftMarginFor(yLabels, chart.tickText, chart.labelText);
  const area = plotArea(viewport, {
    top: 10,
    right: 14,
    bottom: chart.tickText + chart.labelText + 18,
    left,
  });
  const xCount = tickCountFor(area.width);
  const xDomain = niceDomain(
    paddedExtent([...shown.map((p) => p.x), ...band.map((b) => b.x)]),
    xCount,
  );
  const xTicks = tickValues(xDomain, xCount);
  const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
  const y = scaleLinear().domain(yDomain).range([area.bottom, area.top]);
  const marks = shown.map((p) => ({
    ...p,
    cx: x(p.x),
    cy: y(p.y),
    label: describePoint(p, [
      { name: xName, value: p.x },
      { name: yName, value: p.y },
    ]),
  }));
  const sorted = band.slice().sort((a, b) => a.x - b.x);
  return {
    area,
    yAxis: {
      orientation: "left",
      area,
      scale: y,
      ticks: yTicks,
      labels: yLabels,
      title: input.yLabel,
      grid: true,
    },
    xAxis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks: xTicks,
      labels: formatTicks(xTicks),
      title: input.xLabel,
    },
    marks,
    bandPath: band.length > 1 ? bandPath(band, x, y) : "",
    linePath:
      band.length > 1
        ? linePath(
            sorted.map((b) => ({ x: b.x, y: b.fit })),
            x,
            y,
          )
        : "",
  };
}
