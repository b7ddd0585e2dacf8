/**
 * Observed against predicted trait values of held-out participants (the
 * mean prediction over repeats), on one shared scale for both axes with the
 * identity line: points on the line were predicted exactly; a cloud flatter
 * than the line shows predictions pulled towards the mean.
 */
import { scaleLinear } from "d3-scale";
import { Circle, G, Line } from "react-native-svg";
import { observedPredictedDomain } from "../fit/prediction-layout";
import { chart, markRoles } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import { formatCount } from "./number-format";
import { leftMarginFor, plotArea } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface ObservedPredictedPlotProps {
  participants: readonly { participant: string; observed: number; predicted: number }[];
  /** The trait's name for the axis titles. */
  trait: string;
  /** Confounds removed from the trait inside each training fold (the values shown are residuals). */
  confounds?: readonly string[];
  testID?: string;
}

export function ObservedPredictedPlot(props: ObservedPredictedPlotProps) {
  const result = tryLayout(() => observedPredictedDomain(props.participants));
  const n = props.participants.length;
  const removed =
    props.confounds && props.confounds.length > 0 ? `, ${props.confounds.join(", ")} removed` : "";
  return (
    <ChartFrame
      label={`Observed against predicted ${props.trait}${removed} for ${formatCount(n)} held-out participants, with the line where prediction equals observation.`}
      aspect={1.1}
      problem={result.problem}
      testID={props.testID}
      footer={
        <Legend
          entries={[
            {
              kind: "mark",
              label: "participant (held out)",
              role: "participant",
              shape: "circle",
              colour: markRoles.participant,
              hollow: false,
            },
            { kind: "line", label: "predicted = observed", colour: chart.reference, dashed: true },
          ]}
        />
      }
    >
      {(viewport) => {
        const raw = result.layout;
        if (!raw) return null;
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
        return (
          <G>
            <Axis
              orientation="left"
              area={area}
              scale={y}
              ticks={ticks}
              labels={labels}
              title={`Predicted ${props.trait}${removed}`}
              grid
            />
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={ticks}
              labels={labels}
              title={`Observed ${props.trait}${removed}`}
              grid
            />
            <Line
              x1={x(domain[0])}
              y1={y(domain[0])}
              x2={x(domain[1])}
              y2={y(domain[1])}
              stroke={chart.reference}
              strokeWidth={1.5}
              strokeDasharray="6 4"
            />
            {props.participants.map((p) => (
              <Circle
                key={p.participant}
                cx={x(p.observed)}
                cy={y(p.predicted)}
                r={chart.markRadius}
                fill={markRoles.participant}
                fillOpacity={0.6}
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
