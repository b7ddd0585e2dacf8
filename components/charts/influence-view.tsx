/**
 * "Who moves this estimate?": every participant's Cook's distance, leverage
 * and size of studentized residual, one column per participant (largest
 * Cook's distance first), each panel with the cut-off its flag uses (see
 * influence-layout.ts). Marks are shaped and coloured by flag, with a small
 * extra cue for each further flag; flagged participants are named; the
 * legend lists only what is drawn; `onPointPress` gets the participant's id.
 */
import { G, Line, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import {
  type FlagCuts,
  type InfluencePoint,
  cutColour,
  influenceDescription,
  influenceHeight,
  influenceLayout,
  influenceMarks,
} from "./influence-layout";
import { Legend } from "./legend";
import { MarkShape } from "./mark-shape";
import { ParticipantMarks } from "./participant-marks";
import { chartViewport } from "./scales";

export interface InfluenceViewProps {
  points: readonly InfluencePoint[];
  cuts: FlagCuts;
  selectedId?: string | null;
  onPointPress?: (id: string) => void;
  testID?: string;
}

export function InfluenceView(props: InfluenceViewProps) {
  // the legend needs the layout too; the frame lays out at its own width, the legend does not depend on it
  const legendLayout = tryLayout(() =>
    influenceLayout(
      props.points,
      props.cuts,
      chartViewport(null, 1, influenceHeight(chart.defaultWidth)),
    ),
  );
  return (
    <ChartFrame
      label={influenceDescription(props.points, props.cuts)}
      aspect={1}
      heightFor={influenceHeight}
      interactive={!!props.onPointPress}
      problem={legendLayout.problem}
      testID={props.testID}
      footer={
        legendLayout.layout ? (
          <Legend entries={legendLayout.layout.legend} label="Legend of the influence view" />
        ) : null
      }
    >
      {(viewport) => {
        const result = tryLayout(() => influenceLayout(props.points, props.cuts, viewport));
        if (!result.layout) return null;
        const layout = result.layout;
        const { left, right } = layout.plot;
        const marks = influenceMarks(layout);
        return (
          <G>
            {layout.panels.map((panel) => (
              <G key={panel.key}>
                <SvgText
                  x={left}
                  y={panel.top - 6}
                  fontSize={chart.labelText}
                  fontFamily={fonts.semibold}
                  fill={chart.text}
                >
                  {panel.title}
                </SvgText>
                {panel.ticks.map((t) => (
                  <G key={`t${t.value}`}>
                    <Line
                      x1={left}
                      x2={right}
                      y1={t.y}
                      y2={t.y}
                      stroke={chart.grid}
                      strokeWidth={1}
                    />
                    <SvgText
                      x={left - 5}
                      y={t.y + chart.tickText * 0.35}
                      fontSize={chart.tickText}
                      fontFamily={fonts.regular}
                      fill={chart.text}
                      textAnchor="end"
                    >
                      {t.label}
                    </SvgText>
                  </G>
                ))}
                <Line
                  x1={left}
                  x2={left}
                  y1={panel.top}
                  y2={panel.bottom}
                  stroke={chart.axis}
                  strokeWidth={1}
                />
                <Line
                  x1={left}
                  x2={right}
                  y1={panel.bottom}
                  y2={panel.bottom}
                  stroke={chart.axis}
                  strokeWidth={1}
                />
                {panel.cut ? (
                  <G data-testid={`influence-cut-${panel.cut.flag}`} aria-label={panel.cut.text}>
                    <Line
                      x1={left}
                      x2={right}
                      y1={panel.cut.y}
                      y2={panel.cut.y}
                      stroke={cutColour[panel.cut.flag]}
                      strokeWidth={1.5}
                      strokeDasharray="6 4"
                    />
                    <SvgText
                      x={panel.cut.textX}
                      y={panel.cut.textY}
                      fontSize={chart.tickText}
                      fontFamily={fonts.semibold}
                      fill={cutColour[panel.cut.flag]}
                      textAnchor="end"
                    >
                      {panel.cut.text}
                    </SvgText>
                  </G>
                ) : null}
                {panel.key === "cook"
                  ? null
                  : layout.points.map((p) =>
                      p.cues[panel.key].map((c, k) => (
                        <MarkShape
                          key={`${p.id}:${k}`}
                          shape={c.shape}
                          cx={c.cx}
                          cy={c.cy}
                          r={c.r}
                          colour={c.colour}
                          hollow={c.hollow}
                        />
                      )),
                    )}
              </G>
            ))}
            {layout.points.map((p) =>
              p.cues.cook
                .slice(1)
                .map((c, k) => (
                  <MarkShape
                    key={`${p.id}:x${k}`}
                    shape={c.shape}
                    cx={c.cx}
                    cy={c.cy}
                    r={c.r}
                    colour={c.colour}
                    hollow={c.hollow}
                  />
                )),
            )}
            <ParticipantMarks
              marks={marks}
              selectedId={props.selectedId}
              onPress={props.onPointPress}
            />
            {layout.labels.map((l) => (
              <G key={`l${l.id}`}>
                {l.leader ? (
                  <Line
                    x1={l.leader.x1}
                    y1={l.leader.y1}
                    x2={l.leader.x2}
                    y2={l.leader.y2}
                    stroke={chart.axis}
                    strokeWidth={0.75}
                  />
                ) : null}
                <SvgText
                  x={l.x}
                  y={l.y}
                  fontSize={chart.tickText}
                  fontFamily={fonts.regular}
                  fill={chart.text}
                  textAnchor={l.anchor}
                >
                  {l.text}
                </SvgText>
              </G>
            ))}
            <SvgText
              x={layout.axisTitle.x}
              y={layout.axisTitle.y}
              fontSize={chart.labelText}
              fontFamily={fonts.semibold}
              fill={chart.text}
              textAnchor="middle"
            >
              {layout.axisTitle.text}
            </SvgText>
            {layout.note ? (
              <SvgText
                x={layout.note.x}
                y={layout.note.y}
                fontSize={chart.tickText}
                fontFamily={fonts.regular}
                fill={chart.text}
                textAnchor="middle"
              >
                {layout.note.text}
              </SvgText>
            ) : null}
          </G>
        );
      }}
    </ChartFrame>
  );
}
