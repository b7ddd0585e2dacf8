/**
 * The key under a plot: participant marks by meaning (shape, colour, hollow
 * for set aside) and, where a plot has them, lines and bands. Drawn as text
 * with small swatches so it wraps on a narrow phone.
 */
import { StyleSheet, View } from "react-native";
import Svg, { Line, Rect } from "react-native-svg";
import { chart, space } from "../theme";
import { Txt } from "../ui";
import { MarkShape } from "./mark-shape";
import type { LegendEntry } from "./legend-entries";

export { type LegendEntry, markEntries } from "./legend-entries";

export interface LegendProps {
  entries: readonly LegendEntry[];
  /** Accessible name of the legend as a whole. */
  label?: string;
}

const SWATCH = 16;

export function Legend(props: LegendProps) {
  if (props.entries.length === 0) return null;
  return (
    <View style={styles.root} role="list" accessibilityLabel={props.label ?? "Legend"}>
      {props.entries.map((entry) => (
        <View key={`${entry.kind}:${entry.label}`} style={styles.item} role="listitem">
          <View aria-hidden>
            <Svg width={SWATCH} height={SWATCH} viewBox={`0 0 ${SWATCH} ${SWATCH}`}>
              <Swatch entry={entry} />
            </Svg>
          </View>
          <Txt kind="caption" style={styles.label}>
            {entry.label}
          </Txt>
        </View>
      ))}
    </View>
  );
}

function Swatch({ entry }: { entry: LegendEntry }) {
  const mid = SWATCH / 2;
  if (entry.kind === "mark")
    return (
      <MarkShape
        shape={entry.shape}
        cx={mid}
        cy={mid}
        colour={entry.colour}
        hollow={entry.hollow}
      />
    );
  if (entry.kind === "band")
    return <Rect x={1} y={4} width={SWATCH - 2} height={SWATCH - 8} fill={entry.colour} />;
  return (
    <Line
      x1={1}
      x2={SWATCH - 1}
      y1={mid}
      y2={mid}
      stroke={entry.colour}
      strokeWidth={2}
      strokeDasharray={entry.dashed ? "4 3" : undefined}
    />
  );
}

const styles = StyleSheet.create({
  root: {
    flexDirection: "row",
    flexWrap: "wrap",
    columnGap: space.lg,
    rowGap: space.xs,
    paddingHorizontal: space.xs,
  },
  item: { flexDirection: "row", alignItems: "center", gap: space.xs, minHeight: 20 },
  label: { color: chart.text },
});
