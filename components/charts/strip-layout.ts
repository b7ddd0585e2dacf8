/**
 * Layout of a strip plot: which group each participant belongs to, where in
 * the group's column their mark sits (deterministic jitter from the id), and
 * the count per group for the group labels. Points sit in the left part of
 * each column and the group's mean and interval to their right.
 */
import { scaleLinear } from "d3-scale";
import { chart } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError, requireFinite } from "./chart-input-error";
import type { ParticipantMark, PlacedMark } from "./chart-types";
import { jitterUnit } from "./jitter";
import { type LegendEntry, markEntries } from "./legend-entries";
import { describePoint, legendItemsFor } from "./marks";
import { formatCount } from "./number-format";
import {
  leftMarginFor,
  paddedExtent,
  plotArea,
  type PlotArea,
  truncateLabel,
  type Viewport,
} from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface StripGroupInput {
  key: string;
  /** The group's name; the layout adds its N, e.g. "patient (n = 36)". */
  label: string;
  /** The group's N in the fit; the count of its placed points when absent. */
  n?: number;
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

export interface StripPoint extends ParticipantMark {
  /** Key of the participant's group. */
  group: string;
  /** Contrast value (null when missing). */
  value: number | null;
}

export interface StripInput {
  /** One group (one-sample) or two; mean and interval come from the fit. */
  groups: readonly StripGroupInput[];
  points: readonly StripPoint[];
  /** Vertical axis title with unit, e.g. "Contrast value (a.u.)". */
  valueLabel: string;
  /** Short name for accessible labels ("contrast"). */
  valueName?: string;
  /** Interval words for the legend, e.g. "mean and 95% CI". */
  summaryLabel?: string;
}

/** A group's column: its label under the axis, its mean bar and its interval's whisker. */
export interface StripColumn {
  key: string;
  label: string;
  labelX: number;
  labelY: number;
  /** Horizontal place of the summary, the mean bar's half-width, and vertical places. */
  sx: number;
  half: number;
  meanY: number;
  lowY: number | null;
  highY: number | null;
}

export interface StripPlotLayout {
  area: PlotArea;
  yAxis: AxisInput;
  zeroY: number;
  columns: StripColumn[];
  marks: PlacedMark[];
  /** Half-width of the whisker's end caps. */
  cap: number;
}

export const stripAspect = 1.25;

/** The participants drawn (a finite value); [] when the input is bad. */
export function stripShown(input: StripInput): StripPoint[] {
  const { placements } = stripLayout(input.groups, input.points);
  return input.points.filter((p) => placements.has(p.id));
}

/** The legend: marks present, then the groups' mean and interval. */
export function stripLegend(input: StripInput): LegendEntry[] {
  return [
    ...markEntries(legendItemsFor(stripShown(input))),
    { kind: "line", label: input.summaryLabel ?? "mean and 95% CI", colour: chart.estimate },
  ];
}

/** The plot's accessible description with each group's count. */
export function stripDescription(input: StripInput, counts: readonly number[] | null): string {
  const groupWords = input.groups
    .map((g, i) => `${g.label} (n = ${g.n ?? (counts ? counts[i] : 0)})`)
    .join(" and ");
  return `Strip plot of ${input.valueLabel} for ${groupWords}, each group's mean and interval beside its points, with a line at zero.`;
}

/** The whole layout in a drawing of `viewport` size. Throws ChartInputError on bad input. Cost O(n). */
export function stripPlotLayout(input: StripInput, viewport: Viewport): StripPlotLayout {
  const { groups } = input;
  const layout = stripLayout(groups, input.points);
  const shown = input.points.filter((p) => layout.placements.has(p.id));
  const valueName = input.valueName ?? "contrast";
  const yCount = tickCountFor(viewport.height - 60, 44);
  const yDomain = niceDomain(
    paddedExtent(
      [...shown.map((p) => p.value), ...groups.flatMap((g) => [g.mean, g.low, g.high])],
      { include: [0] },
    ),
    yCount,
  );
  const yTicks = tickValues(yDomain, yCount);
  const yLabels = formatTicks(yTicks);
  const area = plotArea(viewport, {
    top: 10,
    right: 10,
    bottom: chart.tickText + chart.labelText + 18,
    left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
  });
  const y = scaleLinear().domain(yDomain).range([area.bottom, area.top]);
  const column = area.width / groups.length;
  const centre = (g: number) => area.left + column * (g + 0.5);
  const marks = shown.map((p) => {
    const place = layout.placements.get(p.id) as StripPlacement;
    return {
      ...p,
      cx: centre(place.group) + place.offset * column,
      cy: y(p.value as number),
      label: `${describePoint(p, [{ name: valueName, value: p.value }])} (${groups[place.group].label})`,
    };
  });
  const columns = groups.map((g, i) => ({
    key: g.key,
    label: truncateLabel(
      `${g.label} (n = ${formatCount(g.n ?? layout.counts[i])})`,
      column - 8,
      chart.tickText,
    ),
    labelX: centre(i),
    labelY: area.bottom + chart.tickText + 6,
    sx: centre(i) + stripGeometry.summary * column,
    half: stripGeometry.meanHalfWidth * column,
    meanY: y(g.mean),
    lowY: g.low !== null && g.high !== null ? y(g.low) : null,
    highY: g.low !== null && g.high !== null ? y(g.high) : null,
  }));
  return {
    area,
    yAxis: {
      orientation: "left",
      area,
      scale: y,
      ticks: yTicks,
      labels: yLabels,
      title: input.valueLabel,
      grid: true,
    },
    zeroY: y(0),
    columns,
    marks,
    cap: 4,
  };
}
