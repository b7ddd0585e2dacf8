/**
 * Permutation null distribution as a histogram: bars from bin edges and
 * counts (bins wholly as extreme as the observed statistic or more, in the
 * test's direction, in a second colour), the observed statistic as a
 * vertical line, and a caption with the statistic's name, its observed
 * value, p and the number of rearrangements. Where everything goes comes
 * from histogram-layout.ts, which the figure writer draws from too.
 */
import { StyleSheet, View } from "react-native";
import { G, Line, Rect, Text as SvgText } from "react-native-svg";
import { chart, fonts, space } from "../theme";
import { Txt } from "../ui";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import {
  type NullHistogramInput,
  nullHistogramAspect,
  nullHistogramLayout,
  nullHistogramWords,
} from "./histogram-layout";
import { Legend } from "./legend";

export interface NullHistogramProps extends NullHistogramInput {
  testID?: string;
}

export function NullHistogram(props: NullHistogramProps) {
  const result = tryLayout(() => nullHistogramWords(props));
  const words = result.layout;
  return (
    <ChartFrame
      label={words ? words.description : ""}
      aspect={nullHistogramAspect}
      problem={result.problem}
      testID={props.testID}
      footer={
        words ? (
          <View style={styles.footer}>
            <Txt kind="small" style={styles.caption}>
              {words.caption}
            </Txt>
            <Legend entries={words.legend} />
          </View>
        ) : null
      }
    >
      {(viewport) => {
        if (!words) return null;
        const layout = nullHistogramLayout(props, viewport);
        return (
          <G>
            <Axis {...layout.yAxis} />
            <Axis {...layout.xAxis} />
            {layout.bars.map((b) => (
              <Rect
                key={`${b.key}`}
                x={b.x}
                y={b.y}
                width={b.width}
                height={b.height}
                fill={b.extreme ? chart.barExtreme : chart.bar}
              />
            ))}
            <Line
              x1={layout.observed.x}
              x2={layout.observed.x}
              y1={layout.observed.y1}
              y2={layout.observed.y2}
              stroke={chart.observed}
              strokeWidth={2}
            />
            <SvgText
              x={layout.observedLabel.x}
              y={layout.observedLabel.y}
              fontSize={chart.tickText}
              fontFamily={fonts.semibold}
              fill={chart.observed}
              textAnchor={layout.observedLabel.anchor}
            >
              {layout.observedLabel.text}
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
