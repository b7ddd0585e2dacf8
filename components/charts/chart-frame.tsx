/**
 * The box every plot draws in: measures its width, lays the SVG out at one
 * unit per CSS pixel (so 11-unit text is 11-px text), scales it by its
 * viewBox to fill the width with a fixed aspect ratio, names the plot for
 * assistive technology, and shows a plot's input problem in its place.
 */
import { type ReactNode, useState } from "react";
import { type LayoutChangeEvent, StyleSheet, View } from "react-native";
import Svg from "react-native-svg";
import { palette, radius, space } from "../theme";
import { Txt } from "../ui";
import { chartViewport, type Viewport } from "./scales";

export interface ChartFrameProps {
  /** Accessible description of the whole plot. */
  label: string;
  /** Width / height of the drawing (ignored when `heightFor` is given). */
  aspect: number;
  /** Drawing height for a given width, for plots whose height follows their content (forest plot). */
  heightFor?: (width: number) => number;
  /** True when the plot holds pressable marks: it is then a named group, not a single image. */
  interactive?: boolean;
  /** A plot input problem to show instead of the drawing. */
  problem?: string | null;
  /** Content under the drawing (legend, caption). */
  footer?: ReactNode;
  testID?: string;
  children: (viewport: Viewport) => ReactNode;
}

export function ChartFrame(props: ChartFrameProps) {
  const [measured, setMeasured] = useState<number | null>(null);
  const onLayout = (event: LayoutChangeEvent) => {
    const w = Math.round(event.nativeEvent.layout.width);
    if (w > 0 && w !== measured) setMeasured(w);
  };
  const base = chartViewport(measured, props.aspect);
  const viewport = props.heightFor
    ? chartViewport(measured, props.aspect, props.heightFor(base.width))
    : base;
  return (
    <View style={styles.root} onLayout={onLayout} testID={props.testID}>
      {props.problem ? (
        <View style={styles.problem} accessibilityRole="alert">
          <Txt kind="label" style={styles.problemTitle}>
            This plot cannot be drawn
          </Txt>
          <Txt kind="small">{props.problem}</Txt>
        </View>
      ) : (
        <Svg
          width="100%"
          viewBox={`0 0 ${viewport.width} ${viewport.height}`}
          style={{ width: "100%", aspectRatio: viewport.width / viewport.height }}
          role={props.interactive ? "group" : "img"}
          accessibilityLabel={props.label}
        >
          {props.children(viewport)}
        </Svg>
      )}
      {props.footer}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { width: "100%", gap: space.sm },
  problem: {
    backgroundColor: palette.dangerSoft,
    borderRadius: radius.md,
    padding: space.md,
    gap: space.xs,
  },
  problemTitle: { color: palette.danger },
});
