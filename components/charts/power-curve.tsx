/**
 * Power curve for the planner: power (vertical, as a percentage) against the
 * number of participants N (horizontal), a point at each planned N, the
 * target power as a dashed line, and the answer N marked where the curve
 * crosses it. Where everything goes comes from power-curve-layout.ts (the
 * figure writer draws from the same layout).
 */
import { Circle, G, Line, Path, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import {
  checkPowerCurve,
  type PowerCurveInput,
  powerCurveAspect,
  powerCurveDescription,
  powerCurveLayout,
  powerCurveLegend,
  powerPointRadius,
} from "./power-curve-layout";

export interface PowerCurveProps extends PowerCurveInput {
  testID?: string;
}

export function PowerCurve(props: PowerCurveProps) {
  const result = tryLayout(() => checkPowerCurve(props));
  return (
    <ChartFrame
      label={powerCurveDescription(props)}
      aspect={powerCurveAspect}
      problem={result.problem}
      testID={props.testID}
      footer={<Legend entries={powerCurveLegend(props)} />}
    >
      {(viewport) => {
        if (!result.layout) return null;
        const layout = powerCurveLayout(props, viewport);
        const { target, answer } = layout;
        return (
          <G>
            <Axis {...layout.yAxis} />
            <Axis {...layout.xAxis} />
            <Line
              x1={target.x1}
              x2={target.x2}
              y1={target.y}
              y2={target.y}
              stroke={chart.reference}
              strokeWidth={1.5}
              strokeDasharray="6 4"
            />
            <Path d={layout.curvePath} fill="none" stroke={chart.curve} strokeWidth={2.5} />
            {layout.points.map((p) => (
              <Circle key={p.n} cx={p.cx} cy={p.cy} r={powerPointRadius} fill={chart.curve} />
            ))}
            {answer ? (
              <G>
                <Line
                  x1={answer.x}
                  x2={answer.x}
                  y1={answer.y1}
                  y2={answer.y2}
                  stroke={chart.estimate}
                  strokeWidth={1.5}
                  strokeDasharray="4 3"
                />
                {answer.dot ? (
                  <Circle
                    cx={answer.dot.cx}
                    cy={answer.dot.cy}
                    r={chart.markRadius + 1}
                    fill={chart.estimate}
                  />
                ) : null}
                <SvgText
                  x={answer.label.x}
                  y={answer.label.y}
                  fontSize={chart.labelText}
                  fontFamily={fonts.semibold}
                  fill={chart.estimate}
                  textAnchor={answer.label.anchor}
                >
                  {answer.label.text}
                </SvgText>
              </G>
            ) : null}
          </G>
        );
      }}
    </ChartFrame>
  );
}
