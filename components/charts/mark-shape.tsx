/**
 * One participant mark: a circle, triangle, square or diamond of the same
 * area, filled in its colour, or hollow (outline only) for a participant set
 * aside.
 */
import { Circle, Path } from "react-native-svg";
import { chart, palette } from "../theme";
import { polygonPath, shapeVertices, type MarkShape as Shape } from "./marks";

export interface MarkShapeProps {
  shape: Shape;
  cx: number;
  cy: number;
  colour: string;
  hollow?: boolean;
  r?: number;
}

export function MarkShape(props: MarkShapeProps) {
  const r = props.r ?? chart.markRadius;
  const fill = props.hollow ? "none" : props.colour;
  const stroke = props.hollow ? props.colour : palette.surface;
  const strokeWidth = props.hollow ? chart.strokeWidth : 0.75;
  if (props.shape === "circle") {
    return (
      <Circle
        cx={props.cx}
        cy={props.cy}
        r={r}
        fill={fill}
        stroke={stroke}
        strokeWidth={strokeWidth}
      />
    );
  }
  return (
    <Path
      d={polygonPath(shapeVertices(props.shape, props.cx, props.cy, r))}
      fill={fill}
      stroke={stroke}
      strokeWidth={strokeWidth}
      strokeLinejoin="round"
    />
  );
}
