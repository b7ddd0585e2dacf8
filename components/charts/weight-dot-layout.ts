/**
 * Layout of a prediction fit's region weights as a sorted dot chart: one
 * row per region (already sorted and cut, see `weightRows` in
 * fit/prediction-layout.ts), its name wrapped onto up to three lines, a
 * stem from zero to the weight, the dot (solid when the sign held in every
 * training fold, faint when it flipped), and the share of folds with the
 * same sign in a column on the right. The screen's `WeightDotPlot` and the
 * figure writer (server/figures/) draw from this one layout. Pure: no
 * React, no SVG.
 */
import { scaleLinear } from "d3-scale";
import {
  consistencyOpacity,
  type WeightRow,
  weightChart,
  weightChartLayout,
} from "../fit/prediction-layout";
import { chart, marks } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError } from "./chart-input-error";
import { formatPercent, formatValue } from "./number-format";
import { chartViewport, paddedExtent, type PlotArea, plotArea, type Viewport } from "./scales";
import { niceDomain, tickCountFor, tickValues, formatTicks } from "./ticks";

/** Space under the rows for the axis. */
const BOTTOM = chart.tickText + chart.labelText + 18;

export const weightColours = { positive: marks.blue, negative: marks.vermillion } as const;

export interface PlacedWeightRow {
  region: string;
  weight: number;
  signConsistency: number;
  /** Stripe behind every second row. */
  stripe: { y: number; height: number } | null;
  /** The name's lines with their baselines. */
  lines: { x: number; y: number; text: string }[];
  mid: number;
  zeroX: number;
  cx: number;
  colour: string;
  opacity: number;
  /** The share of folds with the same sign, right-aligned at `shareX`. */
  share: { x: number; y: number; text: string };
  /** "L_dlpfc: weight 0.12, same sign in 90% of training folds" */
  words: string;
}

export interface WeightDotLayout {
  area: PlotArea;
  xAxis: AxisInput;
  /** The column title "same sign", right-aligned. */
  header: { x: number; y: number; text: string };
  zero: { x: number; y1: number; y2: number };
  rows: PlacedWeightRow[];
}

/** Throws a `ChartInputError` naming `regions` when there is no row. */
export function checkWeightRows(rows: readonly WeightRow[]): void {
  if (rows.length === 0) throw new ChartInputError("regions", "holds no weights");
}

/** Height of the chart drawn `width` wide (it grows with the rows and their wrapped names). */
export function weightDotHeight(rows: readonly WeightRow[], width: number): number {
  return weightChartLayout(rows, chartViewport(width, 1).width, chart.tickText).bottom + BOTTOM;
}

/** The plot's accessible description (the screen's label and the figure's <desc>). */
export function weightDotDescription(rows: readonly WeightRow[]): string {
  return `Dot chart of the weights of ${rows.length} regions, sorted from the most positive to the most negative, with the share of training folds that gave each weight the same sign.`;
}

/** The whole layout in a drawing of `viewport` size. Throws as `checkWeightRows`. Cost O(total label length). */
export function weightDotLayout(rows: readonly WeightRow[], viewport: Viewport): WeightDotLayout {
  checkWeightRows(rows);
  const laid = weightChartLayout(rows, viewport.width, chart.tickText);
  const area = plotArea(viewport, {
    top: weightChart.top,
    right: weightChart.consistencyWidth + 8,
    bottom: BOTTOM,
    left: laid.labelWidth + 12,
  });
  const count = tickCountFor(area.width, 84);
  const domain = niceDomain(
    paddedExtent(
      rows.map((r) => r.weight),
      { include: [0], pad: 0.05 },
    ),
    count,
  );
  const ticks = tickValues(domain, count);
  const x = scaleLinear().domain(domain).range([area.left, area.right]);
  const shareX = viewport.width - 4;
  return {
    area,
    xAxis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks,
      labels: formatTicks(ticks),
      title: "Mean standardized weight",
      grid: true,
    },
    header: { x: shareX, y: weightChart.top - 8, text: "same sign" },
    zero: { x: x(0), y1: area.top, y2: area.bottom },
    rows: laid.rows.map((row, i) => {
      const mid = row.top + row.height / 2;
      const firstBaseline =
        mid - ((row.lines.length - 1) * weightChart.lineHeight) / 2 + chart.tickText * 0.35;
      const share = formatPercent(row.signConsistency);
      return {
        region: row.region,
        weight: row.weight,
        signConsistency: row.signConsistency,
        stripe: i % 2 === 1 ? { y: row.top, height: row.height } : null,
        lines: row.lines.map((text, j) => ({
          x: 4,
          y: firstBaseline + j * weightChart.lineHeight,
          text,
        })),
        mid,
        zeroX: x(0),
        cx: x(row.weight),
        colour: row.weight >= 0 ? weightColours.positive : weightColours.negative,
        opacity: consistencyOpacity(row.signConsistency),
        share: { x: shareX, y: mid + chart.tickText * 0.35, text: share },
        words: `${row.region}: weight ${formatValue(row.weight)}, same sign in ${share} of training folds`,
      };
    }),
  };
}
