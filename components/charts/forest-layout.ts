/**
 * Layout of the forest plot: one row per region in the order given, the
 * estimate's place and its interval's ends on one shared horizontal scale
 * that always shows zero, the row labels (shortened to fit) and the
 * accessible words of each row. The screen's `ForestPlot` and the figure
 * writer (server/figures/) draw from this one layout. Pure: no React, no SVG.
 */
import { scaleLinear } from "d3-scale";
import { chart } from "../theme";
import type { AxisInput } from "./axis-layout";
import { ChartInputError, requireFinite } from "./chart-input-error";
import { formatInterval, formatValue } from "./number-format";
import {
  estimateTextWidth,
  paddedExtent,
  plotArea,
  truncateLabel,
  type PlotArea,
  type Viewport,
} from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface ForestRow {
  region: string;
  estimate: number;
  /** Confidence interval ends; null when the method gives none. */
  low: number | null;
  high: number | null;
}

export interface PlacedForestRow extends ForestRow {
  /** Top of the row's band and its middle line. */
  top: number;
  mid: number;
  /** The region's name as drawn (shortened with an ellipsis when long). */
  label: string;
  labelX: number;
  labelY: number;
  /** Horizontal places of the estimate and the interval's ends (null without an interval). */
  cx: number;
  lowX: number | null;
  highX: number | null;
  /** "L_dlpfc: estimate 0.42, 95% CI 0.1 to 0.7" */
  words: string;
}

export interface ForestLayout {
  area: PlotArea;
  rows: PlacedForestRow[];
  zeroX: number;
  axis: AxisInput;
  /** Half-height of the whiskers' end caps. */
  cap: number;
}

export const forestTop = 8;
export const forestBottom = chart.tickText + chart.labelText + 18;

/** Drawing height for `count` rows. */
export function forestHeight(count: number): number {
  return forestTop + Math.max(1, count) * chart.forestRowHeight + forestBottom;
}

/** Checks the rows (at least one, named, distinct, finite, low ≤ high); throws a ChartInputError naming the field. */
export function checkForestRows(rows: readonly ForestRow[]): void {
  if (rows.length === 0) throw new ChartInputError("rows", "holds no regions");
  const seen = new Set<string>();
  rows.forEach((row, i) => {
    if (!row.region) throw new ChartInputError(`rows[${i}].region`, "must name a region");
    if (seen.has(row.region))
      throw new ChartInputError(`rows[${i}].region`, `"${row.region}" appears more than once`);
    seen.add(row.region);
    requireFinite(row.estimate, `rows[${i}].estimate`);
    if (row.low !== null) requireFinite(row.low, `rows[${i}].low`);
    if (row.high !== null) requireFinite(row.high, `rows[${i}].high`);
    if (row.low !== null && row.high !== null && row.low > row.high) {
      throw new ChartInputError(`rows[${i}].low`, `is above high (${row.low} > ${row.high})`);
    }
  });
}

/** The plot's accessible description. */
export function forestDescription(count: number, interval: string, estimateLabel: string): string {
  return `Forest plot of ${count} region${count === 1 ? "" : "s"}: estimate and ${interval} for each, with a line at zero. ${estimateLabel}.`;
}

/** The whole layout in a drawing of `viewport` size. Throws ChartInputError on bad rows. Cost O(rows). */
export function forestLayout(
  rows: readonly ForestRow[],
  viewport: Viewport,
  options: { estimateLabel: string; intervalLabel?: string },
): ForestLayout {
  checkForestRows(rows);
  const interval = options.intervalLabel ?? "95% CI";
  const labelWidth = Math.min(
    viewport.width * 0.38,
    Math.max(...rows.map((r) => estimateTextWidth(r.region, chart.tickText)), 40),
  );
  const area = plotArea(viewport, {
    top: forestTop,
    right: 14,
    bottom: forestBottom,
    left: labelWidth + 12,
  });
  const values = rows.flatMap((r) => [r.estimate, r.low, r.high]);
  const count = tickCountFor(area.width);
  const domain = niceDomain(paddedExtent(values, { include: [0], pad: 0.04 }), count);
  const x = scaleLinear().domain(domain).range([area.left, area.right]);
  const ticks = tickValues(domain, count);
  const placed = rows.map((row, i) => {
    const top = forestTop + i * chart.forestRowHeight;
    const mid = top + chart.forestRowHeight / 2;
    const hasInterval = row.low !== null && row.high !== null;
    const ci = hasInterval ? `, ${interval} ${formatInterval(row.low, row.high)}` : "";
    return {
      ...row,
      top,
      mid,
      label: truncateLabel(row.region, labelWidth, chart.tickText),
      labelX: 4,
      labelY: mid + chart.tickText * 0.35,
      cx: x(row.estimate),
      lowX: hasInterval ? x(row.low as number) : null,
      highX: hasInterval ? x(row.high as number) : null,
      words: `${row.region}: estimate ${formatValue(row.estimate)}${ci}`,
    };
  });
  return {
    area,
    rows: placed,
    zeroX: x(0),
    cap: 4,
    axis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks,
      labels: formatTicks(ticks),
      title: options.estimateLabel,
      grid: true,
    },
  };
}
