/**
 * The region weights of a prediction fit as a sorted dot chart: one row per
 * region from the most positive to the most negative mean standardized
 * weight, a line at zero, and on the right the share of training folds whose
 * weight had the same sign. The dot is solid when the sign held in every
 * fold and faint when it flipped about half the time. Long region names wrap
 * onto more lines (fit/prediction-layout.ts) so none overlap on a phone.
 */
import { scaleLinear } from "d3-scale";
import { Circle, G, Line, Rect, Text as SvgText } from "react-native-svg";
import {
  consistencyOpacity,
  weightChart,
  weightChartLayout,
  type WeightRow,
} from "../fit/prediction-layout";
import { chart, fonts, marks } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, tryLayout } from "./chart-input-error";
import { formatPercent } from "./number-format";
import { chartViewport, paddedExtent, plotArea } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface WeightDotPlotProps {
  /** Already sorted and cut (see `weightRows`). */
  rows: readonly WeightRow[];
  testID?: string;
}

const BOTTOM = chart.tickText + chart.labelText + 18;
const POSITIVE = marks.blue;
const NEGATIVE = marks.vermillion;

export function WeightDotPlot(props: WeightDotPlotProps) {
  const checked = tryLayout(() => {
    if (props.rows.length === 0) throw new ChartInputError("regions", "holds no weights");
    return true;
  });
  const heightFor = (width: number) =>
    weightChartLayout(props.rows, chartViewport(width, 1).width, chart.tickText).bottom + BOTTOM;
  return (
    <ChartFrame
      label={`Dot chart of the weights of ${props.rows.length} regions, sorted from the most positive to the most negative, with the share of training folds that gave each weight the same sign.`}
      aspect={1}
      heightFor={heightFor}
      problem={checked.problem}
      testID={props.testID}
    >
      {(viewport) => {
        const layout = weightChartLayout(props.rows, viewport.width, chart.tickText);
        const area = plotArea(viewport, {
          top: weightChart.top,
          right: weightChart.consistencyWidth + 8,
          bottom: BOTTOM,
          left: layout.labelWidth + 12,
        });
        const count = tickCountFor(area.width, 84);
        const domain = niceDomain(
          paddedExtent(
            props.rows.map((r) => r.weight),
            { include: [0], pad: 0.05 },
          ),
          count,
        );
        const ticks = tickValues(domain, count);
        const x = scaleLinear().domain(domain).range([area.left, area.right]);
        const consistencyX = viewport.width - 4;
        return (
          <G>
            <SvgText
              x={consistencyX}
              y={weightChart.top - 8}
              fontSize={chart.tickText}
              fontFamily={fonts.semibold}
              fill={chart.text}
              textAnchor="end"
            >
              same sign
            </SvgText>
            {layout.rows.map((row, i) =>
              i % 2 === 1 ? (
                <Rect
                  key={`s${row.region}`}
                  x={0}
                  y={row.top}
                  width={viewport.width}
                  height={row.height}
                  fill={chart.grid}
                  fillOpacity={0.35}
                />
              ) : null,
            )}
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={ticks}
              labels={formatTicks(ticks)}
              title="Mean standardized weight"
              grid
            />
            <Line
              x1={x(0)}
              x2={x(0)}
              y1={area.top}
              y2={area.bottom}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            {layout.rows.map((row) => {
              const mid = row.top + row.height / 2;
              const firstBaseline =
                mid - ((row.lines.length - 1) * weightChart.lineHeight) / 2 + chart.tickText * 0.35;
              const colour = row.weight >= 0 ? POSITIVE : NEGATIVE;
              return (
                <G key={row.region}>
                  {row.lines.map((line, j) => (
                    <SvgText
                      key={`${row.region}-${j}`}
                      x={4}
                      y={firstBaseline + j * weightChart.lineHeight}
                      fontSize={chart.tickText}
                      fontFamily={fonts.regular}
                      fill={chart.text}
                    >
                      {line}
                    </SvgText>
                  ))}
                  <Line
                    x1={x(0)}
                    x2={x(row.weight)}
                    y1={mid}
                    y2={mid}
                    stroke={colour}
                    strokeOpacity={0.35}
                    strokeWidth={1}
                  />
                  <Circle
                    cx={x(row.weight)}
                    cy={mid}
                    r={chart.markRadius + 0.5}
                    fill={colour}
                    fillOpacity={consistencyOpacity(row.signConsistency)}
                    stroke={colour}
                    strokeWidth={1.25}
                  />
                  <SvgText
                    x={consistencyX}
                    y={mid + chart.tickText * 0.35}
                    fontSize={chart.tickText}
                    fontFamily={fonts.regular}
                    fill={chart.text}
                    textAnchor="end"
                  >
                    {formatPercent(row.signConsistency)}
                  </SvgText>
                </G>
              );
            })}
          </G>
        );
      }}
    </ChartFrame>
  );
}
