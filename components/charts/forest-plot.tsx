/**
 * Forest plot: one row per region, in the order given, with the estimate as
 * a mark and its confidence interval as a whisker, a zero line, and the
 * selected region highlighted. Each row is a press target (≥ 24 px tall)
 * that reports its region through `onSelect`. Where everything goes comes
 * from forest-layout.ts, which the figure writer draws from too.
 */
import { G, Line, Rect, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { tryLayout } from "./chart-input-error";
import {
  checkForestRows,
  type ForestRow,
  forestDescription,
  forestHeight,
  forestLayout,
} from "./forest-layout";
import { MarkShape } from "./mark-shape";
import { PressTarget } from "./press-target";

export type { ForestRow };

export interface ForestPlotProps {
  rows: readonly ForestRow[];
  /** Horizontal axis title with its unit, e.g. "Patients − controls (contrast, a.u.)". */
  estimateLabel: string;
  /** Interval name for accessible labels, e.g. "95% CI". */
  intervalLabel?: string;
  selectedRegion?: string | null;
  onSelect?: (region: string) => void;
  testID?: string;
}

export function ForestPlot(props: ForestPlotProps) {
  const { rows } = props;
  const interval = props.intervalLabel ?? "95% CI";
  const checked = tryLayout(() => checkForestRows(rows));
  return (
    <ChartFrame
      label={forestDescription(rows.length, interval, props.estimateLabel)}
      aspect={1}
      heightFor={() => forestHeight(rows.length)}
      interactive={!!props.onSelect}
      problem={checked.problem}
      testID={props.testID}
    >
      {(viewport) => {
        const layout = forestLayout(rows, viewport, {
          estimateLabel: props.estimateLabel,
          intervalLabel: interval,
        });
        const { area } = layout;
        return (
          <G>
            {layout.rows.map((row) => {
              const selected = row.region === props.selectedRegion;
              return (
                <G key={row.region}>
                  {selected ? (
                    <Rect
                      x={0}
                      y={row.top}
                      width={viewport.width}
                      height={chart.forestRowHeight}
                      fill={chart.selectedRow}
                    />
                  ) : null}
                  <SvgText
                    x={row.labelX}
                    y={row.labelY}
                    fontSize={chart.tickText}
                    fontFamily={selected ? fonts.semibold : fonts.regular}
                    fill={chart.text}
                  >
                    {row.label}
                  </SvgText>
                </G>
              );
            })}
            <Axis {...layout.axis} />
            <Line
              x1={layout.zeroX}
              x2={layout.zeroX}
              y1={area.top}
              y2={area.bottom}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            {layout.rows.map((row) => (
              <G key={`m${row.region}`}>
                {row.lowX !== null && row.highX !== null ? (
                  <G>
                    <Line
                      x1={row.lowX}
                      x2={row.highX}
                      y1={row.mid}
                      y2={row.mid}
                      stroke={chart.estimate}
                      strokeWidth={chart.strokeWidth}
                    />
                    <Line
                      x1={row.lowX}
                      x2={row.lowX}
                      y1={row.mid - layout.cap}
                      y2={row.mid + layout.cap}
                      stroke={chart.estimate}
                      strokeWidth={chart.strokeWidth}
                    />
                    <Line
                      x1={row.highX}
                      x2={row.highX}
                      y1={row.mid - layout.cap}
                      y2={row.mid + layout.cap}
                      stroke={chart.estimate}
                      strokeWidth={chart.strokeWidth}
                    />
                  </G>
                ) : null}
                <MarkShape
                  shape="square"
                  cx={row.cx}
                  cy={row.mid}
                  colour={chart.estimate}
                  r={chart.markRadius}
                />
              </G>
            ))}
            {props.onSelect
              ? layout.rows.map((row) => {
                  const onSelect = props.onSelect as (region: string) => void;
                  return (
                    <PressTarget
                      key={`p${row.region}`}
                      x={0}
                      y={row.top}
                      width={viewport.width}
                      height={chart.forestRowHeight}
                      label={row.words}
                      selected={row.region === props.selectedRegion}
                      onPress={() => onSelect(row.region)}
                    />
                  );
                })
              : null}
          </G>
        );
      }}
    </ChartFrame>
  );
}
