/**
 * A finished fit's figures: their download addresses
 * (GET /api/fits/:fitId/figures/:name.svg, …/:name.png?width=89|183 and
 * the caption …/:name.txt). Names come from `figureName` in
 * contract/views/figures.ts, as the server lists them.
 */
import type { FigureWidth } from "../contract/views/figures";
import { apiBase } from "./api";

export type { FigureWidth };

/** Same-origin address of a figure as SVG, PNG (one or two columns wide) or its caption. */
export function figureHref(
  fitId: string,
  name: string,
  format: "svg" | "png" | "txt",
  width?: FigureWidth,
): string {
  const base = `${apiBase}/api/fits/${encodeURIComponent(fitId)}/figures/${encodeURIComponent(name)}.${format}`;
  return width !== undefined && format !== "txt" ? `${base}?width=${width}` : base;
}
