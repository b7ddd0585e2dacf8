/**
 * What a plot's key lists: participant marks by meaning (shape, colour,
 * hollow for set aside) and, where a plot has them, lines and bands. The
 * screen's `Legend` and the figure writer (server/figures/) draw the same
 * entries. Pure: no React.
 */
import type { LegendItem } from "./marks";

export type LegendEntry =
  | ({ kind: "mark" } & LegendItem)
  | { kind: "line"; label: string; colour: string; dashed?: boolean }
  | { kind: "band"; label: string; colour: string };

/** Legend entries for participant marks. */
export function markEntries(items: readonly LegendItem[]): LegendEntry[] {
  return items.map((item) => ({ kind: "mark", ...item }));
}
