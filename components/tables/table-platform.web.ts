/**
 * Web-only table details: the first cell of each row is `position: sticky`
 * at the left edge of the horizontally scrolling table, so the id column
 * stays put while the other columns scroll under it; column headers carry
 * `aria-sort`.
 */
import type { ViewStyle } from "react-native";

/** Sticky positioning is CSS that react-native-web passes through; React Native's style types do not list it. */
export const pinnedCellStyle = { position: "sticky", left: 0, zIndex: 1 } as unknown as ViewStyle;

/** `aria-sort` for a column header. */
export function sortAttributes(
  direction: "ascending" | "descending" | "none",
): Readonly<Record<string, string>> {
  return { "aria-sort": direction };
}
