/**
 * The figure writer's drawing primitives: turn the plain layouts of
 * components/charts/ (axes, participant marks, legend entries, text) into
 * SVG text with the theme's colours and sizes. No layout decisions are made
 * here beyond the legend's rows under the plot, which the screen lays out
 * with its own flowing text instead. Text is written with the product's
 * font (Inter) and later turned into outlines (outline.ts).
 */
import type { AxisInput } from "../../components/charts/axis-layout";
import { axisLayout } from "../../components/charts/axis-layout";
import type { PlacedMark } from "../../components/charts/chart-types";
import type { LegendEntry } from "../../components/charts/legend-entries";
import {
  type MarkShape,
  drawOrder,
  flagPhrase,
  markFor,
  polygonPath,
  round2,
  shapeVertices,
} from "../../components/charts/marks";
import { estimateTextWidth } from "../../components/charts/scales";
import { chart, palette } from "../../components/theme";

/** Escapes text for an SVG text node or a double-quoted attribute. */
export function escapeXml(text: string): string {
  return text
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&apos;");
}

type AttrValue = string | number | null | undefined;

/** One element: attributes with a null or undefined value are left out; numbers are rounded to 2 decimals. */
export function el(name: string, attrs: Record<string, AttrValue>, children = ""): string {
  const parts = Object.entries(attrs)
    .filter(([, v]) => v !== null && v !== undefined)
    .map(([k, v]) => `${k}="${typeof v === "number" ? round2(v) : escapeXml(String(v))}"`);
  const head = parts.length > 0 ? `<${name} ${parts.join(" ")}` : `<${name}`;
  return children === "" ? `${head}/>` : `${head}>${children}</${name}>`;
}

/** The font family every figure is written with (the files in assets/fonts). */
export const FIGURE_FONT = "Inter";

export interface TextOptions {
  size?: number;
  weight?: 400 | 600;
  fill?: string;
  anchor?: "start" | "middle" | "end";
  rotate?: number;
}

export function text(x: number, y: number, content: string, options: TextOptions = {}): string {
  const rotate = options.rotate ?? 0;
  return el(
    "text",
    {
      x,
      y,
      "font-family": FIGURE_FONT,
      "font-size": options.size ?? chart.tickText,
      "font-weight": options.weight ?? 400,
      fill: options.fill ?? chart.text,
      "text-anchor": options.anchor && options.anchor !== "start" ? options.anchor : undefined,
      transform: rotate ? `rotate(${rotate} ${round2(x)} ${round2(y)})` : undefined,
    },
    escapeXml(content),
  );
}

export function line(
  x1: number,
  y1: number,
  x2: number,
  y2: number,
  stroke: string,
  width = 1,
  dash?: string,
): string {
  return el("line", {
    x1,
    y1,
    x2,
    y2,
    stroke,
    "stroke-width": width,
    "stroke-dasharray": dash,
  });
}

/** An axis drawn from its layout (see axis-layout.ts), as the screen's Axis draws it. */
export function axis(input: AxisInput): string {
  const layout = axisLayout(input);
  const grid = layout.grid.map((g) => line(g.x1, g.y1, g.x2, g.y2, chart.grid)).join("");
  const ticks = layout.ticks
    .map(
      (t) =>
        line(t.mark.x1, t.mark.y1, t.mark.x2, t.mark.y2, chart.axis) +
        text(t.label.x, t.label.y, t.label.text, { anchor: t.label.anchor }),
    )
    .join("");
  const t = layout.title;
  return (
    grid +
    line(layout.line.x1, layout.line.y1, layout.line.x2, layout.line.y2, chart.axis) +
    ticks +
    text(t.x, t.y, t.text, {
      size: chart.labelText,
      weight: 600,
      anchor: t.anchor,
      rotate: t.rotate,
    })
  );
}

/** One mark of a shape, filled, or hollow for a participant set aside (see MarkShape). */
export function markShape(
  shape: MarkShape,
  cx: number,
  cy: number,
  colour: string,
  hollow = false,
  r: number = chart.markRadius,
): string {
  const paint = {
    fill: hollow ? "none" : colour,
    stroke: hollow ? colour : palette.surface,
    "stroke-width": hollow ? chart.strokeWidth : 0.75,
  };
  if (shape === "circle") return el("circle", { cx, cy, r, ...paint });
  return el("path", {
    d: polygonPath(shapeVertices(shape, cx, cy, r)),
    ...paint,
    "stroke-linejoin": "round",
  });
}

/** The attribute a checker or a screen reader finds on every participant mark's group. */
export const PARTICIPANT_MARK_CLASS = "participant-mark";

/**
 * Every participant's mark, flagged ones on top, each in its own group
 * with the class `participant-mark` and the words of its flags (no
 * participant id: a figure leaves the file, the ids stay in the app).
 * `ids` collects each group's id and its attributes, which the outline
 * step puts back after turning text into paths.
 */
export function participantMarks(marks: readonly PlacedMark[], keep: KeptAttributes): string {
  return drawOrder(marks)
    .map((m) => {
      const style = markFor(m.flags, m.setAside ?? false);
      const id = keep.add({
        class: PARTICIPANT_MARK_CLASS,
        "data-flags": m.flags.join(" ") || null,
        "data-set-aside": m.setAside ? "true" : null,
        "aria-label": `participant${flagPhrase(m.flags, m.setAside ?? false) ? `, ${flagPhrase(m.flags, m.setAside ?? false)}` : ""}`,
      });
      return el("g", { id }, markShape(style.shape, m.cx, m.cy, style.colour, style.hollow));
    })
    .join("");
}

/**
 * Attributes that converting text to outlines would drop (classes, data-
 * and aria- attributes): each group gets a fresh id, and outline.ts puts
 * the attributes back on the group with that id.
 */
export class KeptAttributes {
  readonly byId = new Map<string, Record<string, string>>();
  private next = 0;

  add(attrs: Record<string, string | null>): string {
    const id = `fig-${this.next++}`;
    const kept: Record<string, string> = {};
    for (const [k, v] of Object.entries(attrs)) if (v !== null) kept[k] = v;
    this.byId.set(id, kept);
    return id;
  }
}

const SWATCH = 16;
const LEGEND_ROW = 20;

/** Height of the legend under a plot of `width` with `entries` (0 without entries). */
export function legendHeight(entries: readonly LegendEntry[], width: number): number {
  return legendRows(entries, width).length * LEGEND_ROW;
}

function legendRows(entries: readonly LegendEntry[], width: number): LegendEntry[][] {
  const rows: LegendEntry[][] = [];
  let row: LegendEntry[] = [];
  let used = 0;
  for (const e of entries) {
    const w = entryWidth(e);
    if (row.length > 0 && used + w > width - 8) {
      rows.push(row);
      row = [];
      used = 0;
    }
    row.push(e);
    used += w;
  }
  if (row.length > 0) rows.push(row);
  return rows;
}

function entryWidth(e: LegendEntry): number {
  return SWATCH + 4 + estimateTextWidth(e.label, chart.tickText) + 16;
}

/** The legend's rows starting at `top`, swatches as the screen's Legend draws them. */
export function legend(entries: readonly LegendEntry[], width: number, top: number): string {
  return legendRows(entries, width)
    .map((row, r) => {
      let x = 4;
      const y = top + r * LEGEND_ROW;
      return row
        .map((e) => {
          const mid = y + SWATCH / 2;
          let swatch: string;
          if (e.kind === "mark")
            swatch = markShape(e.shape, x + SWATCH / 2, mid, e.colour, e.hollow);
          else if (e.kind === "band")
            swatch = el("rect", {
              x: x + 1,
              y: y + 4,
              width: SWATCH - 2,
              height: SWATCH - 8,
              fill: e.colour,
            });
          else
            swatch = line(
              x + 1,
              mid,
              x + SWATCH - 1,
              mid,
              e.colour,
              2,
              e.dashed ? "4 3" : undefined,
            );
          const label = text(x + SWATCH + 4, mid + chart.tickText * 0.35, e.label);
          x += entryWidth(e);
          return swatch + label;
        })
        .join("");
    })
    .join("");
}
