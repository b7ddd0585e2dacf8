/**
 * A plot axis: its line, tick marks, tick labels, optional grid lines across
 * the plot area, and its title (which names the quantity and its unit,
 * e.g. "Contrast value (a.u.)"). The tick values and labels come from
 * ticks.ts so every plot numbers its axes the same way.
 */
import { G, Line, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import type { PlotArea } from "./scales";

export interface AxisProps {
  orientation: "bottom" | "left";
  area: PlotArea;
  /** Data value → SVG coordinate along this axis. */
  scale: (value: number) => number;
  ticks: readonly number[];
  /** One label per tick (see formatTicks). */
  labels: readonly string[];
  /** Axis title with its unit. */
  title: string;
  /** Draw faint grid lines across the plot at each tick. */
  grid?: boolean;
  /** Distance from the SVG's left edge to the left title's baseline centre (left axes). */
  titleInset?: number;
}

const TICK = 4;

export function Axis(props: AxisProps) {
  const { area, scale, ticks, labels, title } = props;
  if (props.orientation === "bottom") {
    const titleY = area.bottom + TICK + chart.tickText + 6 + chart.labelText;
    return (
      <G>
        {props.grid
          ? ticks.map((t) => (
              <Line
                key={`g${t}`}
                x1={scale(t)}
                x2={scale(t)}
                y1={area.top}
                y2={area.bottom}
                stroke={chart.grid}
                strokeWidth={1}
              />
            ))
          : null}
        <Line
          x1={area.left}
          x2={area.right}
          y1={area.bottom}
          y2={area.bottom}
          stroke={chart.axis}
          strokeWidth={1}
        />
        {ticks.map((t, i) => (
          <G key={`t${t}`}>
            <Line
              x1={scale(t)}
              x2={scale(t)}
              y1={area.bottom}
              y2={area.bottom + TICK}
              stroke={chart.axis}
              strokeWidth={1}
            />
            <SvgText
              x={scale(t)}
              y={area.bottom + TICK + chart.tickText}
              fontSize={chart.tickText}
              fontFamily={fonts.regular}
              fill={chart.text}
              textAnchor="middle"
            >
              {labels[i]}
            </SvgText>
          </G>
        ))}
        <SvgText
          x={(area.left + area.right) / 2}
          y={titleY}
          fontSize={chart.labelText}
          fontFamily={fonts.semibold}
          fill={chart.text}
          textAnchor="middle"
        >
          {title}
        </SvgText>
      </G>
    );
  }
  const titleX = props.titleInset ?? chart.labelText;
  const titleY = (area.top + area.bottom) / 2;
  return (
    <G>
      {props.grid
        ? ticks.map((t) => (
            <Line
              key={`g${t}`}
              x1={area.left}
              x2={area.right}
              y1={scale(t)}
              y2={scale(t)}
              stroke={chart.grid}
              strokeWidth={1}
            />
          ))
        : null}
      <Line
        x1={area.left}
        x2={area.left}
        y1={area.top}
        y2={area.bottom}
        stroke={chart.axis}
        strokeWidth={1}
      />
      {ticks.map((t, i) => (
        <G key={`t${t}`}>
          <Line
            x1={area.left - TICK}
            x2={area.left}
            y1={scale(t)}
            y2={scale(t)}
            stroke={chart.axis}
            strokeWidth={1}
          />
          <SvgText
            x={area.left - TICK - 3}
            y={scale(t) + chart.tickText * 0.35}
            fontSize={chart.tickText}
            fontFamily={fonts.regular}
            fill={chart.text}
            textAnchor="end"
          >
            {labels[i]}
          </SvgText>
        </G>
      ))}
      <SvgText
        x={titleX}
        y={titleY}
        fontSize={chart.labelText}
        fontFamily={fonts.semibold}
        fill={chart.text}
        textAnchor="middle"
        transform={`rotate(-90 ${titleX} ${titleY})`}
      >
        {title}
      </SvgText>
    </G>
  );
}
