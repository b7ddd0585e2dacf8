/**
 * The invisible, labelled press area over a plot mark or row (web): an SVG
 * group with the button role, reachable with Tab, pressed with a click,
 * Enter or Space, showing a focus ring while focused or selected and a
 * tooltip with its label on hover.
 */
import { type KeyboardEvent, useState } from "react";
import { chart } from "../theme";
import type { PressTargetProps } from "./chart-types";

export function PressTarget(props: PressTargetProps) {
  const { x, y, width, height, rx = 0 } = props;
  const [focused, setFocused] = useState(false);
  const onKeyDown = (event: KeyboardEvent<SVGGElement>) => {
    if (event.key === "Enter" || event.key === " ") {
      event.preventDefault();
      props.onPress();
    }
  };
  return (
    <g
      role="button"
      tabIndex={0}
      aria-label={props.label}
      aria-pressed={props.selected ? true : undefined}
      data-testid={props.testID}
      onClick={props.onPress}
      onKeyDown={onKeyDown}
      onFocus={() => setFocused(true)}
      onBlur={() => setFocused(false)}
      style={{ cursor: "pointer", outline: "none" }}
    >
      <title>{props.label}</title>
      <rect x={x} y={y} width={width} height={height} rx={rx} fill="transparent" />
      {focused || props.selected ? (
        <rect
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
    </g>
  );
}
