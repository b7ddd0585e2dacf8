/**
 * A figure of a fit as SVG text, drawn from the same layout modules the
 * screen draws from (components/charts/*-layout.ts): the forest plot, the
 * scatter plot, the strip plot, the influence view, the permutation
 * null histogram, a weighted fit's variance shares, the planner's power
 * curve and a prediction fit's observed against predicted plot, learning
 * curve and region weights. Each builder lays its plot out at `width` SVG units (the
 * screen's one unit per CSS pixel, see figureUnits) and adds the legend
 * under it; `svgDocument` wraps the drawing with its size in millimetres,
 * a viewBox, a white background, a <title> and a <desc>.
 */
import {
  checkForestRows,
  type ForestRow,
  forestDescription,
  forestHeight,
  forestLayout,
} from "../../components/charts/forest-layout";
import {
  type NullHistogramInput,
  nullHistogramAspect,
  nullHistogramLayout,
  nullHistogramWords,
} from "../../components/charts/histogram-layout";
import {
  cutColour,
  type FlagCuts,
  type InfluencePoint,
  influenceDescription,
  influenceHeight,
  influenceLayout,
  influenceMarks,
} from "../../components/charts/influence-layout";
import {
  learningCurveAspect,
  learningCurveDescription,
  learningCurveLayout,
  learningCurveLegend,
  learningCurveStyle,
} from "../../components/charts/learning-curve-layout";
import type { LegendEntry } from "../../components/charts/legend-entries";
import {
  type ObservedPredictedInput,
  observedPredictedAspect,
  observedPredictedDescription,
  observedPredictedLayout,
  observedPredictedLegend,
  predictionPointOpacity,
} from "../../components/charts/observed-predicted-layout";
import {
  type PowerCurveInput,
  powerCurveAspect,
  powerCurveDescription,
  powerCurveLayout,
  powerCurveLegend,
  powerPointRadius,
} from "../../components/charts/power-curve-layout";
import { chartViewport, truncateLabel } from "../../components/charts/scales";
import {
  checkScatter,
  type ScatterInput,
  scatterAspect,
  scatterDescription,
  scatterLayout,
  scatterLegend,
} from "../../components/charts/scatter-layout";
import {
  type StripInput,
  stripAspect,
  stripDescription,
  stripLayout,
  stripLegend,
  stripPlotLayout,
} from "../../components/charts/strip-layout";
import {
  weightDotDescription,
  weightDotHeight,
  weightDotLayout,
} from "../../components/charts/weight-dot-layout";
import type { LearningCurvePoint } from "../../contract/prediction";
import type { WeightRow } from "../../components/fit/prediction-layout";
import {
  type VarianceShareInput,
  varianceColours,
  varianceShareRows,
  varianceSharesLabel,
  varianceSharesLegend,
  varianceSharesMethod,
} from "../../components/fit/variance-shares-layout";
import { chart, markRoles, palette } from "../../components/theme";
import {
  axis,
  el,
  escapeXml,
  KeptAttributes,
  legend,
  legendHeight,
  line,
  markShape,
  PARTICIPANT_MARK_CLASS,
  participantMarks,
  text,
} from "./svg-writer";

/** A figure before its size in millimetres is set: drawing size in SVG units, body, words. */
export interface RawFigure {
  width: number;
  height: number;
  title: string;
  /** What is drawn, for assistive technology and for anyone searching the file. */
  description: string;
  body: string;
  kept: KeptAttributes;
}

/**
 * SVG units per millimetre: a one-column figure is laid out 360 units wide,
 * the screen's default plot width, so its 11-unit tick labels print at
 * about 7.7 pt (journals ask for 6–8 pt).
 */
export const figureUnits = 360 / 89;

/** Layout width in SVG units of a figure `mm` wide. */
export function figureLayoutWidth(mm: number): number {
  return Math.round(mm * figureUnits);
}

function withLegend(
  width: number,
  plotHeight: number,
  body: string,
  entries: readonly LegendEntry[],
  extra = "",
): { height: number; body: string } {
  const captionLine = extra ? 18 : 0;
  const legendTop = plotHeight + 8 + captionLine;
  const lh = legendHeight(entries, width);
  const caption = extra ? text(4, plotHeight + 8 + chart.tickText, extra) : "";
  return {
    height: Math.ceil(legendTop + lh + (lh > 0 ? 4 : 0)),
    body: body + caption + legend(entries, width, legendTop),
  };
}

/** Forest plot of every region in the order given. Throws ChartInputError on bad rows. */
export function forestFigure(
  rows: readonly ForestRow[],
  options: { estimateLabel: string; intervalLabel?: string; title: string },
  width: number,
): RawFigure {
  checkForestRows(rows);
  const interval = options.intervalLabel ?? "95% CI";
  const viewport = chartViewport(width, 1, forestHeight(rows.length));
  const layout = forestLayout(rows, viewport, {
    estimateLabel: options.estimateLabel,
    intervalLabel: interval,
  });
  const kept = new KeptAttributes();
  const labels = layout.rows
    .map((r) => {
      const id = kept.add({ class: "forest-row", "data-region": r.region, "aria-label": r.words });
      return el("g", { id }, text(r.labelX, r.labelY, r.label));
    })
    .join("");
  const { area } = layout;
  const marks = layout.rows
    .map((r) => {
      const whisker =
        r.lowX !== null && r.highX !== null
          ? line(r.lowX, r.mid, r.highX, r.mid, chart.estimate, chart.strokeWidth) +
            line(
              r.lowX,
              r.mid - layout.cap,
              r.lowX,
              r.mid + layout.cap,
              chart.estimate,
              chart.strokeWidth,
            ) +
            line(
              r.highX,
              r.mid - layout.cap,
              r.highX,
              r.mid + layout.cap,
              chart.estimate,
              chart.strokeWidth,
            )
          : "";
      return whisker + markShape("square", r.cx, r.mid, chart.estimate);
    })
    .join("");
  const body =
    labels +
    axis(layout.axis) +
    line(layout.zeroX, area.top, layout.zeroX, area.bottom, chart.zero, 1, "4 3") +
    marks;
  return {
    width: viewport.width,
    height: viewport.height,
    title: options.title,
    description: `${forestDescription(rows.length, interval, options.estimateLabel)} ${layout.rows.map((r) => `${r.words}.`).join(" ")}`,
    body,
    kept,
  };
}

/** Scatter plot of a trait against the contrast value. Throws ChartInputError on bad points. */
export function scatterFigure(input: ScatterInput, title: string, width: number): RawFigure {
  checkScatter(input.points);
  const viewport = chartViewport(width, scatterAspect);
  const layout = scatterLayout(input, viewport);
  const kept = new KeptAttributes();
  const body =
    axis(layout.yAxis) +
    axis(layout.xAxis) +
    (layout.bandPath ? el("path", { d: layout.bandPath, fill: markRoles.band }) : "") +
    (layout.linePath
      ? el("path", { d: layout.linePath, fill: "none", stroke: markRoles.fit, "stroke-width": 2 })
      : "") +
    participantMarks(layout.marks, kept);
  const framed = withLegend(viewport.width, viewport.height, body, scatterLegend(input));
  return { width: viewport.width, title, description: scatterDescription(input), kept, ...framed };
}

/** Strip plot of contrast values by group (or one sample around zero). Throws ChartInputError on bad input. */
export function stripFigure(input: StripInput, title: string, width: number): RawFigure {
  const { counts } = stripLayout(input.groups, input.points);
  const viewport = chartViewport(width, stripAspect);
  const layout = stripPlotLayout(input, viewport);
  const kept = new KeptAttributes();
  const { area } = layout;
  const columns = layout.columns
    .map((c) => {
      const whisker =
        c.lowY !== null && c.highY !== null
          ? line(c.sx, c.lowY, c.sx, c.highY, chart.estimate, chart.strokeWidth) +
            line(
              c.sx - layout.cap,
              c.lowY,
              c.sx + layout.cap,
              c.lowY,
              chart.estimate,
              chart.strokeWidth,
            ) +
            line(
              c.sx - layout.cap,
              c.highY,
              c.sx + layout.cap,
              c.highY,
              chart.estimate,
              chart.strokeWidth,
            )
          : "";
      return (
        text(c.labelX, c.labelY, c.label, { weight: 600, anchor: "middle" }) +
        whisker +
        line(c.sx - c.half, c.meanY, c.sx + c.half, c.meanY, chart.estimate, 3)
      );
    })
    .join("");
  const body =
    axis(layout.yAxis) +
    line(area.left, area.bottom, area.right, area.bottom, chart.axis) +
    line(area.left, layout.zeroY, area.right, layout.zeroY, chart.zero, 1, "4 3") +
    columns +
    participantMarks(layout.marks, kept);
  const framed = withLegend(viewport.width, viewport.height, body, stripLegend(input));
  return {
    width: viewport.width,
    title,
    description: stripDescription(input, counts),
    kept,
    ...framed,
  };
}

/** The influence view: Cook's distance, leverage and studentized residual with the flags' cut-offs. */
export function influenceFigure(
  points: readonly InfluencePoint[],
  cuts: FlagCuts,
  title: string,
  width: number,
): RawFigure {
  const viewport = chartViewport(width, 1, influenceHeight(width));
  const layout = influenceLayout(points, cuts, viewport);
  const kept = new KeptAttributes();
  const { left, right } = layout.plot;
  const panels = layout.panels
    .map((panel) => {
      const ticks = panel.ticks
        .map(
          (t) =>
            line(left, t.y, right, t.y, chart.grid) +
            text(left - 5, t.y + chart.tickText * 0.35, t.label, { anchor: "end" }),
        )
        .join("");
      const cut = panel.cut
        ? line(left, panel.cut.y, right, panel.cut.y, cutColour[panel.cut.flag], 1.5, "6 4") +
          text(panel.cut.textX, panel.cut.textY, panel.cut.text, {
            weight: 600,
            fill: cutColour[panel.cut.flag],
            anchor: "end",
          })
        : "";
      const cues =
        panel.key === "cook"
          ? ""
          : layout.points
              .flatMap((p) =>
                p.cues[panel.key].map((c) =>
                  markShape(c.shape, c.cx, c.cy, c.colour, c.hollow, c.r),
                ),
              )
              .join("");
      return (
        text(left, panel.top - 6, panel.title, { size: chart.labelText, weight: 600 }) +
        ticks +
        line(left, panel.top, left, panel.bottom, chart.axis) +
        line(left, panel.bottom, right, panel.bottom, chart.axis) +
        cut +
        cues
      );
    })
    .join("");
  const extraCues = layout.points
    .flatMap((p) =>
      p.cues.cook.slice(1).map((c) => markShape(c.shape, c.cx, c.cy, c.colour, c.hollow, c.r)),
    )
    .join("");
  const labels = layout.labels
    .map(
      (l) =>
        (l.leader
          ? line(l.leader.x1, l.leader.y1, l.leader.x2, l.leader.y2, chart.axis, 0.75)
          : "") + text(l.x, l.y, l.text, { anchor: l.anchor }),
    )
    .join("");
  const body =
    panels +
    extraCues +
    participantMarks(influenceMarks(layout), kept) +
    labels +
    text(layout.axisTitle.x, layout.axisTitle.y, layout.axisTitle.text, {
      size: chart.labelText,
      weight: 600,
      anchor: "middle",
    }) +
    (layout.note ? text(layout.note.x, layout.note.y, layout.note.text, { anchor: "middle" }) : "");
  const framed = withLegend(viewport.width, viewport.height, body, layout.legend);
  return {
    width: viewport.width,
    title,
    description: influenceDescription(points, cuts),
    kept,
    ...framed,
  };
}

/** The permutation null distribution with the observed statistic. Throws ChartInputError on bad input. */
export function nullFigure(input: NullHistogramInput, title: string, width: number): RawFigure {
  const words = nullHistogramWords(input);
  const viewport = chartViewport(width, nullHistogramAspect);
  const layout = nullHistogramLayout(input, viewport);
  const bars = layout.bars
    .map((b) =>
      el("rect", {
        x: b.x,
        y: b.y,
        width: b.width,
        height: b.height,
        fill: b.extreme ? chart.barExtreme : chart.bar,
      }),
    )
    .join("");
  const o = layout.observed;
  const l = layout.observedLabel;
  const body =
    axis(layout.yAxis) +
    axis(layout.xAxis) +
    bars +
    line(o.x, o.y1, o.x, o.y2, chart.observed, 2) +
    text(l.x, l.y, l.text, { weight: 600, fill: chart.observed, anchor: l.anchor });
  const framed = withLegend(viewport.width, viewport.height, body, words.legend, words.caption);
  return {
    width: viewport.width,
    title,
    description: words.description,
    kept: new KeptAttributes(),
    ...framed,
  };
}

/**
 * Variance shares of a weighted fit: per region its name and τ²/I² on one
 * line, a stacked bar (noise, then true differences) and the shares in
 * words under it — the rows, words, colours and legend of the screen's
 * view (variance-shares-layout.ts), stacked at fixed heights since the
 * screen lays them out with flowing text.
 */
export function varianceFigure(
  regions: readonly VarianceShareInput[],
  title: string,
  width: number,
): RawFigure {
  const rows = varianceShareRows(regions);
  const rowHeight = 52;
  const barWidth = width - 8;
  const kept = new KeptAttributes();
  const body = rows
    .map((row, i) => {
      const top = 4 + i * rowHeight;
      const noise = barWidth * row.noiseShare;
      const id = kept.add({
        class: "variance-row",
        "data-region": row.region,
        "aria-label": `${row.region}: ${row.words}; ${row.detail}`,
      });
      return el(
        "g",
        { id },
        text(4, top + 12, truncateLabel(row.region, width * 0.55, chart.labelText), {
          size: chart.labelText,
          weight: 600,
        }) +
          text(width - 4, top + 12, row.detail, { anchor: "end" }) +
          el("rect", {
            x: 4,
            y: top + 18,
            width: barWidth,
            height: 14,
            fill: palette.canvasDeep,
            stroke: palette.line,
          }) +
          (row.noiseShare > 0
            ? el("rect", {
                x: 4,
                y: top + 18,
                width: noise,
                height: 14,
                fill: varianceColours.noise,
              })
            : "") +
          (row.trueShare > 0
            ? el("rect", {
                x: 4 + noise,
                y: top + 18,
                width: barWidth - noise,
                height: 14,
                fill: varianceColours.truth,
              })
            : "") +
          text(4, top + 45, row.words),
      );
    })
    .join("");
  const plotHeight = 4 + rows.length * rowHeight;
  const framed = withLegend(width, plotHeight, body, varianceSharesLegend);
  return {
    width,
    title,
    description: `${varianceSharesLabel}. ${rows.map((r) => `${r.region}: ${r.words}; ${r.detail}.`).join(" ")} ${varianceSharesMethod(regions)}`,
    kept,
    ...framed,
  };
}

/**
 * The planner's power curve: axes, the target line, the curve with a point
 * (`<g class="power-point" data-n>`) at each planned N, and the answer's
 * marker. Throws ChartInputError on bad input.
 */
export function powerFigure(input: PowerCurveInput, title: string, width: number): RawFigure {
  const viewport = chartViewport(width, powerCurveAspect);
  const layout = powerCurveLayout(input, viewport);
  const kept = new KeptAttributes();
  const { target, answer } = layout;
  const points = layout.points
    .map((p) => {
      const id = kept.add({ class: "power-point", "data-n": String(p.n), "aria-label": p.words });
      return el(
        "g",
        { id },
        el("circle", { cx: p.cx, cy: p.cy, r: powerPointRadius, fill: chart.curve }),
      );
    })
    .join("");
  const marker = answer
    ? line(answer.x, answer.y1, answer.x, answer.y2, chart.estimate, 1.5, "4 3") +
      (answer.dot
        ? el("circle", {
            cx: answer.dot.cx,
            cy: answer.dot.cy,
            r: chart.markRadius + 1,
            fill: chart.estimate,
          })
        : "") +
      text(answer.label.x, answer.label.y, answer.label.text, {
        size: chart.labelText,
        weight: 600,
        fill: chart.estimate,
        anchor: answer.label.anchor,
      })
    : "";
  const body =
    axis(layout.yAxis) +
    axis(layout.xAxis) +
    line(target.x1, target.y, target.x2, target.y, chart.reference, 1.5, "6 4") +
    el("path", { d: layout.curvePath, fill: "none", stroke: chart.curve, "stroke-width": 2.5 }) +
    points +
    marker;
  const framed = withLegend(viewport.width, viewport.height, body, powerCurveLegend(input));
  return {
    width: viewport.width,
    title,
    description: powerCurveDescription(input),
    kept,
    ...framed,
  };
}

/**
 * A prediction fit's observed against predicted plot: one point per
 * held-out participant (`<g class="participant-mark" aria-label>`, the
 * values but no participant id) and the identity line.
 */
export function observedPredictedFigure(
  input: ObservedPredictedInput,
  title: string,
  width: number,
): RawFigure {
  const viewport = chartViewport(width, observedPredictedAspect);
  const layout = observedPredictedLayout(input, viewport);
  const kept = new KeptAttributes();
  const { identity } = layout;
  const points = layout.points
    .map((p) => {
      const id = kept.add({
        class: PARTICIPANT_MARK_CLASS,
        "aria-label": `participant, ${p.words}`,
      });
      return el(
        "g",
        { id },
        el("circle", {
          cx: p.cx,
          cy: p.cy,
          r: chart.markRadius,
          fill: markRoles.participant,
          "fill-opacity": predictionPointOpacity,
          stroke: markRoles.participant,
          "stroke-width": 1,
        }),
      );
    })
    .join("");
  const body =
    axis(layout.yAxis) +
    axis(layout.xAxis) +
    line(identity.x1, identity.y1, identity.x2, identity.y2, chart.reference, 1.5, "6 4") +
    points;
  const framed = withLegend(viewport.width, viewport.height, body, observedPredictedLegend);
  return {
    width: viewport.width,
    title,
    description: observedPredictedDescription(input),
    kept,
    ...framed,
  };
}

/** A prediction fit's learning curve: r and r² against training rows with their bands. */
export function learningCurveFigure(
  points: readonly LearningCurvePoint[],
  title: string,
  width: number,
): RawFigure {
  const viewport = chartViewport(width, learningCurveAspect);
  const layout = learningCurveLayout(points, viewport);
  const { zero } = layout;
  const R = learningCurveStyle.r;
  const R2 = learningCurveStyle.r2;
  const body =
    axis(layout.yAxis) +
    axis(layout.xAxis) +
    line(zero.x1, zero.y, zero.x2, zero.y, chart.zero, 1, "4 3") +
    el("path", { d: layout.r.band, fill: R.colour, "fill-opacity": R.bandOpacity }) +
    el("path", { d: layout.r2.band, fill: R2.colour, "fill-opacity": R2.bandOpacity }) +
    el("path", { d: layout.r.line, fill: "none", stroke: R.colour, "stroke-width": 2.5 }) +
    el("path", {
      d: layout.r2.line,
      fill: "none",
      stroke: R2.colour,
      "stroke-width": 2.5,
      "stroke-dasharray": "6 4",
    }) +
    layout.r.points.map((p) => markShape("circle", p.cx, p.cy, R.colour)).join("") +
    layout.r2.points.map((p) => markShape("square", p.cx, p.cy, R2.colour)).join("");
  const framed = withLegend(viewport.width, viewport.height, body, learningCurveLegend(points));
  return {
    width: viewport.width,
    title,
    description: learningCurveDescription(points),
    kept: new KeptAttributes(),
    ...framed,
  };
}

/**
 * A prediction fit's region weights as the screen's sorted dot chart, one
 * `<g class="weight-row" data-region aria-label>` per region.
 */
export function weightsFigure(rows: readonly WeightRow[], title: string, width: number): RawFigure {
  const viewport = chartViewport(width, 1, weightDotHeight(rows, width));
  const layout = weightDotLayout(rows, viewport);
  const kept = new KeptAttributes();
  const { header, zero } = layout;
  const stripes = layout.rows
    .map((row) =>
      row.stripe
        ? el("rect", {
            x: 0,
            y: row.stripe.y,
            width: viewport.width,
            height: row.stripe.height,
            fill: chart.grid,
            "fill-opacity": 0.35,
          })
        : "",
    )
    .join("");
  const marks = layout.rows
    .map((row) => {
      const id = kept.add({
        class: "weight-row",
        "data-region": row.region,
        "aria-label": row.words,
      });
      return el(
        "g",
        { id },
        row.lines.map((l) => text(l.x, l.y, l.text)).join("") +
          el("line", {
            x1: row.zeroX,
            y1: row.mid,
            x2: row.cx,
            y2: row.mid,
            stroke: row.colour,
            "stroke-opacity": 0.35,
            "stroke-width": 1,
          }) +
          el("circle", {
            cx: row.cx,
            cy: row.mid,
            r: chart.markRadius + 0.5,
            fill: row.colour,
            "fill-opacity": row.opacity,
            stroke: row.colour,
            "stroke-width": 1.25,
          }) +
          text(row.share.x, row.share.y, row.share.text, { anchor: "end" }),
      );
    })
    .join("");
  const body =
    text(header.x, header.y, header.text, { weight: 600, anchor: "end" }) +
    stripes +
    axis(layout.xAxis) +
    line(zero.x, zero.y1, zero.x, zero.y2, chart.zero, 1, "4 3") +
    marks;
  return {
    width: viewport.width,
    height: viewport.height,
    title,
    description: `${weightDotDescription(rows)} ${layout.rows.map((r) => `${r.words}.`).join(" ")}`,
    body,
    kept,
  };
}

/** What a figure draws, as plain data (it crosses to the figure worker thread). */
export type FigureInput =
  | { kind: "forest"; rows: ForestRow[]; estimateLabel: string; title: string }
  | { kind: "scatter"; input: ScatterInput; title: string }
  | { kind: "strip"; input: StripInput; title: string }
  | { kind: "influence"; points: InfluencePoint[]; cuts: FlagCuts; title: string }
  | { kind: "null"; input: NullHistogramInput; title: string }
  | { kind: "variance-shares"; regions: VarianceShareInput[]; title: string }
  | { kind: "power-curve"; input: PowerCurveInput; title: string }
  | { kind: "observed-predicted"; input: ObservedPredictedInput; title: string }
  | { kind: "learning-curve"; points: LearningCurvePoint[]; title: string }
  | { kind: "weights"; rows: WeightRow[]; title: string };

/** The figure laid out `widthMm` wide (89 or 183 mm), with text still as text. */
export function drawFigure(figure: FigureInput, widthMm: number): RawFigure {
  const width = figureLayoutWidth(widthMm);
  switch (figure.kind) {
    case "forest":
      return forestFigure(
        figure.rows,
        { estimateLabel: figure.estimateLabel, intervalLabel: "95% CI", title: figure.title },
        width,
      );
    case "scatter":
      return scatterFigure(figure.input, figure.title, width);
    case "strip":
      return stripFigure(figure.input, figure.title, width);
    case "influence":
      return influenceFigure(figure.points, figure.cuts, figure.title, width);
    case "null":
      return nullFigure(figure.input, figure.title, width);
    case "variance-shares":
      return varianceFigure(figure.regions, figure.title, width);
    case "power-curve":
      return powerFigure(figure.input, figure.title, width);
    case "observed-predicted":
      return observedPredictedFigure(figure.input, figure.title, width);
    case "learning-curve":
      return learningCurveFigure(figure.points, figure.title, width);
    case "weights":
      return weightsFigure(figure.rows, figure.title, width);
  }
}

/**
 * The figure as a standalone SVG document `widthMm` millimetres wide (the
 * height follows the drawing's proportions), with a viewBox in layout
 * units, a white background, and its <title> and <desc> named by
 * aria-labelledby. Text is still text here; see outline.ts.
 */
export function svgDocument(figure: RawFigure, widthMm: number): string {
  const heightMm = (figure.height / figure.width) * widthMm;
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" width="${round3(widthMm)}mm" height="${round3(heightMm)}mm" ` +
    `viewBox="0 0 ${figure.width} ${figure.height}" role="img" aria-labelledby="figure-title figure-desc">` +
    `<title id="figure-title">${escapeXml(figure.title)}</title>` +
    `<desc id="figure-desc">${escapeXml(figure.description)}</desc>` +
    el("rect", { x: 0, y: 0, width: figure.width, height: figure.height, fill: palette.surface }) +
    figure.body +
    "</svg>"
  );
}

function round3(v: number): number {
  return Math.round(v * 1000) / 1000;
}
