/**
 * Plot geometry shared by every chart: the drawing size, the plot area inside
 * the margins, data ranges with padding, and text-width estimates used to
 * size margins and shorten long labels.
 */
import { chart } from "../theme";

export interface Viewport {
  width: number;
  height: number;
}

export interface Margins {
  top: number;
  right: number;
  bottom: number;
  left: number;
}

export interface PlotArea {
  left: number;
  top: number;
  right: number;
  bottom: number;
  width: number;
  height: number;
}

/**
 * The SVG's own coordinate size: one unit per CSS pixel of the measured
 * width (so 11-unit text is 11-px text), clamped to the theme's minimum and
 * maximum, and a height of width / aspect. Before the width is known, the
 * theme's default width is used; the SVG still scales to fill its box
 * through its viewBox. `height` can be fixed instead (forest plot rows).
 */
export function chartViewport(
  measuredWidth: number | null,
  aspect: number,
  fixedHeight?: number,
): Viewport {
  const raw = measuredWidth !== null && measuredWidth > 0 ? measuredWidth : chart.defaultWidth;
  const width = Math.round(Math.min(chart.maxWidth, Math.max(chart.minWidth, raw)));
  const height =
    fixedHeight !== undefined
      ? Math.round(fixedHeight)
      : Math.round(width / (aspect > 0 ? aspect : 1.4));
  return { width, height };
}

/** The rectangle inside the margins. Throws a RangeError when the margins leave no room. */
export function plotArea(viewport: Viewport, margins: Margins): PlotArea {
  const width = viewport.width - margins.left - margins.right;
  const height = viewport.height - margins.top - margins.bottom;
  if (width <= 0 || height <= 0) {
    throw new RangeError(
      `plotArea: margins ${JSON.stringify(margins)} leave no room in ${viewport.width}×${viewport.height}`,
    );
  }
  return {
    left: margins.left,
    top: margins.top,
    right: margins.left + width,
    bottom: margins.top + height,
    width,
    height,
  };
}

/**
 * The range of the finite `values` together with every number in `include`
 * (for example 0 for a zero line), widened by `pad` times its length on each
 * side. A single value v gives v ± |v|/10 (±1 around zero); no finite value
 * at all gives [0, 1]. Cost O(n).
 */
export function paddedExtent(
  values: Iterable<number | null | undefined>,
  options: { include?: readonly number[]; pad?: number } = {},
): [number, number] {
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  const take = (v: number | null | undefined) => {
    if (v === null || v === undefined || !Number.isFinite(v)) return;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  };
  for (const v of values) take(v);
  for (const v of options.include ?? []) take(v);
  if (lo > hi) return [0, 1];
  if (lo === hi) {
    const half = lo === 0 ? 1 : Math.abs(lo) * 0.1;
    return [lo - half, hi + half];
  }
  const pad = (options.pad ?? 0.05) * (hi - lo);
  return [lo - pad, hi + pad];
}

/** Rough width of `text` at `fontSize` px: 0.6 em per character, a safe upper estimate for the theme's fonts. */
export function estimateTextWidth(text: string, fontSize: number): number {
  return Array.from(text).length * fontSize * 0.6;
}

/** `text` shortened with an ellipsis so that its estimated width fits `maxWidth` px. */
export function truncateLabel(text: string, maxWidth: number, fontSize: number): string {
  if (estimateTextWidth(text, fontSize) <= maxWidth) return text;
  const chars = Array.from(text);
  const keep = Math.max(1, Math.floor(maxWidth / (fontSize * 0.6)) - 1);
  return chars.slice(0, keep).join("") + "…";
}

/** Left margin that fits the widest of `labels` plus the rotated axis title and a gap. */
export function leftMarginFor(
  labels: readonly string[],
  fontSize: number,
  titleSize: number,
): number {
  const widest = labels.reduce((m, l) => Math.max(m, estimateTextWidth(l, fontSize)), 0);
  return Math.ceil(widest + titleSize + 14);
}
