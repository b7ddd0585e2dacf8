/**
 * Strip plot of contrast values by group: two groups side by side (or one
 * group around zero for a one-sample question), every participant a mark
 * jittered sideways by a hash of their id (the same place on every render),
 * each group's mean and confidence interval beside its points, a zero line,
 * flag shapes and a legend, and `onPointPress` with the participant's id.
 */
import { scaleLinear } from "d3-scale";
import { G, Line, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import type { ParticipantMark } from "./chart-types";
import { Legend, type LegendEntry, markEntries } from "./legend";
import { describePoint, legendItemsFor } from "./marks";
import { formatCount } from "./number-format";
import { ParticipantMarks } from "./participant-marks";
import { leftMarginFor, paddedExtent, plotArea, truncateLabel } from "./scales";
import { type StripGroupInput, stripGeometry, stripLayout } from "./strip-layout";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

/** A group: key, label, and the fit's mean and interval. */
export type StripGroup = StripGroupInput;

export interface StripPoint extends ParticipantMark {
  /** Key of the participant's group. */
  group: string;
  /** Contrast value (null when missing). */
  value: number | null;
}

export interface StripPlotProps {
  /** One group (one-sample) or two; mean and interval come from the fit. */
  groups: readonly StripGroup[];
  points: readonly StripPoint[];
  /** Vertical axis title with unit, e.g. "Contrast value (a.u.)". */
  valueLabel: string;
  /** Short name for accessible labels ("contrast"). */
  valueName?: string;
  /** Interval words for the legend, e.g. "mean and 95% CI". */
  summaryLabel?: string;
  selectedId?: string | null;
  onPointPress?: (id: string) => void;
  testID?: string;
}

export function StripPlot(props: StripPlotProps) {
  const { groups, points } = props;
  const valueName = props.valueName ?? "contrast";
  const result = tryLayout(() => stripLayout(groups, points));
  const shown = result.layout ? points.filter((p) => result.layout.placements.has(p.id)) : [];
  const entries: LegendEntry[] = [
    ...markEntries(legendItemsFor(shown)),
    { kind: "line", label: props.summaryLabel ?? "mean and 95% CI", colour: chart.estimate },
  ];
  const groupWords = groups
    .map((g, i) => `${g.label} (n = ${result.layout ? result.layout.counts[i] : 0})`)
    .join(" and ");
  return (
    <ChartFrame
      label={`Strip plot of ${props.valueLabel} for ${groupWords}, each group's mean and interval beside its points, with a line at zero.`}
      aspect={1.25}
      interactive={!!props.onPointPress}
      problem={result.problem}
      testID={props.testID}
      footer={<Legend entries={entries} />}
    >
      {(viewport) => {
        const layout = result.layout;
        if (!layout) return null;
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
          const place = layout.placements.get(p.id) as { group: number; offset: number };
          return {
            ...p,
            cx: centre(place.group) + place.offset * column,
            cy: y(p.value as number),
            label:
              describePoint(p, [{ name: valueName, value: p.value }]) +
              ` (${groups[place.group].label})`,
          };
        });
        const zero = y(0);
        return (
          <G>
            <Axis
              orientation="left"
              area={area}
              scale={y}
              ticks={yTicks}
              labels={yLabels}
              title={props.valueLabel}
              grid
            />
            <Line
              x1={area.left}
              x2={area.right}
              y1={area.bottom}
              y2={area.bottom}
              stroke={chart.axis}
              strokeWidth={1}
            />
            <Line
              x1={area.left}
              x2={area.right}
              y1={zero}
              y2={zero}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            {groups.map((g, i) => {
              const sx = centre(i) + stripGeometry.summary * column;
              const half = stripGeometry.meanHalfWidth * column;
              return (
                <G key={g.key}>
                  <SvgText
                    x={centre(i)}
                    y={area.bottom + chart.tickText + 6}
                    fontSize={chart.tickText}
                    fontFamily={fonts.semibold}
                    fill={chart.text}
                    textAnchor="middle"
                  >
                    {truncateLabel(
                      `${g.label} (n = ${formatCount(layout.counts[i])})`,
                      column - 8,
                      chart.tickText,
                    )}
                  </SvgText>
                  {g.low !== null && g.high !== null ? (
                    <G>
                      <Line
                        x1={sx}
                        x2={sx}
                        y1={y(g.low)}
                        y2={y(g.high)}
                        stroke={chart.estimate}
                        strokeWidth={chart.strokeWidth}
                      />
                      <Line
                        x1={sx - 4}
                        x2={sx + 4}
                        y1={y(g.low)}
                        y2={y(g.low)}
                        stroke={chart.estimate}
                        strokeWidth={chart.strokeWidth}
                      />
                      <Line
                        x1={sx - 4}
                        x2={sx + 4}
                        y1={y(g.high)}
                        y2={y(g.high)}
                        stroke={chart.estimate}
                        strokeWidth={chart.strokeWidth}
                      />
                    </G>
                  ) : null}
                  <Line
                    x1={sx - half}
                    x2={sx + half}
                    y1={y(g.mean)}
                    y2={y(g.mean)}
                    stroke={chart.estimate}
                    strokeWidth={3}
                  />
                </G>
              );
            })}
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
