/**
 * Variance shares of a fit weighted by first-level standard errors: one
 * compact stacked bar per region, measurement noise beside true differences
 * between participants, with the percentages in words (so colour is never
 * the only carrier) and the τ² method named under the bars.
 *
 *   <VarianceShares regions={fit.result.regions.map((r) => ({ region: r.region, tau2: r.tau2, i2: r.i2,
 *     noiseShare: r.noiseShare, trueShare: r.trueShare, tau2Method: spec.tau2Method }))} />
 */
import { StyleSheet, View } from "react-native";
import { tryLayout } from "../charts/chart-input-error";
import { Legend } from "../charts/legend";
import { palette, radius, space } from "../theme";
import { Txt } from "../ui";
import {
  type VarianceShareInput,
  varianceColours,
  varianceShareRows,
  varianceSharesLabel,
  varianceSharesLegend,
  varianceSharesMethod,
} from "./variance-shares-layout";

export type { VarianceShareInput };

export interface VarianceSharesProps {
  regions: readonly VarianceShareInput[];
  testID?: string;
}

const NOISE = varianceColours.noise;
const TRUE = varianceColours.truth;

export function VarianceShares(props: VarianceSharesProps) {
  const result = tryLayout(() => varianceShareRows(props.regions));
  if (result.problem !== null) {
    return (
      <View style={styles.problem} accessibilityRole="alert" testID={props.testID}>
        <Txt kind="label" style={styles.problemTitle}>
          The variance shares cannot be drawn
        </Txt>
        <Txt kind="small">{result.problem}</Txt>
      </View>
    );
  }
  return (
    <View style={styles.root} testID={props.testID}>
      <View role="list" accessibilityLabel={varianceSharesLabel}>
        {result.layout.map((row) => (
          <View
            key={row.region}
            style={styles.row}
            role="listitem"
            accessibilityLabel={`${row.region}: ${row.words}; ${row.detail}`}
          >
            <View style={styles.head}>
              <Txt kind="label" numberOfLines={1} style={styles.region}>
                {row.region}
              </Txt>
              <Txt kind="caption">{row.detail}</Txt>
            </View>
            <View style={styles.bar} aria-hidden>
              {row.noiseShare > 0 ? (
                <View style={[styles.segment, { flex: row.noiseShare, backgroundColor: NOISE }]} />
              ) : null}
              {row.trueShare > 0 ? (
                <View style={[styles.segment, { flex: row.trueShare, backgroundColor: TRUE }]} />
              ) : null}
            </View>
            <Txt kind="caption" style={styles.words}>
              {row.words}
            </Txt>
          </View>
        ))}
      </View>
      <Legend label="Variance shares legend" entries={varianceSharesLegend} />
      <Txt kind="caption" style={styles.method}>
        {varianceSharesMethod(props.regions)}
      </Txt>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { width: "100%", gap: space.sm },
  row: { gap: space.xs, paddingVertical: space.xs },
  head: {
    flexDirection: "row",
    flexWrap: "wrap",
    justifyContent: "space-between",
    alignItems: "baseline",
    gap: space.sm,
  },
  region: { flexShrink: 1 },
  bar: {
    flexDirection: "row",
    height: 14,
    borderRadius: radius.sm,
    overflow: "hidden",
    backgroundColor: palette.canvasDeep,
    borderWidth: 1,
    borderColor: palette.line,
  },
  segment: { height: "100%" },
  words: { color: palette.inkSoft },
  method: { color: palette.muted },
  problem: {
    backgroundColor: palette.dangerSoft,
    borderRadius: radius.md,
    padding: space.md,
    gap: space.xs,
  },
  problemTitle: { color: palette.danger },
});
