/**
 * How the data table fits its box, kept free of React Native so it can be
 * tested on its own: when a box counts as narrow (a phone), how wide each
 * column is there, and whether the columns overflow the box and how far the
 * person has scrolled them.
 */
import { space, table } from "../theme";

/** Below this box width (px) the table is narrow: closer cells, smaller figures. */
export const narrowBoxWidth = 600;

export function isNarrowBox(boxWidth: number): boolean {
  return boxWidth > 0 && boxWidth < narrowBoxWidth;
}

/** Horizontal padding of a cell (px) in a box of this kind. */
export function cellPadding(narrow: boolean): number {
  return narrow ? space.xs : table.cellPaddingX;
}

/**
 * A column's width (px): `narrowWidth` in a narrow box when given, else
 * `width`, else the theme's default for the pinned first column or any
 * other. The first column also takes whatever room the others leave.
 */
export function columnWidth(
  index: number,
  meta: { width?: number; narrowWidth?: number } | undefined,
  narrow: boolean,
): number {
  if (narrow && meta?.narrowWidth !== undefined) return meta.narrowWidth;
  return meta?.width ?? (index === 0 ? table.pinnedWidth : table.cellWidth);
}

export interface Overflow {
  /** The columns are wider than the box (by more than a pixel of rounding). */
  overflow: boolean;
  /** Scrolled as far right as the columns go. */
  atEnd: boolean;
  /** Scrolled away from the first columns. */
  atStart: boolean;
}

export function overflowState(boxWidth: number, contentWidth: number, scrollX: number): Overflow {
  const overflow = boxWidth > 0 && contentWidth > boxWidth + 1;
  return {
    overflow,
    atEnd: !overflow || scrollX + boxWidth >= contentWidth - 1,
    atStart: scrollX <= 1,
  };
}

/** Where "More columns →" scrolls to: most of a box further right, or back to the start from the end. */
export function nextScrollX(boxWidth: number, contentWidth: number, scrollX: number): number {
  const state = overflowState(boxWidth, contentWidth, scrollX);
  if (state.atEnd) return 0;
  return Math.min(contentWidth - boxWidth, scrollX + Math.max(80, boxWidth * 0.7));
}
