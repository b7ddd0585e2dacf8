/**
 * Web-only table details: the first cell of each row is `position: sticky`
 * at the left edge of the horizontally scrolling table, so the id column
 * stays put while the other columns scroll under it; long names break
 * anywhere rather than run out of their cell, and wrapped text drops the
 * space at a line's end; the right edge of a table
 * whose columns go on fades out; column headers carry `aria-sort`.
 */
import type { TextStyle, ViewStyle } from "react-native";
import { palette } from "../theme";

/** Sticky positioning is CSS that react-native-web passes through; React Native's style types do not list it. */
export const pinnedCellStyle = { position: "sticky", left: 0, zIndex: 1 } as unknown as ViewStyle;

/**
 * Wrapping text collapses its spaces (react-native-web keeps them, and the
 * space kept at a line's end would hang past a right-aligned cell's edge).
 */
export const wrapText = { whiteSpace: "normal" } as unknown as TextStyle;

/** CSS `overflow-wrap: anywhere` (react-native-web passes it through). */
export const breakAnywhere = { overflowWrap: "anywhere" } as unknown as TextStyle;

/** A gradient from transparent to the table's surface colour. */
export const edgeFadeStyle = {
  backgroundImage: `linear-gradient(to right, ${palette.surface}00, ${palette.surface})`,
} as unknown as ViewStyle;

/** `aria-sort` for a column header. */
export function sortAttributes(
  direction: "ascending" | "descending" | "none",
): Readonly<Record<string, string>> {
  return { "aria-sort": direction };
}

/** Scrolls a row (an element on the web) to the middle of its scrolling parent. */
export function revealElement(view: unknown): void {
  const element = view as HTMLElement | null;
  if (element && typeof element.scrollIntoView === "function")
    element.scrollIntoView({ block: "center" });
}
