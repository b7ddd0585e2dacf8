/**
 * Table details that only the web build can express (native platforms get
 * none): see table-platform.web.ts.
 */
import type { ViewStyle } from "react-native";

/** Style that keeps the first (id) cell of each row in place while the rest scrolls sideways. */
export const pinnedCellStyle: ViewStyle = {};

/** Attributes announcing a column header's sort direction. */
export function sortAttributes(
  _direction: "ascending" | "descending" | "none",
): Readonly<Record<never, never>> {
  return {};
}
