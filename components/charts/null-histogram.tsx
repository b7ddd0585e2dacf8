/**
 * Permutation null distribution as a histogram: bars from bin edges and
 * counts (bins wholly as extreme as the observed statistic or more, in the
 * test's direction, in a second colour), the observed statistic as a
 * vertical line, and a caption with the statistic's name, its observed
 * value, p and the number of rearrangements.
 */
import { scaleLinear } from "d3-scale";
import { StyleSheet, View } from "react-native";
import { G, Line, Rect, Text as SvgText } from "react-native-svg";
import { chart, fonts, space } from "../theme";
import { Txt } from "../ui";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, requireFinite, tryLayout } from "./chart-input-error";
import { type Tail, histogramBars, histogramDomain, totalCount } from "./histogram-layout";
import { Legend } from "./legend";
import { formatCount, formatP, formatValue } from "./number-format";
import { leftMarginFor, plotArea } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface NullHistogramProps {
  /** Bin edges, strictly increasing; one more than counts. */
  edges: readonly number[];
  /** Rearrangements per bin. */
  counts: readonly number[];
  /** The statistic of the unpermuted data. */
  observed: number;
  /** The statistic's name, e.g. "t" or "max t over regions". */
  statisticName: string;
  /** The permutation p-value. */
  p: number;
  tail?: Tail;
  testID?: string;
}

export function NullHistogram(props: NullHistogramProps) {
  const tail = props.tail ?? "two-sided";
  const result = tryLayout(() => {
    requireFinite(props.p, "p");
    if (props.p < 0 || props.p > 1)
      throw new ChartInputError("p", `must lie in [0, 1] (got ${props.p})`);
    const bars = histogramBars(props.edges, props.counts, props.observed, tail);
    return {
      bars,
      caption: `Observed ${props.statisticName} = ${formatValue(props.observed)}, ${formatP(props.p)}`,
    };
  });
  const total = totalCount(props.counts);
  const caption = result.layout
    ? `${result.layout.caption} (${formatCount(total)} rearrangements, ${tail === "two-sided" ? "two-sided" : "one-sided"})`
    : "";
  return (
    <ChartFrame
      label={`Histogram of ${props.statisticName} over ${formatCount(total)} rearrangements of the data, with the observed value marked. ${caption}.`}
      aspect={1.6}
      problem={result.problem}
      testID={props.testID}
      footer={
        result.layout ? (
          <View style={styles.footer}>
            <Txt kind="small" style={styles.caption}>
              {caption}
            </Txt>
            <Legend
              entries={[
                { kind: "band", label: "rearrangements", colour: chart.bar },
                {
                  kind: "band",
                  label: "as or more extreme than observed",
                  colour: chart.barExtreme,
                },
                { kind: "line", label: `observed ${props.statisticName}`, colour: chart.observed },
              ]}
            />
          </View>
        ) : null
      }
    >
      {(viewport) => {
        const layout = result.layout;
        if (!layout) return null;
        const maxCount = Math.max(1, ...layout.bars.map((b) => b.count));
        const yCount = tickCountFor(viewport.height - 60, 40);
        const yDomain = niceDomain([0, maxCount], yCount);
        const yTicks = tickValues(yDomain, yCount).filter((t) => Number.isInteger(t));
        const yLabels = yTicks.map((t) => formatCount(t));
        const area = plotArea(viewport, {
          top: 18,
          right: 14,
          bottom: chart.tickText + chart.labelText + 18,
          left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
        });
        const xDomain = histogramDomain(props.edges, props.observed);
        const xTicks = tickValues(xDomain, tickCountFor(area.width));
        const x = scaleLinear().domain(xDomain).range([area.left, area.right]);
        const y = scaleLinear().domain(yDomain).range([area.bottom, area.top]);
        const ox = x(props.observed);
        const labelOnLeft = ox > (area.left + area.right) / 2;
        return (
          <G>
            <Axis
              orientation="left"
              area={area}
              scale={y}
              ticks={yTicks}
              labels={yLabels}
              title="Rearrangements"
              grid
            />
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={xTicks}
              labels={formatTicks(xTicks)}
              title={props.statisticName}
            />
            {layout.bars.map((b) => (
              <Rect
                key={`${b.x0}`}
                x={x(b.x0) + 0.5}
                y={y(b.count)}
                width={Math.max(0.5, x(b.x1) - x(b.x0) - 1)}
                height={Math.max(0, area.bottom - y(b.count))}
                fill={b.extreme ? chart.barExtreme : chart.bar}
              />
            ))}
            <Line
              x1={ox}
              x2={ox}
              y1={area.top - 8}
              y2={area.bottom}
              stroke={chart.observed}
              strokeWidth={2}
            />
            <SvgText
              x={labelOnLeft ? ox - 4 : ox + 4}
              y={area.top - 6}
              fontSize={chart.tickText}
              fontFamily={fonts.semibold}
              fill={chart.observed}
              textAnchor={labelOnLeft ? "end" : "start"}
            >
              {`observed ${formatValue(props.observed)}`}
            </SvgText>
          </G>
        );
      }}
    </ChartFrame>
  );
}

const styles = StyleSheet.create({
  footer: { gap: space.xs },
  caption: { color: chart.text },
});
