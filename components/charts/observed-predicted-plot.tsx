/**
 * Observed against predicted trait values of held-out participants (the
 * mean prediction over repeats), on one shared scale for both axes with the
 * identity line: points on the line were predicted exactly; a cloud flatter
 * than the line shows predictions pulled towards the mean. Where everything
 * goes comes from observed-predicted-layout.ts (the figure writer draws
 * from the same layout).
 */
import { Circle, G, Line } from "react-native-svg";
import { chart, markRoles } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import {
  checkObservedPredicted,
  type ObservedPredictedInput,
  observedPredictedAspect,
  observedPredictedDescription,
  observedPredictedLayout,
  observedPredictedLegend,
  predictionPointOpacity,
} from "./observed-predicted-layout";

export interface ObservedPredictedPlotProps extends ObservedPredictedInput {
  testID?: string;
}

export function ObservedPredictedPlot(props: ObservedPredictedPlotProps) {
  const result = tryLayout(() => checkObservedPredicted(props));
  return (
    <ChartFrame
      label={observedPredictedDescription(props)}
      aspect={observedPredictedAspect}
      problem={result.problem}
      testID={props.testID}
      footer={<Legend entries={[...observedPredictedLegend]} />}
    >
      {(viewport) => {
        if (!result.layout) return null;
        const layout = observedPredictedLayout(props, viewport);
        const { identity } = layout;
        return (
          <G>
            <Axis {...layout.yAxis} />
            <Axis {...layout.xAxis} />
            <Line {...identity} stroke={chart.reference} strokeWidth={1.5} strokeDasharray="6 4" />
            {layout.points.map((p) => (
              <Circle
                key={p.participant}
                cx={p.cx}
                cy={p.cy}
                r={chart.markRadius}
                fill={markRoles.participant}
                fillOpacity={predictionPointOpacity}
                stroke={markRoles.participant}
                strokeWidth={1}
              />
            ))}
          </G>
        );
      }}
    </ChartFrame>
  );
}
