/**
 * Power curve for the planner: power (vertical, as a percentage) against the
 * number of participants N (horizontal), the target power as a dashed line,
 * and the answer N marked where the curve crosses it.
 */
import { scaleLinear } from "d3-scale";
import { Circle, G, Line, Path, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, requireFinite, tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import { formatCount, formatPercent } from "./number-format";
import { linePath } from "./paths";
import { checkPowerPoints, interpolatePower, type PowerPoint } from "./power-layout";
import { leftMarginFor, plotArea } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface PowerCurveProps {
  /** Power at each N; any order. */
  points: readonly PowerPoint[];
  /** Target power, e.g. 0.8. */
  targetPower: number;
  /** The N the planner recommends, or null when no N on the curve reaches the target. */
  answerN: number | null;
  /** Horizontal axis title, default "Participants (N)". */
  nLabel?: string;
  testID?: string;
}

export function PowerCurve(props: PowerCurveProps) {
  const result = tryLayout(() => {
    requireFinite(props.targetPower, "targetPower");
    if (props.targetPower <= 0 || props.targetPower >= 1)
      throw new ChartInputError(
        "targetPower",
        `must lie strictly between 0 and 1 (got ${props.targetPower})`,
      );
    if (props.answerN !== null) {
      requireFinite(props.answerN, "answerN");
      if (props.answerN <= 0)
        throw new ChartInputError("answerN", `must be positive (got ${props.answerN})`);
    }
    return checkPowerPoints(props.points);
  });
  const nLabel = props.nLabel ?? "Participants (N)";
  const target = formatPercent(props.targetPower);
  const answerWords =
    props.answerN !== null
      ? `N = ${formatCount(props.answerN)} reaches ${target} power`
      : `no N on the curve reaches ${target} power`;
  return (
    <ChartFrame
      label={`Power curve: power against the number of participants, with the ${target} target marked; ${answerWords}.`}
      aspect={1.5}
      problem={result.problem}
      testID={props.testID}
      footer={
        <Legend
          entries={[
            { kind: "line", label: "power", colour: chart.curve },
            { kind: "line", label: `target ${target}`, colour: chart.reference, dashed: true },
            ...(props.answerN !== null
              ? [
                  {
                    kind: "line" as const,
                    label: `N = ${formatCount(props.answerN)}`,
                    colour: chart.estimate,
                    dashed: true,
                  },
                ]
              : []),
          ]}
        />
      }
    >
      {(viewport) => {
        const sorted = result.layout;
        if (!sorted) return null;
        const yTicks = [0, 0.2, 0.4, 0.6, 0.8, 1];
        const yLabels = formatTicks(yTicks, { scale: 100, suffix: "%" });
        const area = plotArea(viewport, {
          top: 12,
          right: 16,
          bottom: chart.tickText + chart.labelText + 18,
          left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
        });
        const nMax = Math.max(sorted[sorted.length - 1].n, props.answerN ?? 0);
        const xCount = tickCountFor(area.width);
        const xDomain = niceDomain([0, nMax], xCount);
        const xTicks = tickValues(xDomain, xCount);
        const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
        const y = scaleLinear().domain([0, 1]).range([area.bottom, area.top]);
        const ty = y(props.targetPower);
        const answerPower = props.answerN !== null ? interpolatePower(sorted, props.answerN) : null;
        const ax = props.answerN !== null ? x(props.answerN) : null;
        return (
          <G>
            <Axis
              orientation="left"
              area={area}
              scale={y}
              ticks={yTicks}
              labels={yLabels}
              title="Power"
              grid
            />
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={xTicks}
              labels={xTicks.map((t) => formatCount(t))}
              title={nLabel}
            />
            <Line
              x1={area.left}
              x2={area.right}
              y1={ty}
              y2={ty}
              stroke={chart.reference}
              strokeWidth={1.5}
              strokeDasharray="6 4"
            />
            <Path
              d={linePath(
                sorted.map((p) => ({ x: p.n, y: p.power })),
                x,
                y,
              )}
              fill="none"
              stroke={chart.curve}
              strokeWidth={2.5}
            />
            {ax !== null ? (
              <G>
                <Line
                  x1={ax}
                  x2={ax}
                  y1={area.bottom}
                  y2={answerPower !== null ? y(answerPower) : area.top}
                  stroke={chart.estimate}
                  strokeWidth={1.5}
                  strokeDasharray="4 3"
                />
                {answerPower !== null ? (
                  <Circle
                    cx={ax}
                    cy={y(answerPower)}
                    r={chart.markRadius + 1}
                    fill={chart.estimate}
                  />
                ) : null}
                <SvgText
                  x={ax > (area.left + area.right) / 2 ? ax - 6 : ax + 6}
                  y={(answerPower !== null ? y(answerPower) : area.top) + 16}
                  fontSize={chart.labelText}
                  fontFamily={fonts.semibold}
                  fill={chart.estimate}
                  textAnchor={ax > (area.left + area.right) / 2 ? "end" : "start"}
                >
                  {`N = ${formatCount(props.answerN as number)}`}
                </SvgText>
              </G>
            ) : null}
          </G>
        );
      }}
    </ChartFrame>
  );
}
