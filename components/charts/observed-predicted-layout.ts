/**
 * Layout of a prediction fit's observed against predicted plot: one shared
 * scale for both axes (so the identity line is the diagonal), a point per
 * held-out participant, the dashed identity line, the legend and the plot's
 * words. The screen's `ObservedPredictedPlot` and the figure writer
 * (server/figures/) draw from this one layout. Pure: no React, no SVG.
 */
import { scaleLinear } from "d3-scale";
import { observedPredictedDomain } from "../fit/prediction-layout";
import { chart, markRoles } from "../theme";
import type { AxisInput } from "./axis-layout";
import type { LegendEntry } from "./legend-entries";
import { formatCount, formatValue } from "./number-format";
import { leftMarginFor, type PlotArea, plotArea, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface ObservedPredictedInput {
  participants: readonly { participant: string; observed: number; predicted: number }[];
  /** The trait's name for the axis titles. */
  trait: string;
  /** Confounds removed from the trait inside each training fold (the values shown are residuals). */
  confounds?: readonly string[];
}

export interface PlacedPrediction {
  participant: string;
  cx: number;
  cy: number;
  /** "observed 12.3, predicted 10.1" (no participant id). */
  words: string;
}

export interface ObservedPredictedLayout {
  area: PlotArea;
  xAxis: AxisInput;
  yAxis: AxisInput;
  /** The line where prediction equals observation, corner to corner. */
  identity: { x1: number; y1: number; x2: number; y2: number };
  points: PlacedPrediction[];
}

export const observedPredictedAspect = 1.1;

/** Fill opacity of a participant's point (they overlap). */
export const predictionPointOpacity = 0.6;

/** Checks the points; throws a `ChartInputError` as `observedPredictedDomain`. */
export function checkObservedPredicted(input: ObservedPredictedInput): [number, number] {
  return observedPredictedDomain(input.participants);
}

function removedWords(input: ObservedPredictedInput): string {
  return input.confounds && input.confounds.length > 0
    ? `, ${input.confounds.join(", ")} removed`
    : "";
}

/** The plot's accessible description (the screen's label and the figure's <desc>). */
export function observedPredictedDescription(input: ObservedPredictedInput): string {
  return `Observed against predicted ${input.trait}${removedWords(input)} for ${formatCount(input.participants.length)} held-out participants, with the line where prediction equals observation.`;
}

/** The legend: a held-out participant's point and the identity line. */
export const observedPredictedLegend: readonly LegendEntry[] = [
  {
    kind: "mark",
    label: "participant (held out)",
    role: "participant",
    shape: "circle",
    colour: markRoles.participant,
    hollow: false,
  },
  { kind: "line", label: "predicted = observed", colour: chart.reference, dashed: true },
];

/** The whole layout in a drawing of `viewport` size. Throws as `checkObservedPredicted`. Cost O(n). */
export function observedPredictedLayout(
  input: ObservedPredictedInput,
  viewport: Viewport,
): ObservedPredictedLayout {
  const raw = checkObservedPredicted(input);
  const count = tickCountFor(Math.min(viewport.width, viewport.height) - 60);
  const domain = niceDomain(raw, count);
  const ticks = tickValues(domain, count);
  const labels = formatTicks(ticks);
  const area = plotArea(viewport, {
    top: 10,
    right: 14,
    bottom: chart.tickText + chart.labelText + 18,
    left: leftMarginFor(labels, chart.tickText, chart.labelText),
  });
  const x = scaleLinear().domain(domain).range([area.left, area.right]);
  const y = scaleLinear().domain(domain).range([area.bottom, area.top]);
  const removed = removedWords(input);
  return {
    area,
    yAxis: {
      orientation: "left",
      area,
      scale: y,
      ticks,
      labels,
      title: `Predicted ${input.trait}${removed}`,
      grid: true,
    },
    xAxis: {
      orientation: "bottom",
      area,
      scale: x,
      ticks,
      labels,
      title: `Observed ${input.trait}${removed}`,
      grid: true,
    },
    identity: { x1: x(domain[0]), y1: y(domain[0]), x2: x(domain[1]), y2: y(domain[1]) },
    points: input.participants.map((p) => ({
      participant: p.participant,
      cx: x(p.observed),
      cy: y(p.predicted),
      words: `observed ${formatValue(p.observed)}, predicted ${formatValue(p.predicted)}`,
    })),
  };
}
