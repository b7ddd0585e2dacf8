/**
 * Strip plot of contrast values by group: two groups side by side (or one
 * group around zero for a one-sample question), every participant a mark
 * jittered sideways by a hash of their id (the same place on every render),
 * each group's mean and confidence interval beside its points, a zero line,
 * flag shapes and a legend, and `onPointPress` with the participant's id.
 * Where everything goes comes from strip-layout.ts, which the figure writer
 * draws from too.
 */
import { G, Line, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import { ParticipantMarks } from "./participant-marks";
import {
  type StripGroupInput,
  type StripInput,
  type StripPoint,
  stripAspect,
  stripDescription,
  stripLayout,
  stripLegend,
  stripPlotLayout,
} from "./strip-layout";

/** A group: key, label, and the fit's mean and interval. */
export type StripGroup = StripGroupInput;
export type { StripPoint };

export interface StripPlotProps extends StripInput {
  selectedId?: string | null;
  onPointPress?: (id: string) => void;
  testID?: string;
}

export function StripPlot(props: StripPlotProps) {
  const result = tryLayout(() => stripLayout(props.groups, props.points));
  return (
    <ChartFrame
      label={stripDescription(props, result.layout ? result.layout.counts : null)}
      aspect={stripAspect}
      interactive={!!props.onPointPress}
      problem={result.problem}
      testID={props.testID}
      footer={result.layout ? <Legend entries={stripLegend(props)} /> : null}
    >
      {(viewport) => {
        if (!result.layout) return null;
        const layout = stripPlotLayout(props, viewport);
        const { area } = layout;
        return (
          <G>
            <Axis {...layout.yAxis} />
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
              y1={layout.zeroY}
              y2={layout.zeroY}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            {layout.columns.map((c) => (
              <G key={c.key}>
                <SvgText
                  x={c.labelX}
                  y={c.labelY}
                  fontSize={chart.tickText}
                  fontFamily={fonts.semibold}
                  fill={chart.text}
                  textAnchor="middle"
                >
                  {c.label}
                </SvgText>
                {c.lowY !== null && c.highY !== null ? (
                  <G>
                    <Line
                      x1={c.sx}
                      x2={c.sx}
                      y1={c.lowY}
                      y2={c.highY}
                      stroke={chart.estimate}
                      strokeWidth={chart.strokeWidth}
                    />
                    <Line
                      x1={c.sx - layout.cap}
                      x2={c.sx + layout.cap}
                      y1={c.lowY}
                      y2={c.lowY}
                      stroke={chart.estimate}
                      strokeWidth={chart.strokeWidth}
                    />
                    <Line
                      x1={c.sx - layout.cap}
                      x2={c.sx + layout.cap}
                      y1={c.highY}
                      y2={c.highY}
                      stroke={chart.estimate}
                      strokeWidth={chart.strokeWidth}
                    />
                  </G>
                ) : null}
                <Line
                  x1={c.sx - c.half}
                  x2={c.sx + c.half}
                  y1={c.meanY}
                  y2={c.meanY}
                  stroke={chart.estimate}
                  strokeWidth={3}
                />
              </G>
            ))}
            <ParticipantMarks
              marks={layout.marks}
              selectedId={props.selectedId}
              onPress={props.onPointPress}
            />
          </G>
        );
      }}
    </ChartFrame>
  );
}
