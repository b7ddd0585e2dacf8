/**
 * Scatter plot of a trait (horizontal) against the contrast value
 * (vertical): one mark per participant, shaped and coloured by flag, the
 * fitted line and its confidence band (given as points), a legend, and
 * `onPointPress` with the participant's id. Participants without both
 * values are left out and counted in the plot's accessible description.
 */
import { scaleLinear } from "d3-scale";
import { G, Path } from "react-native-svg";
import { chart, markRoles } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, tryLayout } from "./chart-input-error";
import type { ParticipantMark } from "./chart-types";
import { Legend, type LegendEntry, markEntries } from "./legend";
import { describePoint, legendItemsFor } from "./marks";
import { type BandPoint, bandPath, linePath } from "./paths";
import { ParticipantMarks } from "./participant-marks";
import { leftMarginFor, paddedExtent, plotArea, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface ScatterPoint extends ParticipantMark {
  /** Trait value (null when missing). */
  x: number | null;
  /** Contrast value (null when missing). */
  y: number | null;
}

export interface ScatterPlotProps {
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
  selectedId?: string | null;
  onPointPress?: (id: string) => void;
  testID?: string;
}

function check(points: readonly ScatterPoint[]) {
  const seen = new Set<string>();
  points.forEach((p, i) => {
    if (!p.id) throw new ChartInputError(`points[${i}].id`, "must name a participant");
    if (seen.has(p.id))
      throw new ChartInputError(`points[${i}].id`, `"${p.id}" appears more than once`);
    seen.add(p.id);
  });
}

const isFiniteNumber = (v: number | null): v is number => v !== null && Number.isFinite(v);

function layoutFor(
  props: ScatterPlotProps,
  shown: readonly (ScatterPoint & { x: number; y: number })[],
  viewport: Viewport,
) {
  const band = props.band ?? [];
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
  return { area, x, y, xTicks, xLabels: formatTicks(xTicks), yTicks, yLabels };
}

export function ScatterPlot(props: ScatterPlotProps) {
  const xName = props.xName ?? "trait";
  const yName = props.yName ?? "contrast";
  const checked = tryLayout(() => check(props.points));
  const shown = props.points.filter(
    (p): p is ScatterPoint & { x: number; y: number } => isFiniteNumber(p.x) && isFiniteNumber(p.y),
  );
  const hidden = props.points.length - shown.length;
  const band = props.band ?? [];
  const entries: LegendEntry[] = markEntries(legendItemsFor(shown));
  if (band.length > 0) {
    entries.push({ kind: "line", label: "fitted line", colour: markRoles.fit });
    entries.push({
      kind: "band",
      label: props.bandLabel ?? "95% confidence band",
      colour: markRoles.band,
    });
  }
  const description =
    `Scatter plot of ${props.yLabel} against ${props.xLabel} for ${shown.length} participant${shown.length === 1 ? "" : "s"}` +
    (band.length > 0 ? ", with the fitted line and its band" : "") +
    (hidden > 0 ? `; ${hidden} without both values not shown` : "") +
    ".";
  return (
    <ChartFrame
      label={description}
      aspect={1.25}
      interactive={!!props.onPointPress}
      problem={checked.problem}
      testID={props.testID}
      footer={<Legend entries={entries} />}
    >
      {(viewport) => {
        const { area, x, y, xTicks, xLabels, yTicks, yLabels } = layoutFor(props, shown, viewport);
        const marks = shown.map((p) => ({
          ...p,
          cx: x(p.x),
          cy: y(p.y),
          label: describePoint(p, [
            { name: xName, value: p.x },
            { name: yName, value: p.y },
          ]),
        }));
        return (
          <G>
            <Axis
              orientation="left"
              area={area}
              scale={y}
              ticks={yTicks}
              labels={yLabels}
              title={props.yLabel}
              grid
            />
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={xTicks}
              labels={xLabels}
              title={props.xLabel}
            />
            {band.length > 1 ? <Path d={bandPath(band, x, y)} fill={markRoles.band} /> : null}
            {band.length > 1 ? (
              <Path
                d={linePath(
                  band
                    .slice()
                    .sort((a, b) => a.x - b.x)
                    .map((b) => ({ x: b.x, y: b.fit })),
                  x,
                  y,
                )}
                fill="none"
                stroke={markRoles.fit}
                strokeWidth={2}
              />
            ) : null}
            <ParticipantMarks
              marks={marks}
              selectedId={props.selectedId}
              onPress={props.onPointPress}
            />
          </G>
        );
      }}
    </ChartFrame>
  );
}
