/**
 * The region weights of a prediction fit as a sorted dot chart: one row per
 * region from the most positive to the most negative mean standardized
 * weight, a line at zero, and on the right the share of training folds whose
 * weight had the same sign. The dot is solid when the sign held in every
 * fold and faint when it flipped about half the time. Long region names wrap
 * onto more lines so none overlap on a phone. Where everything goes comes
 * from weight-dot-layout.ts (the figure writer draws from the same layout).
 */
import { Circle, G, Line, Rect, Text as SvgText } from "react-native-svg";
import type { WeightRow } from "../fit/prediction-layout";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import {
  checkWeightRows,
  weightDotDescription,
  weightDotHeight,
  weightDotLayout,
} from "./weight-dot-layout";

export interface WeightDotPlotProps {
  /** Already sorted and cut (see `weightRows`). */
  rows: readonly WeightRow[];
  testID?: string;
}

export function WeightDotPlot(props: WeightDotPlotProps) {
  const checked = tryLayout(() => {
    checkWeightRows(props.rows);
    return true;
  });
  return (
    <ChartFrame
      label={weightDotDescription(props.rows)}
      aspect={1}
      heightFor={(width) => weightDotHeight(props.rows, width)}
      problem={checked.problem}
      testID={props.testID}
    >
      {(viewport) => {
        if (!checked.layout) return null;
        const layout = weightDotLayout(props.rows, viewport);
        const { header, zero } = layout;
        return (
          <G>
            <SvgText
              x={header.x}
              y={header.y}
              fontSize={chart.tickText}
              fontFamily={fonts.semibold}
              fill={chart.text}
              textAnchor="end"
            >
              {header.text}
            </SvgText>
            {layout.rows.map((row) =>
              row.stripe ? (
                <Rect
                  key={`s${row.region}`}
                  x={0}
                  y={row.stripe.y}
                  width={viewport.width}
                  height={row.stripe.height}
                  fill={chart.grid}
                  fillOpacity={0.35}
                />
              ) : null,
            )}
            <Axis {...layout.xAxis} />
            <Line
              x1={zero.x}
              x2={zero.x}
              y1={zero.y1}
              y2={zero.y2}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            {layout.rows.map((row) => (
              <G key={row.region}>
                {row.lines.map((line, j) => (
                  <SvgText
                    key={`${row.region}-${j}`}
                    x={line.x}
                    y={line.y}
                    fontSize={chart.tickText}
                    fontFamily={fonts.regular}
                    fill={chart.text}
                  >
                    {line.text}
                  </SvgText>
                ))}
                <Line
                  x1={row.zeroX}
                  x2={row.cx}
                  y1={row.mid}
                  y2={row.mid}
                  stroke={row.colour}
                  strokeOpacity={0.35}
                  strokeWidth={1}
                />
                <Circle
                  cx={row.cx}
                  cy={row.mid}
                  r={chart.markRadius + 0.5}
                  fill={row.colour}
                  fillOpacity={row.opacity}
                  stroke={row.colour}
                  strokeWidth={1.25}
                />
                <SvgText
                  x={row.share.x}
                  y={row.share.y}
                  fontSize={chart.tickText}
                  fontFamily={fonts.regular}
                  fill={chart.text}
                  textAnchor="end"
                >
                  {row.share.text}
                </SvgText>
              </G>
            ))}
          </G>
        );
      }}
    </ChartFrame>
  );
}
