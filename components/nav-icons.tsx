/**
 * The navigation's icons, drawn (not text characters, which each font draws
 * differently): Studies as stacked sheets, Planner as a dial with its
 * needle, Mailbox as an envelope. 20×20, stroked in the given colour.
 */
import Svg, { Circle, Path, Rect } from "react-native-svg";

export type NavIconName = "studies" | "planner" | "mailbox";

export function NavIcon(props: { name: NavIconName; color: string; size?: number }) {
  const size = props.size ?? 20;
  const stroke = {
    stroke: props.color,
    strokeWidth: 1.8,
    fill: "none",
    strokeLinecap: "round",
    strokeLinejoin: "round",
  } as const;
  return (
    <Svg
      width={size}
      height={size}
      viewBox="0 0 20 20"
      accessibilityElementsHidden
      importantForAccessibility="no"
      testID={`nav-icon-${props.name}`}
    >
      {props.name === "studies" ? (
        <>
          <Rect x={4} y={3} width={12} height={14} rx={1.5} {...stroke} />
          <Path d="M7 7h6M7 10h6M7 13h4" {...stroke} />
        </>
      ) : props.name === "planner" ? (
        <>
          <Path d="M3 14a7 7 0 0 1 14 0" {...stroke} />
          <Path d="M10 14l3.5-4.5" {...stroke} />
          <Circle cx={10} cy={14} r={1.4} fill={props.color} />
          <Path d="M3 17h14" {...stroke} />
        </>
      ) : (
        <>
          <Rect x={2.5} y={4.5} width={15} height={11} rx={1.5} {...stroke} />
          <Path d="M3 5.5l7 5.5 7-5.5" {...stroke} />
        </>
      )}
    </Svg>
  );
}
