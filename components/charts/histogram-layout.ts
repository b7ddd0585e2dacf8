/**
 * Layout of a permutation null distribution drawn as a histogram: checks the
 * bin edges and counts, marks the bins that lie wholly as far from zero as
 * the observed statistic or farther (in the direction of the test), and
 * widens the horizontal range so the observed statistic is always in view.
 */
import { scaleLinear } from "d3-scale";
import { chart } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError, requireFinite } from "./chart-input-error";
import type { LegendEntry } from "./legend-entries";
import { formatCount, formatP, formatValue } from "./number-format";
import { leftMarginFor, plotArea, type PlotArea, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export type Tail = "two-sided" | "greater" | "less";

export interface HistogramBar {
  x0: number;
  x1: number;
  count: number;
  /** The whole bin is at least as extreme as the observed statistic. */
  extreme: boolean;
}

/**
 * Checks that `edges` has one more entry than `counts`, that edges are finite
 * and strictly increasing, and that counts are whole numbers ≥ 0. Throws a
 * `ChartInputError` naming the field and position.
 */
export function checkHistogram(edges: readonly number[], counts: readonly number[]): void {
  if (counts.length === 0) throw new ChartInputError("counts", "must hold at least one bin");
  if (edges.length !== counts.length + 1) {
    throw new ChartInputError(
      "edges",
      `must have one more entry than counts (got ${edges.length} edges for ${counts.length} counts)`,
    );
  }
  edges.forEach((e, i) => {
    requireFinite(e, "edges", i);
    if (i > 0 && !(e > edges[i - 1]))
      throw new ChartInputError(
        "edges",
        `must increase strictly (${e} follows ${edges[i - 1]})`,
        i,
      );
  });
  counts.forEach((c, i) => {
    if (!(Number.isInteger(c) && c >= 0))
      throw new ChartInputError("counts", `must be a whole number of at least 0 (got ${c})`, i);
  });
}

/** True when the whole interval [x0, x1] lies at least as far out as `observed` in the test's direction. */
export function isExtremeBin(x0: number, x1: number, observed: number, tail: Tail): boolean {
  if (tail === "greater") return x0 >= observed;
  if (tail === "less") return x1 <= observed;
  const size = Math.abs(observed);
  return x0 >= size || x1 <= -size;
}

/** The bars of the histogram, in the order of the bins. Cost O(bins). */
export function histogramBars(
  edges: readonly number[],
  counts: readonly number[],
  observed: number,
  tail: Tail = "two-sided",
): HistogramBar[] {
  checkHistogram(edges, counts);
  requireFinite(observed, "observed");
  return counts.map((count, i) => ({
    x0: edges[i],
    x1: edges[i + 1],
    count,
    extreme: isExtremeBin(edges[i], edges[i + 1], observed, tail),
  }));
}

/** Horizontal range covering every bin and the observed statistic, padded by 4% of its length on each side. */
export function histogramDomain(edges: readonly number[], observed: number): [number, number] {
  const lo = Math.min(edges[0], observed);
  const hi = Math.max(edges[edges.length - 1], observed);
  const pad = (hi - lo) * 0.04;
  return [lo - pad, hi + pad];
}

/** Sum of the counts (the number of rearrangements drawn). */
export function totalCount(counts: readonly number[]): number {
  return counts.reduce((s, c) => s + c, 0);
}

export interface NullHistogramInput {
  /** Bin edges, strictly increasing; one more than counts. */
  edges: readonly number[];
  /** Rearrangements per bin. */
  counts: readonly number[];
  /** The statistic of the unpermuted data. */
  observed: number;
  /** The statistic's name, e.g. "t" or "max t over regions". */
  statisticName: string;
  /** The permutation p-value. */
  p: number;
  tail?: Tail;
}

/** What a null histogram says besides its drawing: caption, description and legend. */
export interface NullHistogramWords {
  bars: HistogramBar[];
  /** "Observed t = 2.1, p = 0.034 (10,000 rearrangements, two-sided)" */
  caption: string;
  description: string;
  legend: LegendEntry[];
}

export interface NullHistogramLayout {
  area: PlotArea;
  xAxis: AxisInput;
  yAxis: AxisInput;
  bars: { x: number; y: number; width: number; height: number; extreme: boolean; key: number }[];
  observed: { x: number; y1: number; y2: number };
  observedLabel: { x: number; y: number; text: string; anchor: "start" | "end" };
}

export const nullHistogramAspect = 1.6;

/** Checks the input and gives the bars and the words. Throws ChartInputError on bad input. */
export function nullHistogramWords(input: NullHistogramInput): NullHistogramWords {
  const tail = input.tail ?? "two-sided";
  requireFinite(input.p, "p");
  if (input.p < 0 || input.p > 1)
    throw new ChartInputError("p", `must lie in [0, 1] (got ${input.p})`);
  const bars = histogramBars(input.edges, input.counts, input.observed, tail);
  const total = formatCount(totalCount(input.counts));
  const caption = `Observed ${input.statisticName} = ${formatValue(input.observed)}, ${formatP(input.p)} (${total} rearrangements, ${tail === "two-sided" ? "two-sided" : "one-sided"})`;
  return {
    bars,
    caption,
    description: `Histogram of ${input.statisticName} over ${total} rearrangements of the data, with the observed value marked. ${caption}.`,
    legend: [
      { kind: "band", label: "rearrangements", colour: chart.bar },
      { kind: "band", label: "as or more extreme than observed", colour: chart.barExtreme },
      { kind: "line", label: `observed ${input.statisticName}`, colour: chart.observed },
    ],
  };
}

/** The drawing's layout in `viewport`. Throws ChartInputError on bad input. Cost O(bins). */
export function nullHistogramLayout(
  input: NullHistogramInput,
  viewport: Viewport,
): NullHistogramLayout {
  const { bars } = nullHistogramWords(input);
  const maxCount = Math.max(1, ...bars.map((b) => b.count));
  const yCount = tickCountFor(viewport.height - 60, 40);
  const yDomain = niceDomain([0, maxCount], yCount);
  const yTicks = tickValues(yDomain, yCount).filter((t) => Number.isInteger(t));
  const yLabels = yTicks.map((t) => formatCount(t));
  const area = plotArea(viewport, {
    top: 18,
    right: 14,
    bottom: chart.tickText + chart.labelText + 18,
    left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
  });
  const xDomain = histogramDomain(input.edges, input.observed);
  const xTicks = tickValues(xDomain, tickCountFor(area.width));
  const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
  const y = scaleLinear().domain(yDomain).range([area.bottom, area.top]);
  const ox = x(input.observed);
  const labelOnLeft = ox > (area.left + area.right) / 2;
  return {
    area,
    yAxis: {
      orientation: "left",
      area,
      scale: y,
      ticks: yTicks,
      labels: yLabels,
      title: "Rearrangements",
      grid: true,
    },
    xAxis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks: xTicks,
      labels: formatTicks(xTicks),
      title: input.statisticName,
    },
    bars: bars.map((b) => ({
      key: b.x0,
      x: x(b.x0) + 0.5,
      y: y(b.count),
      width: Math.max(0.5, x(b.x1) - x(b.x0) - 1),
      height: Math.max(0, area.bottom - y(b.count)),
      extreme: b.extreme,
    })),
    observed: { x: ox, y1: area.top - 8, y2: area.bottom },
    observedLabel: {
      x: labelOnLeft ? ox - 4 : ox + 4,
      y: area.top - 6,
      text: `observed ${formatValue(input.observed)}`,
      anchor: labelOnLeft ? "end" : "start",
    },
  };
}
