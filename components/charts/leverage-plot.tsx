/**
 * Residual-versus-leverage plot: studentized residual (vertical) against
 * leverage (horizontal) for every participant, with the contours of Cook's
 * distance (0.5 and 1 by default; see cook-contours.ts), an optional
 * leverage cut-off line, flag shapes and a legend, and `onPointPress` with
 * the participant's id.
 */
import { scaleLinear } from "d3-scale";
import { G, Line, Path, Text as SvgText } from "react-native-svg";
import { chart, fonts } from "../theme";
import { Axis } from "./axis";
import { ChartFrame } from "./chart-frame";
import { ChartInputError, tryLayout } from "./chart-input-error";
import type { ParticipantMark } from "./chart-types";
import { contourPoints } from "./cook-contours";
import { Legend, type LegendEntry, markEntries } from "./legend";
import { describePoint, legendItemsFor } from "./marks";
import { formatValue } from "./number-format";
import { linePath } from "./paths";
import { ParticipantMarks } from "./participant-marks";
import { leftMarginFor, plotArea } from "./scales";
import { formatTicks, tickCountFor, tickValues } from "./ticks";

export interface LeveragePoint extends ParticipantMark {
  /** Leverage h (diagonal of the hat matrix), null when undefined. */
  leverage: number | null;
  /** Studentized residual, null when undefined (leverage 1). */
  residual: number | null;
}

export interface LeveragePlotProps {
  points: readonly LeveragePoint[];
  /** Number of model coefficients p, for the Cook's distance contours. */
  coefficients: number;
  /** Cook's distances to draw as contours. */
  contours?: readonly number[];
  /** Leverage above which the fit flags a participant (e.g. 2p/n), drawn as a dashed line. */
  leverageCut?: number | null;
  /** Vertical axis title, e.g. "Studentized residual". */
  residualLabel?: string;
  selectedId?: string | null;
  onPointPress?: (id: string) => void;
  testID?: string;
}

type Shown = LeveragePoint & { leverage: number; residual: number };

function check(props: LeveragePlotProps) {
  if (!(Number.isInteger(props.coefficients) && props.coefficients >= 1)) {
    throw new ChartInputError("coefficients", `must be a whole number of at least 1 (got ${props.coefficients})`);
  }
  (props.contours ?? []).forEach((d, i) => {
    if (!(Number.isFinite(d) && d > 0)) throw new ChartInputError("contours", `must be positive numbers (got ${d})`, i);
  });
  props.points.forEach((p, i) => {
    if (p.leverage !== null && !(p.leverage >= 0 && p.leverage <= 1)) throw new ChartInputError(`points[${i}].leverage`, `must lie in [0, 1] (got ${p.leverage})`);
    if (p.residual !== null && !Number.isFinite(p.residual)) throw new ChartInputError(`points[${i}].residual`, `must be a finite number (got ${p.residual})`);
  });
}

export function LeveragePlot(props: LeveragePlotProps) {
  const contours = props.contours ?? [0.5, 1];
  const residualLabel = props.residualLabel ?? "Studentized residual";
  const checked = tryLayout(() => check(props));
  const shown = props.points.filter((p): p is Shown => p.leverage !== null && p.residual !== null && p.leverage < 1);
  const hidden = props.points.length - shown.length;
  const entries: LegendEntry[] = [
    ...markEntries(legendItemsFor(shown)),
    { kind: "line", label: "Cook's distance contours", colour: chart.contour, dashed: true },
  ];
  if (props.leverageCut) entries.push({ kind: "line", label: `leverage cut-off ${formatValue(props.leverageCut)}`, colour: chart.reference, dashed: true });
  return (
    <ChartFrame
      label={
        `Residual versus leverage for ${shown.length} participants, with Cook's distance contours at ${contours.map((d) => formatValue(d)).join(" and ")}` +
        (hidden > 0 ? `; ${hidden} with undefined residual not shown` : "") +
        "."
      }
      aspect={1.25}
      interactive={!!props.onPointPress}
      problem={checked.problem}
      testID={props.testID}
      footer={<Legend entries={entries} />}
    >
      {(viewport) => {
        const maxH = Math.max(0.05, props.leverageCut ?? 0, ...shown.map((p) => p.leverage));
        const hMax = Math.min(0.999, maxH * 1.12);
        const rMax = Math.max(3, ...shown.map((p) => Math.abs(p.residual) * 1.1));
        const yCount = tickCountFor(viewport.height - 60, 44);
        const yTicks = tickValues([-rMax, rMax], yCount);
        const yLabels = formatTicks(yTicks);
        const area = plotArea(viewport, {
          top: 10,
          right: 14,
          bottom: chart.tickText + chart.labelText + 18,
          left: leftMarginFor(yLabels, chart.tickText, chart.labelText),
        });
        const xTicks = tickValues([0, hMax], tickCountFor(area.width));
        const x = scaleLinear().domain([0, hMax]).range([area.left, area.right]);
        const y = scaleLinear().domain([-rMax, rMax]).range([area.bottom, area.top]);
        const marks = shown.map((p) => ({
          ...p,
          cx: x(p.leverage),
          cy: y(p.residual),
          label: describePoint(p, [
            { name: "leverage", value: p.leverage },
            { name: "residual", value: p.residual },
          ]),
        }));
        return (
          <G>
            <Axis orientation="left" area={area} scale={y} ticks={yTicks} labels={yLabels} title={residualLabel} grid />
            <Axis orientation="bottom" area={area} scale={x} ticks={xTicks} labels={formatTicks(xTicks)} title="Leverage" />
            <Line x1={area.left} x2={area.right} y1={y(0)} y2={y(0)} stroke={chart.zero} strokeWidth={1} />
            {props.leverageCut && props.leverageCut < hMax ? (
              <Line
                x1={x(props.leverageCut)}
                x2={x(props.leverageCut)}
                y1={area.top}
                y2={area.bottom}
                stroke={chart.reference}
                strokeWidth={1.25}
                strokeDasharray="6 4"
              />
            ) : null}
            {contours.map((d) => {
              const pts = contourPoints(d, props.coefficients, { hMax, rMax, steps: 48 });
              if (pts.length === 0) return null;
              const end = pts[pts.length - 1];
              const upper = pts.map((p) => ({ x: p.h, y: p.r }));
              const lower = pts.map((p) => ({ x: p.h, y: -p.r }));
              return (
                <G key={`c${d}`}>
                  <Path d={linePath(upper, x, y)} fill="none" stroke={chart.contour} strokeWidth={1.25} strokeDasharray="5 4" />
                  <Path d={linePath(lower, x, y)} fill="none" stroke={chart.contour} strokeWidth={1.25} strokeDasharray="5 4" />
                  <SvgText x={x(end.h) - 2} y={y(end.r) - 4} fontSize={chart.tickText} fontFamily={fonts.regular} fill={chart.contour} textAnchor="end">
                    {`D = ${formatValue(d)}`}
                  </SvgText>
                </G>
              );
            })}
            <ParticipantMarks marks={marks} selectedId={props.selectedId} onPress={props.onPointPress} />
          </G>
        );
      }}
    </ChartFrame>
  );
}
