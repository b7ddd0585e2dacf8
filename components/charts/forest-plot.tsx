/**
 * Forest plot: one row per region, in the order given, with the estimate as
 * a mark and its confidence interval as a whisker, a zero line, and the
 * selected region highlighted. Each row is a press target (≥ 24 px tall)
 * that reports its region through `onSelect`.
 */
import { scaleLinear } from "d3-scale";
import { G, Line, Rect, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, requireFinite, tryLayout } from "./chart-input-error";
import { MarkShape } from "./mark-shape";
import { formatValue } from "./number-format";
import { PressTarget } from "./press-target";
import { estimateTextWidth, paddedExtent, plotArea, truncateLabel, type Viewport } from "./scales";
import { formatTicks, niceDomain, tickCountFor, tickValues } from "./ticks";

export interface ForestRow {
  region: string;
  estimate: number;
  /** Confidence interval ends; null when the method gives none. */
  low: number | null;
  high: number | null;
}

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

const TOP = 8;
const BOTTOM = chart.tickText + chart.labelText + 18;

function checkRows(rows: readonly ForestRow[]) {
  if (rows.length === 0) throw new ChartInputError("rows", "holds no regions");
  const seen = new Set<string>();
  rows.forEach((row, i) => {
    if (!row.region) throw new ChartInputError(`rows[${i}].region`, "must name a region");
    if (seen.has(row.region))
      throw new ChartInputError(`rows[${i}].region`, `"${row.region}" appears more than once`);
    seen.add(row.region);
    requireFinite(row.estimate, `rows[${i}].estimate`);
    if (row.low !== null) requireFinite(row.low, `rows[${i}].low`);
    if (row.high !== null) requireFinite(row.high, `rows[${i}].high`);
    if (row.low !== null && row.high !== null && row.low > row.high) {
      throw new ChartInputError(`rows[${i}].low`, `is above high (${row.low} > ${row.high})`);
    }
  });
}

function layoutFor(rows: readonly ForestRow[], viewport: Viewport) {
  const labelWidth = Math.min(
    viewport.width * 0.38,
    Math.max(...rows.map((r) => estimateTextWidth(r.region, chart.tickText)), 40),
  );
  const area = plotArea(viewport, { top: TOP, right: 14, bottom: BOTTOM, left: labelWidth + 12 });
  const values = rows.flatMap((r) => [r.estimate, r.low, r.high]);
  const count = tickCountFor(area.width);
  const domain = niceDomain(paddedExtent(values, { include: [0], pad: 0.04 }), count);
  const x = scaleLinear().domain(domain).range([area.left, area.right]);
  const ticks = tickValues(domain, count);
  return { area, x, ticks, labels: formatTicks(ticks), labelWidth };
}

export function ForestPlot(props: ForestPlotProps) {
  const { rows } = props;
  const interval = props.intervalLabel ?? "95% CI";
  const checked = tryLayout(() => checkRows(rows));
  const heightFor = () => TOP + Math.max(1, rows.length) * chart.forestRowHeight + BOTTOM;
  return (
    <ChartFrame
      label={`Forest plot of ${rows.length} region${rows.length === 1 ? "" : "s"}: estimate and ${interval} for each, with a line at zero. ${props.estimateLabel}.`}
      aspect={1}
      heightFor={heightFor}
      interactive={!!props.onSelect}
      problem={checked.problem}
      testID={props.testID}
    >
      {(viewport) => {
        const { area, x, ticks, labels, labelWidth } = layoutFor(rows, viewport);
        const zero = x(0);
        return (
          <G>
            {rows.map((row, i) => {
              const top = TOP + i * chart.forestRowHeight;
              const mid = top + chart.forestRowHeight / 2;
              const selected = row.region === props.selectedRegion;
              return (
                <G key={row.region}>
                  {selected ? (
                    <Rect
                      x={0}
                      y={top}
                      width={viewport.width}
                      height={chart.forestRowHeight}
                      fill={chart.selectedRow}
                    />
                  ) : null}
                  <SvgText
                    x={4}
                    y={mid + chart.tickText * 0.35}
                    fontSize={chart.tickText}
                    fontFamily={selected ? fonts.semibold : fonts.regular}
                    fill={chart.text}
                  >
                    {truncateLabel(row.region, labelWidth, chart.tickText)}
                  </SvgText>
                </G>
              );
            })}
            <Axis
              orientation="bottom"
              area={area}
              scale={x}
              ticks={ticks}
              labels={labels}
              title={props.estimateLabel}
              grid
            />
            <Line
              x1={zero}
              x2={zero}
              y1={area.top}
              y2={area.bottom}
              stroke={chart.zero}
              strokeWidth={1}
              strokeDasharray="4 3"
            />
            {rows.map((row, i) => {
              const mid = TOP + i * chart.forestRowHeight + chart.forestRowHeight / 2;
              const hasInterval = row.low !== null && row.high !== null;
              return (
                <G key={`m${row.region}`}>
                  {hasInterval ? (
                    <G>
                      <Line
                        x1={x(row.low as number)}
                        x2={x(row.high as number)}
                        y1={mid}
                        y2={mid}
                        stroke={chart.estimate}
                        strokeWidth={chart.strokeWidth}
                      />
                      <Line
                        x1={x(row.low as number)}
                        x2={x(row.low as number)}
                        y1={mid - 4}
                        y2={mid + 4}
                        stroke={chart.estimate}
                        strokeWidth={chart.strokeWidth}
                      />
                      <Line
                        x1={x(row.high as number)}
                        x2={x(row.high as number)}
                        y1={mid - 4}
                        y2={mid + 4}
                        stroke={chart.estimate}
                        strokeWidth={chart.strokeWidth}
                      />
                    </G>
                  ) : null}
                  <MarkShape
                    shape="square"
                    cx={x(row.estimate)}
                    cy={mid}
                    colour={chart.estimate}
                    r={chart.markRadius}
                  />
                </G>
              );
            })}
            {props.onSelect
              ? rows.map((row, i) => {
                  const onSelect = props.onSelect as (region: string) => void;
                  const ci =
                    row.low !== null && row.high !== null
                      ? `, ${interval} ${formatValue(row.low)} to ${formatValue(row.high)}`
                      : "";
                  return (
                    <PressTarget
                      key={`p${row.region}`}
                      x={0}
                      y={TOP + i * chart.forestRowHeight}
                      width={viewport.width}
                      height={chart.forestRowHeight}
                      label={`${row.region}: estimate ${formatValue(row.estimate)}${ci}`}
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
