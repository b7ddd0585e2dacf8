/**
 * The learning curve of a prediction fit: held-out r and r² against the
 * number of training rows (20 % … 100 % of the available training rows),
 * each with its spread over repeats (± one standard deviation) as a band,
 * and a line at zero. A curve still rising at the right suggests more
 * participants would help. Where everything goes comes from
 * learning-curve-layout.ts (the figure writer draws from the same layout).
 */
import { G, Line, Path } from "react-native-svg";
import type { LearningCurvePoint } from "../../contract/prediction";
import { chart } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import {
  learningCurveAspect,
  learningCurveDescription,
  learningCurveLayout,
  learningCurveLegend,
  learningCurveSeries,
  learningCurveStyle,
} from "./learning-curve-layout";
import { Legend } from "./legend";
import { MarkShape } from "./mark-shape";

export interface LearningCurvePlotProps {
  points: readonly LearningCurvePoint[];
  testID?: string;
}

const R = learningCurveStyle.r;
const R2 = learningCurveStyle.r2;

export function LearningCurvePlot(props: LearningCurvePlotProps) {
  const result = tryLayout(() => learningCurveSeries(props.points));
  return (
    <ChartFrame
      label={learningCurveDescription(props.points)}
      aspect={learningCurveAspect}
      problem={result.problem}
      testID={props.testID}
      footer={<Legend entries={learningCurveLegend(props.points)} />}
    >
      {(viewport) => {
        if (!result.layout) return null;
        const layout = learningCurveLayout(props.points, viewport);
        const { zero } = layout;
        return (
          <G>
            <Axis {...layout.yAxis} />
            <Axis {...layout.xAxis} />
            <Line
              x1={zero.x1}
              x2={zero.x2}
              y1={zero.y}
              y2={zero.y}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            <Path d={layout.r.band} fill={R.colour} fillOpacity={R.bandOpacity} />
            <Path d={layout.r2.band} fill={R2.colour} fillOpacity={R2.bandOpacity} />
            <Path d={layout.r.line} fill="none" stroke={R.colour} strokeWidth={2.5} />
            <Path
              d={layout.r2.line}
              fill="none"
              stroke={R2.colour}
              strokeWidth={2.5}
              strokeDasharray="6 4"
            />
            {layout.r.points.map((p) => (
              <MarkShape
                key={`r${p.x}`}
                shape="circle"
                cx={p.cx}
                cy={p.cy}
                colour={R.colour}
                r={chart.markRadius}
              />
            ))}
            {layout.r2.points.map((p) => (
              <MarkShape
                key={`q${p.x}`}
                shape="square"
                cx={p.cx}
                cy={p.cy}
                colour={R2.colour}
                r={chart.markRadius}
              />
            ))}
          </G>
        );
      }}
    </ChartFrame>
  );
}
