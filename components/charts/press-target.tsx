/**
 * The invisible, labelled press area over a plot mark or row (native
 * platforms). The web build uses press-target.web.tsx, which is also
 * reachable by keyboard.
 */
import { G, Rect } from "react-native-svg";
import { chart } from "../theme";
import type { PressTargetProps } from "./chart-types";

export function PressTarget(props: PressTargetProps) {
  const { x, y, width, height, rx = 0 } = props;
  return (
    <G
      onPress={props.onPress}
      accessible
      accessibilityRole="button"
      accessibilityLabel={props.label}
      testID={props.testID}
    >
      <Rect
        x={x}
        y={y}
        width={width}
        height={height}
        rx={rx}
        fill={chart.focus}
        fillOpacity={0.001}
      />
      {props.selected ? (
        <Rect
          x={x + 1}
          y={y + 1}
          width={width - 2}
          height={height - 2}
          rx={Math.max(0, rx - 1)}
          fill="none"
          stroke={chart.focus}
          strokeWidth={2}
        />
      ) : null}
    </G>
  );
}
