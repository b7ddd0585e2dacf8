/**
 * Scatter plot of a trait (horizontal) against the contrast value
 * (vertical): one mark per participant, shaped and coloured by flag, the
 * fitted line and its confidence band (given as points), a legend, and
 * `onPointPress` with the participant's id. Participants without both
 * values are left out and counted in the plot's accessible description.
 * Where everything goes comes from scatter-layout.ts, which the figure
 * writer draws from too.
 */
import { G, Path } from "react-native-svg";
import { markRoles } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import { ParticipantMarks } from "./participant-marks";
import {
  checkScatter,
  type ScatterInput,
  type ScatterPoint,
  scatterAspect,
  scatterDescription,
  scatterLayout,
  scatterLegend,
} from "./scatter-layout";

export type { ScatterPoint };

export interface ScatterPlotProps extends ScatterInput {
  selectedId?: string | null;
  onPointPress?: (id: string) => void;
  testID?: string;
}

export function ScatterPlot(props: ScatterPlotProps) {
  const checked = tryLayout(() => checkScatter(props.points));
  return (
    <ChartFrame
      label={scatterDescription(props)}
      aspect={scatterAspect}
      interactive={!!props.onPointPress}
      problem={checked.problem}
      testID={props.testID}
      footer={<Legend entries={scatterLegend(props)} />}
    >
      {(viewport) => {
        const layout = scatterLayout(props, viewport);
        return (
          <G>
            <Axis {...layout.yAxis} />
            <Axis {...layout.xAxis} />
            {layout.bandPath ? <Path d={layout.bandPath} fill={markRoles.band} /> : null}
            {layout.linePath ? (
              <Path d={layout.linePath} fill="none" stroke={markRoles.fit} strokeWidth={2} />
            ) : null}
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
