/**
 * Table details that only the web build can express (native platforms get
 * none, or a plain stand-in): see table-platform.web.ts.
 */
import type { TextStyle, ViewStyle } from "react-native";
import { palette } from "../theme";

/** Style that keeps the first (id) cell of each row in place while the rest scrolls sideways. */
export const pinnedCellStyle: ViewStyle = {};

/** Text that may take several lines (the web build collapses its spaces). */
export const wrapText: TextStyle = {};

/** Lets a long name without spaces break anywhere instead of running out of its cell. */
export const breakAnywhere: TextStyle = {};

/** The fade at the right edge of a table whose columns go on beyond its box. */
export const edgeFadeStyle: ViewStyle = { backgroundColor: palette.surface, opacity: 0.6 };

/** Attributes announcing a column header's sort direction. */
export function sortAttributes(
  _direction: "ascending" | "descending" | "none",
): Readonly<Record<never, never>> {
  return {};
}

/** Brings a row into sight (native platforms: nothing). */
export function revealElement(_view: unknown): void {}
