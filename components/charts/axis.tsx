/**
 * A plot axis: its line, tick marks, tick labels, optional grid lines across
 * the plot area, and its title (which names the quantity and its unit,
 * e.g. "Contrast value (a.u.)"). Where each part goes comes from
 * axis-layout.ts (the figure writer draws from the same layout); the tick
 * values and labels come from ticks.ts so every plot numbers its axes the
 * same way.
 */
import { G, Line, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { type AxisInput, axisLayout } from "./axis-layout";

export type AxisProps = AxisInput;

export function Axis(props: AxisProps) {
  const layout = axisLayout(props);
  const { title } = layout;
  return (
    <G>
      {layout.grid.map((g, i) => (
        <Line key={`g${props.ticks[i]}`} {...g} stroke={chart.grid} strokeWidth={1} />
      ))}
      <Line {...layout.line} stroke={chart.axis} strokeWidth={1} />
      {layout.ticks.map((t) => (
        <G key={`t${t.key}`}>
          <Line {...t.mark} stroke={chart.axis} strokeWidth={1} />
          <SvgText
            x={t.label.x}
            y={t.label.y}
            fontSize={chart.tickText}
            fontFamily={fonts.regular}
            fill={chart.text}
            textAnchor={t.label.anchor}
          >
            {t.label.text}
          </SvgText>
        </G>
      ))}
      <SvgText
        x={title.x}
        y={title.y}
        fontSize={chart.labelText}
        fontFamily={fonts.semibold}
        fill={chart.text}
        textAnchor="middle"
        transform={title.rotate ? `rotate(${title.rotate} ${title.x} ${title.y})` : undefined}
      >
        {title.text}
      </SvgText>
    </G>
  );
}
