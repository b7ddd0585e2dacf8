/**
 * The learning curve of a prediction fit: held-out r and r² against the
 * number of training rows (20 % … 100 % of the available training rows),
 * each with its spread over repeats (± one standard deviation) as a band,
 * and a line at zero. A curve still rising at the right suggests more
 * participants would help.
 */
import { scaleLinear } from "d3-scale";
import { G, Line, Path } from "react-native-svg";
import type { LearningCurvePoint } from "../../contract/prediction";
import { curveSeries } from "../fit/prediction-layout";
import { chart, marks } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, tryLayout } from "./chart-input-error";
import { Legend } from "./legend";
import { MarkShape } from "./mark-shape";
import { formatCount } from "./number-format";
import { bandPath, linePath } from "./paths";
import { leftMarginFor, paddedExtent, plotArea } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface LearningCurvePlotProps {
  points: readonly LearningCurvePoint[];
  testID?: string;
}

const R_COLOUR = marks.blue;
const R2_COLOUR = marks.vermillion;

export function LearningCurvePlot(props: LearningCurvePlotProps) {
  const result = tryLayout(() => {
    const r = curveSeries(props.points, "r");
    const r2 = curveSeries(props.points, "r2");
    if (r.length === 0 && r2.length === 0)
      throw new ChartInputError("learningCurve", "holds no scores");
    return { r, r2 };
  });
  const hasBand = props.points.some((p) => p.rSpread !== null || p.r2Spread !== null);
  return (
    <ChartFrame
      label={`Learning curve: held-out r and r² against the number of training rows${hasBand ? ", with the spread over repeats as bands" : ""}.`}
      aspect={1.5}
      problem={result.problem}
      testID={props.testID}
      footer={
        <Legend
          entries={[
            { kind: "line", label: "r", colour: R_COLOUR },
            { kind: "line", label: "r²", colour: R2_COLOUR, dashed: true },
            ...(hasBand
              ? [
                  {
                    kind: "band" as const,
                    label: "± SD over repeats",
                    colour: "rgba(0,114,178,0.18)",
                  },
                ]
              : []),
          ]}
        />
      }
    >
      {(viewport) => {
        const series = result.layout;
        if (!series) return null;
        const all = [...series.r, ...series.r2];
        const yCount = tickCountFor(viewport.height - 50, 30);
        const yDomain = niceDomain(
          paddedExtent(
            all.flatMap((p) => [p.low, p.high]),
            { include: [0], pad: 0.05 },
          ),
          yCount,
        );
        const yTicks = tickValues(yDomain, yCount);
        const yLabels = formatTicks(yTicks);
        const area = plotArea(viewport, {
          top: 10,
          right: 16,
          bottom: chart.tickText + chart.labelText + 18,
          left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
        });
        const xs = all.map((p) => p.x);
        const xCount = tickCountFor(area.width);
        const xDomain = niceDomain([0, Math.max(...xs)], xCount);
        const xTicks = tickValues(xDomain, xCount);
        const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
        const y = scaleLinear().domain(yDomain).range([area.bottom, area.top]);
        const band = (pts: typeof series.r) =>
          bandPath(
            pts.map((p) => ({ x: p.x, fit: p.value, low: p.low, high: p.high })),
            x,
            y,
          );
        return (
          <G>
            <Axis
              orientation="left"
              area={area}
              scale={y}
              ticks={yTicks}
              labels={yLabels}
              title="Held-out score"
              grid
            />
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={xTicks}
              labels={xTicks.map((t) => formatCount(t))}
              title="Training rows"
            />
            <Line
              x1={area.left}
              x2={area.right}
              y1={y(0)}
              y2={y(0)}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            <Path d={band(series.r)} fill={R_COLOUR} fillOpacity={0.18} />
            <Path d={band(series.r2)} fill={R2_COLOUR} fillOpacity={0.14} />
            <Path
              d={linePath(
                series.r.map((p) => ({ x: p.x, y: p.value })),
                x,
                y,
              )}
              fill="none"
              stroke={R_COLOUR}
              strokeWidth={2.5}
            />
            <Path
              d={linePath(
                series.r2.map((p) => ({ x: p.x, y: p.value })),
                x,
                y,
              )}
              fill="none"
              stroke={R2_COLOUR}
              strokeWidth={2.5}
              strokeDasharray="6 4"
            />
            {series.r.map((p) => (
              <MarkShape
                key={`r${p.x}`}
                shape="circle"
                cx={x(p.x)}
                cy={y(p.value)}
                colour={R_COLOUR}
                r={chart.markRadius}
              />
            ))}
            {series.r2.map((p) => (
              <MarkShape
                key={`q${p.x}`}
                shape="square"
                cx={x(p.x)}
                cy={y(p.value)}
                colour={R2_COLOUR}
                r={chart.markRadius}
              />
            ))}
          </G>
        );
      }}
    </ChartFrame>
  );
}
