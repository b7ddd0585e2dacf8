/**
 * A done specification curve (kind "specification-curve"): the summary in
 * words, the specifications in estimate order — each a column with its
 * estimate as a mark and its interval as a bar (filled mark: p < .05;
 * blue above zero, vermillion below, so colour and fill both carry
 * meaning) — and below them the choice panel: one row per estimator,
 * covariate set and exclusion rule, a square in each column whose
 * specification made that choice. Tapping a column, or the 44 px step
 * buttons, selects a specification and shows its numbers. When the
 * study's plan names one of the specifications (contract/plans.ts
 * plannedCurveChoice), its column carries a triangle above the curve, the
 * summary says where it falls among the others, and "Show the planned one"
 * selects it. Those who may run fits can open the selected specification
 * as an ordinary fit ("Fit this specification", fit/open-specification.tsx).
 * Phone first: the columns scroll sideways when they do not fit.
 */
import { useState } from "react";
import { Pressable, ScrollView, StyleSheet, View } from "react-native";
import Svg, { Circle, G, Line, Path, Rect } from "react-native-svg";
import type {
  CurveJointTest,
  CurveSpecification,
  CurveSummary,
} from "../../contract/specification-curve";
import { estimatorLabels } from "../../contract/labels";
import type { ModelSpec } from "../../contract/spec";
import { formatP, formatValue } from "../charts/number-format";
import { chart, marks, palette, radius, space, type } from "../theme";
import { Button, Card, Heading, Txt } from "../ui";
import { formatTicks, tickCountFor, tickValues } from "../charts/ticks";
import { OpenSpecificationButton, type OpenSpecificationContext } from "./open-specification";
import {
  curveLabelWidth,
  curveLayout,
  curveSummaryWords,
  jointTestWords,
  specKey,
} from "./specification-curve-layout";

const ESTIMATE_HEIGHT = 180;
const ROW_HEIGHT = 20;
/** Width of the fixed column naming each choice row. */
/** Half a tick label's line, so its middle sits on its value. */
const TICK_HALF = 8;
/** Half the width of the planned specification's triangle. */
const PLANNED_HALF = 5;

export function SpecificationCurveView(props: {
  specifications: readonly CurveSpecification[];
  summary: CurveSummary;
  jointTest?: CurveJointTest;
  rules: readonly { column: string; op: string; value: number | string; reason: string }[];
  region: string;
  /** The specification the study's plan names, if any. */
  planned?: {
    model: string;
    estimator: string;
    covariates: string[];
    exclusions: number[];
  } | null;
  /** Set for those who may run fits: the selected specification gets "Fit this specification". */
  open?: OpenSpecificationContext | null;
}) {
  const { specifications: specs, summary, jointTest } = props;
  const [panelWidth, setPanelWidth] = useState<number>(chart.defaultWidth);
  const [selected, setSelected] = useState<number | null>(null);
  const labelWidth = curveLabelWidth(
    curveLayout(specs, props.rules, panelWidth).rows,
    panelWidth,
    type.caption,
  );
  const layout = curveLayout(specs, props.rules, panelWidth - labelWidth);
  // Value labels beside the estimate panel (inside its padded range; the title takes the top line).
  const ticks = tickValues([layout.low, layout.high], tickCountFor(ESTIMATE_HEIGHT, 48)).filter(
    (t) => t >= layout.low && t <= layout.high && layout.y(t, ESTIMATE_HEIGHT) > 2 * TICK_HALF,
  );
  const axis = formatTicks(ticks).map((label, k) => ({ value: ticks[k], label }));
  const cw = layout.columnWidth;
  const panelHeight = layout.rows.length * ROW_HEIGHT;
  const chosen = selected === null ? null : specs[selected];
  const plannedChoice = props.planned;
  const plannedIndex = plannedChoice
    ? specs.findIndex((s) => specKey(s) === specKey(plannedChoice))
    : -1;
  const planned = plannedIndex >= 0 ? specs[plannedIndex] : null;
  const step = (by: number) =>
    setSelected((s) => Math.min(specs.length - 1, Math.max(0, (s ?? -by) + by)));
  return (
    <View style={styles.root} testID="specification-curve-view">
      <Card testID="curve-summary">
        <Heading level={3}>{`${summary.count} specifications in ${props.region}`}</Heading>
        <Txt testID="curve-summary-words">{curveSummaryWords(summary)}</Txt>
        {jointTest ? (
          <Txt kind="small" testID="curve-joint-test">
            {jointTestWords(jointTest)}
          </Txt>
        ) : null}
        {planned && props.planned ? (
          <Txt kind="small" testID="curve-planned">
            {`▲ The plan's specification (model "${props.planned.model}"): estimate ${formatValue(planned.estimate)}, ${formatP(planned.p)}; ${plannedIndex + 1} of ${specs.length} in estimate order.`}
          </Txt>
        ) : null}
      </Card>
      <Card>
        <View
          style={styles.panels}
          onLayout={(e) => setPanelWidth(Math.max(chart.minWidth, e.nativeEvent.layout.width))}
        >
          <View style={[styles.labels, { width: labelWidth }]}>
            <View style={{ height: ESTIMATE_HEIGHT + space.md }} testID="curve-axis">
              <Txt kind="caption" style={styles.axisTitle}>
                Estimate
              </Txt>
              {axis.map(({ value, label }) => (
                <Txt
                  key={label}
                  kind="caption"
                  style={[styles.tick, { top: layout.y(value, ESTIMATE_HEIGHT) - TICK_HALF }]}
                >
                  {label}
                </Txt>
              ))}
            </View>
            {layout.rows.map((row) => (
              <Txt key={row.key} kind="caption" style={styles.rowLabel} numberOfLines={1}>
                {row.label}
              </Txt>
            ))}
          </View>
          <ScrollView horizontal testID="curve-columns" style={styles.scroll}>
            <View>
              <Svg width={layout.width} height={ESTIMATE_HEIGHT + panelHeight + space.md}>
                <Line
                  x1={0}
                  x2={layout.width}
                  y1={layout.y(0, ESTIMATE_HEIGHT)}
                  y2={layout.y(0, ESTIMATE_HEIGHT)}
                  stroke={chart.zero}
                  strokeWidth={1}
                />
                {specs.map((s, k) => {
                  const x = k * cw + cw / 2;
                  const colour = s.estimate >= 0 ? marks.blue : marks.vermillion;
                  const significant = s.p < 0.05;
                  return (
                    <G key={specKey(s)}>
                      {selected === k ? (
                        <Rect
                          x={k * cw}
                          y={0}
                          width={cw}
                          height={ESTIMATE_HEIGHT + panelHeight + space.md}
                          fill={chart.selectedRow}
                        />
                      ) : null}
                      {s.ciLow !== null && s.ciHigh !== null ? (
                        <Line
                          x1={x}
                          x2={x}
                          y1={layout.y(s.ciHigh, ESTIMATE_HEIGHT)}
                          y2={layout.y(s.ciLow, ESTIMATE_HEIGHT)}
                          stroke={colour}
                          strokeOpacity={0.45}
                          strokeWidth={Math.max(2, cw / 3)}
                        />
                      ) : null}
                      {k === plannedIndex ? (
                        <Path
                          d={`M ${x - PLANNED_HALF} 0 L ${x + PLANNED_HALF} 0 L ${x} ${PLANNED_HALF * 1.6} Z`}
                          fill={palette.ink}
                          testID="curve-planned-mark"
                        />
                      ) : null}
                      <Circle
                        cx={x}
                        cy={layout.y(s.estimate, ESTIMATE_HEIGHT)}
                        r={Math.min(chart.markRadius, cw / 2 - 1)}
                        fill={significant ? colour : palette.surface}
                        stroke={colour}
                        strokeWidth={chart.strokeWidth}
                      />
                      {layout.rows.map((row, j) =>
                        row.made[k] ? (
                          <Rect
                            key={row.key}
                            x={x - Math.min(4, cw / 2 - 1)}
                            y={ESTIMATE_HEIGHT + space.md + j * ROW_HEIGHT + ROW_HEIGHT / 2 - 4}
                            width={Math.min(8, cw - 2)}
                            height={8}
                            rx={1}
                            fill={palette.ink}
                          />
                        ) : null,
                      )}
                    </G>
                  );
                })}
              </Svg>
              <View style={[StyleSheet.absoluteFill, styles.hitRow]}>
                {specs.map((s, k) => (
                  <Pressable
                    key={specKey(s)}
                    style={{ width: cw, height: "100%" }}
                    onPress={() => setSelected(k)}
                    accessibilityRole="button"
                    accessibilityLabel={`Specification ${k + 1}: ${s.estimator}, estimate ${formatValue(s.estimate)}`}
                  />
                ))}
              </View>
            </View>
          </ScrollView>
        </View>
        <View style={styles.steps}>
          <Button label="Previous" variant="secondary" onPress={() => step(-1)} />
          <Button label="Next" variant="secondary" onPress={() => step(1)} />
          {plannedIndex >= 0 ? (
            <Button
              label="Show the planned one"
              variant="secondary"
              onPress={() => setSelected(plannedIndex)}
            />
          ) : null}
        </View>
        {chosen ? (
          <View style={styles.detail} testID="curve-selected">
            <Txt kind="label">
              {`Specification ${(selected ?? 0) + 1} of ${specs.length}${selected === plannedIndex ? " — the plan's" : ""}`}
            </Txt>
            <Txt kind="small">
              {`${estimatorLabels[chosen.estimator as ModelSpec["estimator"]] ?? chosen.estimator}; covariates: ${chosen.covariates.join(", ") || "none"}; rules applied: ${chosen.exclusions.map((k) => props.rules[k]?.reason ?? `rule ${k + 1}`).join(", ") || "none"}`}
            </Txt>
            <Txt kind="small">
              {`n = ${chosen.n}; estimate ${formatValue(chosen.estimate)}${chosen.ciLow !== null && chosen.ciHigh !== null ? ` [${formatValue(chosen.ciLow)}, ${formatValue(chosen.ciHigh)}]` : ""}; ${formatP(chosen.p)}`}
            </Txt>
            {props.open ? (
              <OpenSpecificationButton
                context={props.open}
                index={(selected ?? 0) + 1}
                choice={chosen}
              />
            ) : null}
          </View>
        ) : null}
      </Card>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  hitRow: { flexDirection: "row" },
  panels: { flexDirection: "row" },
  labels: { paddingRight: space.xs },
  axisTitle: { position: "absolute", left: 0, top: 0, color: palette.inkSoft },
  tick: {
    position: "absolute",
    right: space.xs,
    color: palette.inkSoft,
    fontVariant: ["tabular-nums"],
    lineHeight: 2 * TICK_HALF,
  },
  scroll: { flex: 1 },
  rowLabel: { color: palette.inkSoft, height: ROW_HEIGHT, lineHeight: ROW_HEIGHT },
  steps: { flexDirection: "row", flexWrap: "wrap", gap: space.sm, marginTop: space.md },
  detail: {
    marginTop: space.md,
    padding: space.md,
    borderRadius: radius.md,
    backgroundColor: palette.canvas,
    gap: space.xs,
  },
});
