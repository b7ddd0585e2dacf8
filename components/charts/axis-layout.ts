/**
 * Where an axis draws its parts: the axis line, tick marks, tick labels,
 * optional grid lines across the plot area and the title. The screen's
 * `Axis` component and the figure writer (server/figures/) both draw from
 * this, so a figure numbers and places its axes as the screen does. Pure:
 * no React, no SVG.
 */
import { chart } from "../theme";
import type { PlotArea } from "./scales";

export interface AxisInput {
  orientation: "bottom" | "left";
  area: PlotArea;
  /** Data value → SVG coordinate along this axis. */
  scale: (value: number) => number;
  ticks: readonly number[];
  /** One label per tick (see formatTicks). */
  labels: readonly string[];
  /** Axis title with its unit. */
  title: string;
  /** Draw faint grid lines across the plot at each tick. */
  grid?: boolean;
  /** Distance from the SVG's left edge to the left title's baseline centre (left axes). */
  titleInset?: number;
}

export interface AxisSegment {
  x1: number;
  y1: number;
  x2: number;
  y2: number;
}

export type TextAnchor = "start" | "middle" | "end";

export interface AxisText {
  x: number;
  y: number;
  text: string;
  anchor: TextAnchor;
  /** Degrees, about (x, y); 0 for level text. */
  rotate: number;
}

export interface AxisLayout {
  grid: AxisSegment[];
  line: AxisSegment;
  ticks: { key: number; mark: AxisSegment; label: AxisText }[];
  title: AxisText;
}

/** Length of a tick mark. */
export const TICK = 4;

/** The parts of one axis, in SVG units. Cost O(ticks). */
export function axisLayout(input: AxisInput): AxisLayout {
  const { area, scale, ticks, labels, title } = input;
  if (input.orientation === "bottom") {
    return {
      grid: input.grid
        ? ticks.map((t) => ({ x1: scale(t), x2: scale(t), y1: area.top, y2: area.bottom }))
        : [],
      line: { x1: area.left, x2: area.right, y1: area.bottom, y2: area.bottom },
      ticks: ticks.map((t, i) => ({
        key: t,
        mark: { x1: scale(t), x2: scale(t), y1: area.bottom, y2: area.bottom + TICK },
        label: {
          x: scale(t),
          y: area.bottom + TICK + chart.tickText,
          text: labels[i],
          anchor: "middle",
          rotate: 0,
        },
      })),
      title: {
        x: (area.left + area.right) / 2,
        y: area.bottom + TICK + chart.tickText + 6 + chart.labelText,
        text: title,
        anchor: "middle",
        rotate: 0,
      },
    };
  }
  return {
    grid: input.grid
      ? ticks.map((t) => ({ x1: area.left, x2: area.right, y1: scale(t), y2: scale(t) }))
      : [],
    line: { x1: area.left, x2: area.left, y1: area.top, y2: area.bottom },
    ticks: ticks.map((t, i) => ({
      key: t,
      mark: { x1: area.left - TICK, x2: area.left, y1: scale(t), y2: scale(t) },
      label: {
        x: area.left - TICK - 3,
        y: scale(t) + chart.tickText * 0.35,
        text: labels[i],
        anchor: "end",
        rotate: 0,
      },
    })),
    title: {
      x: input.titleInset ?? chart.labelText,
      y: (area.top + area.bottom) / 2,
      text: title,
      anchor: "middle",
      rotate: -90,
    },
  };
}
