/**
 * How a participant's flags show in a plot: one shape and one colour per
 * meaning (colour from the theme's `markRoles`, which are colour-blind safe,
 * and a distinct shape so no meaning rests on colour alone), hollow marks
 * for participants set aside, and the words used in legends and in each
 * mark's accessible name.
 *
 * Shapes have the same area as a circle of radius r, so no flag looks
 * bigger than another: square side r√π, diamond half-diagonal r√(π/2),
 * equilateral triangle side r·√(4π/√3).
 */
import { markRoles } from "../theme";
import type { Flag, ParticipantMark } from "./chart-types";
import { formatValue } from "./number-format";

export type MarkShape = "circle" | "triangle" | "square" | "diamond";
export type MarkRole = "participant" | Flag | "setAside";

export interface MarkStyle {
  role: MarkRole;
  shape: MarkShape;
  colour: string;
  hollow: boolean;
}

/** Shape per meaning. */
export const roleShape: Readonly<Record<MarkRole, MarkShape>> = {
  participant: "circle",
  outlier: "triangle",
  leverage: "square",
  influence: "diamond",
  setAside: "circle",
};

/** Legend and accessible-name words per meaning. */
export const roleLabel: Readonly<Record<MarkRole, string>> = {
  participant: "participant",
  outlier: "outlier",
  leverage: "high leverage",
  influence: "influential",
  setAside: "set aside",
};

/** Which flag decides the shape when a participant has several: influence, then outlier, then leverage. */
const precedence: readonly Flag[] = ["influence", "outlier", "leverage"];

/** The flag that decides a mark's shape and colour, or null when unflagged. */
export function primaryFlag(flags: readonly Flag[]): Flag | null {
  for (const f of precedence) if (flags.includes(f)) return f;
  return null;
}

/**
 * The mark of a participant: shape and colour of the primary flag (circle in
 * the participant colour when unflagged); a participant set aside keeps the
 * shape of their flag but is drawn hollow in the set-aside colour.
 */
export function markFor(flags: readonly Flag[], setAside = false): MarkStyle {
  const flag = primaryFlag(flags);
  const role: MarkRole = flag ?? "participant";
  if (setAside)
    return { role: "setAside", shape: roleShape[role], colour: markRoles.setAside, hollow: true };
  return { role, shape: roleShape[role], colour: markRoles[role], hollow: false };
}

/** Words for a participant's state: "flagged outlier and influential, set aside"; "" when neither. */
export function flagPhrase(flags: readonly Flag[], setAside = false): string {
  const ordered = precedence.filter((f) => flags.includes(f)).map((f) => roleLabel[f]);
  const parts: string[] = [];
  if (ordered.length > 0) parts.push(`flagged ${joinWords(ordered)}`);
  if (setAside) parts.push("set aside");
  return parts.join(", ");
}

function joinWords(words: readonly string[]): string {
  if (words.length <= 1) return words.join("");
  return `${words.slice(0, -1).join(", ")} and ${words[words.length - 1]}`;
}

/**
 * The accessible name of one mark: "sub-12: trait 31, contrast 0.42, flagged
 * outlier". Values are printed with three significant digits.
 */
export function describePoint(
  mark: ParticipantMark,
  values: readonly { name: string; value: number | null }[],
): string {
  const parts = values.map((v) => `${v.name} ${formatValue(v.value)}`);
  const state = flagPhrase(mark.flags, mark.setAside ?? false);
  if (state) parts.push(state);
  return `${mark.id}: ${parts.join(", ")}`;
}

export interface LegendItem {
  role: MarkRole;
  label: string;
  shape: MarkShape;
  colour: string;
  hollow: boolean;
}

/**
 * Legend entries for the marks drawn among `marks`, always starting with the
 * plain participant mark, in a fixed order: participant, outlier, high
 * leverage, influential, set aside. A participant with several flags is
 * drawn with its primary flag's shape (`markFor`), so only that flag needs an
 * entry: the legend never names a mark the plot does not show.
 */
export function legendItemsFor(marks: Iterable<ParticipantMark>): LegendItem[] {
  const present = new Set<MarkRole>(["participant"]);
  for (const m of marks) present.add(markFor(m.flags, m.setAside ?? false).role);
  const order: MarkRole[] = ["participant", "outlier", "leverage", "influence", "setAside"];
  return order
    .filter((r) => present.has(r))
    .map((role) => ({
      role,
      label: roleLabel[role],
      shape: roleShape[role],
      colour: markRoles[role],
      hollow: role === "setAside",
    }));
}

/** Vertices of a shape of the same area as a circle of radius `r` centred on (cx, cy); empty for a circle. */
export function shapeVertices(
  shape: MarkShape,
  cx: number,
  cy: number,
  r: number,
): [number, number][] {
  switch (shape) {
    case "circle":
      return [];
    case "square": {
      const half = (r * Math.sqrt(Math.PI)) / 2;
      return [
        [cx - half, cy - half],
        [cx + half, cy - half],
        [cx + half, cy + half],
        [cx - half, cy + half],
      ];
    }
    case "diamond": {
      const d = r * Math.sqrt(Math.PI / 2);
      return [
        [cx, cy - d],
        [cx + d, cy],
        [cx, cy + d],
        [cx - d, cy],
      ];
    }
    case "triangle": {
      // equilateral, pointing up, centroid on (cx, cy): circumradius = side/√3
      const side = r * Math.sqrt((4 * Math.PI) / Math.sqrt(3));
      const R = side / Math.sqrt(3);
      return [0, 1, 2].map((k) => {
        const angle = -Math.PI / 2 + (k * 2 * Math.PI) / 3;
        return [cx + R * Math.cos(angle), cy + R * Math.sin(angle)] as [number, number];
      });
    }
  }
}

/** SVG path data of a closed polygon. */
export function polygonPath(vertices: readonly (readonly [number, number])[]): string {
  if (vertices.length === 0) return "";
  return `${vertices.map(([x, y], i) => `${i === 0 ? "M" : "L"}${round2(x)},${round2(y)}`).join("")}Z`;
}

/** Rounds to 2 decimals for compact path data. */
export function round2(v: number): number {
  return Math.round(v * 100) / 100;
}

/**
 * The order marks are drawn in, so flagged participants sit on top of
 * plain ones: set aside first, then plain, then flagged (stable within each).
 */
export function drawOrder<T extends ParticipantMark>(marks: readonly T[]): T[] {
  const layer = (m: ParticipantMark) => (m.setAside ? 0 : m.flags.length === 0 ? 1 : 2);
  return marks.slice().sort((a, b) => layer(a) - layer(b));
}
