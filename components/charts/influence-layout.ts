/**
 * Layout of the influence view ("Who moves this estimate?"): one column per
 * participant, sorted by Cook's distance (largest first, undefined last),
 * and three panels stacked on that column order — Cook's distance, leverage
 * and the size of the externally studentized residual — each with the
 * cut-off its flag uses (influence 4/n, leverage 2p/n, the Bonferroni
 * outlier cut-off; the values come from the fit, see flagThresholds in the
 * engine's diagnostics module). Flagged participants are named in the
 * Cook's distance panel by labels placed so that no two overlap each other
 * or a cut-off's label; a label that finds no free place is left out and
 * counted. The legend lists only what is drawn. Pure: no React, no SVG.
 */
import { markRoles } from "../theme";
import { ChartInputError } from "./chart-input-error";
import type { Flag, ParticipantMark } from "./chart-types";
import type { PlacedMark } from "./chart-types";
import {
  describePoint,
  type LegendItem,
  type MarkRole,
  type MarkShape,
  markFor,
  primaryFlag,
  roleLabel,
  roleShape,
} from "./marks";
import { formatValue } from "./number-format";
import { estimateTextWidth, type Viewport } from "./scales";
import { formatTicks, tickValues } from "./ticks";

export interface InfluencePoint extends ParticipantMark {
  cooksDistance: number | null;
  leverage: number | null;
  /** Externally studentized residual (its size is drawn). */
  residual: number | null;
}

/** The flags' cut-offs as the fit computed them. */
export interface FlagCuts {
  cooksDistance: number;
  leverage: number | null;
  outlierT: number | null;
}

export type PanelKey = "cook" | "leverage" | "residual";

export interface Box {
  left: number;
  top: number;
  right: number;
  bottom: number;
}

export interface CutLine {
  /** The flag this line decides. */
  flag: Flag;
  value: number;
  y: number;
  /** Printed beside the line, e.g. "4/n = 0.0571". */
  text: string;
  /** Where its text sits (end-anchored at textX, baseline textY). */
  textX: number;
  textY: number;
  box: Box;
}

export interface Panel {
  key: PanelKey;
  title: string;
  top: number;
  bottom: number;
  /** Top of the data range (the panel's value scale runs from 0 at `bottom` to `max` at `top + headroom`). */
  max: number;
  ticks: { value: number; y: number; label: string }[];
  cut: CutLine | null;
}

export interface Cue {
  shape: MarkShape;
  colour: string;
  hollow: boolean;
  cx: number;
  cy: number;
  r: number;
}

export interface PlacedInfluence extends InfluencePoint {
  x: number;
  /** y of the mark in each panel, null where the value is undefined. */
  y: Record<PanelKey, number | null>;
  /** The mark's shape and colour (primary flag) and small extra cues for the other flags, per panel. */
  cues: Record<PanelKey, Cue[]>;
}

export interface PlacedLabel {
  id: string;
  text: string;
  x: number;
  y: number;
  anchor: "start" | "middle" | "end";
  box: Box;
  /** From the mark to the label when the label sits away from its mark. */
  leader: { x1: number; y1: number; x2: number; y2: number } | null;
}

export type InfluenceLegendEntry =
  | ({ kind: "mark" } & LegendItem)
  | { kind: "line"; label: string; colour: string; dashed: boolean };

export interface InfluenceLayout {
  plot: { left: number; right: number };
  panels: Panel[];
  points: PlacedInfluence[];
  labels: PlacedLabel[];
  /** Flagged participants whose label found no free place. */
  unlabelled: number;
  /** Participants with no Cook's distance (leverage 1), drawn last without a Cook's mark. */
  undefinedCook: number;
  legend: InfluenceLegendEntry[];
  /** Where the bottom axis title sits. */
  axisTitle: { x: number; y: number; text: string };
  /** A line under the axis title on what is not named or not drawn, or null. */
  note: { x: number; y: number; text: string } | null;
}

export const influenceGeometry = {
  markRadius: 4.5,
  cueRadius: 2.6,
  labelText: 11,
  tickText: 11,
  titleText: 12,
  /** Space above each panel for its title. */
  titleBand: 18,
  /** Space above the Cook's distance data for labels. */
  labelHeadroom: 40,
  gap: 10,
  bottom: 40,
  right: 8,
} as const;

/** Drawing height for a drawing `width` wide: taller than wide on a phone, wider than tall on a wide screen. */
export function influenceHeight(width: number): number {
  return Math.round(Math.min(560, Math.max(420, width * 0.62)));
}

const cutText: Record<Flag, (v: number) => string> = {
  influence: (v) => `4/n = ${formatValue(v)}`,
  leverage: (v) => `2p/n = ${formatValue(v)}`,
  outlier: (v) => `Bonferroni cut-off ${formatValue(v)}`,
};

/** Words for a cut-off in the legend. */
export const cutLegend: Record<Flag, string> = {
  influence: "influence cut-off 4/n",
  leverage: "leverage cut-off 2p/n",
  outlier: "Bonferroni outlier cut-off",
};

const panelTitle: Record<PanelKey, string> = {
  cook: "Cook's distance",
  leverage: "Leverage",
  residual: "Studentized residual, absolute value",
};

const panelFlag: Record<PanelKey, Flag> = {
  cook: "influence",
  leverage: "leverage",
  residual: "outlier",
};

function check(points: readonly InfluencePoint[], cuts: FlagCuts): void {
  if (!(Number.isFinite(cuts.cooksDistance) && cuts.cooksDistance > 0))
    throw new ChartInputError(
      "cuts.cooksDistance",
      `must be a positive number (got ${cuts.cooksDistance})`,
    );
  if (cuts.leverage !== null && !(cuts.leverage > 0))
    throw new ChartInputError("cuts.leverage", `must be a positive number (got ${cuts.leverage})`);
  if (cuts.outlierT !== null && !(cuts.outlierT > 0))
    throw new ChartInputError("cuts.outlierT", `must be a positive number (got ${cuts.outlierT})`);
  points.forEach((p, i) => {
    if (p.cooksDistance !== null && !(Number.isFinite(p.cooksDistance) && p.cooksDistance >= 0))
      throw new ChartInputError(
        "points.cooksDistance",
        `must be zero or more (got ${p.cooksDistance})`,
        i,
      );
    if (p.leverage !== null && !(p.leverage >= 0 && p.leverage <= 1))
      throw new ChartInputError("points.leverage", `must lie in [0, 1] (got ${p.leverage})`, i);
    if (p.residual !== null && !Number.isFinite(p.residual))
      throw new ChartInputError(
        "points.residual",
        `must be a finite number (got ${p.residual})`,
        i,
      );
  });
}

/** Cook's distance largest first; undefined last; ties by id so the order never depends on the input order. */
export function influenceOrder(points: readonly InfluencePoint[]): InfluencePoint[] {
  return points.slice().sort((a, b) => {
    const da = a.cooksDistance ?? Number.NEGATIVE_INFINITY;
    const db = b.cooksDistance ?? Number.NEGATIVE_INFINITY;
    return db - da || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0);
  });
}

const precedence: readonly Flag[] = ["influence", "outlier", "leverage"];

/** The flags besides the one that decides the mark, in a fixed order. */
export function extraFlags(flags: readonly Flag[]): Flag[] {
  const first = primaryFlag(flags);
  return precedence.filter((f) => f !== first && flags.includes(f));
}

/** Text box of `text` at baseline `y`, anchored at `x`. */
export function labelBox(
  text: string,
  x: number,
  y: number,
  anchor: "start" | "middle" | "end",
  fontSize: number,
): Box {
  const w = estimateTextWidth(text, fontSize);
  const left = anchor === "start" ? x : anchor === "middle" ? x - w / 2 : x - w;
  return { left, top: y - fontSize, right: left + w, bottom: y + 3 };
}

export function boxesOverlap(a: Box, b: Box): boolean {
  return a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom;
}

/**
 * Places one label per wanted mark, in the given order (most important
 * first): just above its mark, then in lanes further up (with a leader
 * line), centred, then to the right, then to the left of the mark. A place
 * must lie inside `bounds` and overlap no placed label, no leader line and
 * no `obstacles` box, and its leader must cross no placed label. Cost O(k²·lanes) for k labels.
 */
export function placeLabels(
  wanted: readonly { id: string; text: string; x: number; y: number }[],
  bounds: Box,
  obstacles: readonly Box[],
  options: { fontSize: number; markRadius: number },
): { labels: PlacedLabel[]; unplaced: string[] } {
  const { fontSize, markRadius } = options;
  const lane = fontSize + 4;
  const placed: PlacedLabel[] = [];
  const unplaced: string[] = [];
  const taken: Box[] = [...obstacles];
  // leader lines, so that no label is drawn across another label's leader
  const leaders: Box[] = [];
  for (const w of wanted) {
    let done: PlacedLabel | null = null;
    const firstBaseline = w.y - markRadius - 4;
    for (let k = 0; !done; k++) {
      const y = firstBaseline - k * lane;
      if (y - fontSize < bounds.top) break;
      for (const anchor of ["middle", "start", "end"] as const) {
        const x = anchor === "middle" ? w.x : anchor === "start" ? w.x - 2 : w.x + 2;
        const box = labelBox(w.text, x, y, anchor, fontSize);
        if (
          box.left < bounds.left ||
          box.right > bounds.right ||
          box.top < bounds.top ||
          box.bottom > bounds.bottom
        )
          continue;
        if (taken.some((t) => boxesOverlap(t, box)) || leaders.some((t) => boxesOverlap(t, box)))
          continue;
        const leader =
          k === 0
            ? null
            : {
                x1: w.x,
                y1: w.y - markRadius - 1,
                x2: Math.min(box.right, Math.max(box.left, w.x)),
                y2: box.bottom,
              };
        const span = leader
          ? {
              left: Math.min(leader.x1, leader.x2) - 0.5,
              right: Math.max(leader.x1, leader.x2) + 0.5,
              top: leader.y2,
              bottom: leader.y1,
            }
          : null;
        if (span && taken.some((t) => boxesOverlap(t, span))) continue;
        if (span) leaders.push(span);
        done = { id: w.id, text: w.text, x, y, anchor, box, leader };
        break;
      }
    }
    if (done) {
      placed.push(done);
      taken.push(done.box);
    } else unplaced.push(w.id);
  }
  return { labels: placed, unplaced };
}

/**
 * The whole layout for `points` in a drawing of `viewport` size with the
 * flags' cut-offs `cuts`. Every cut-off that is given is drawn: each panel's
 * range reaches past its cut-off. Throws ChartInputError on bad input.
 */
export function influenceLayout(
  points: readonly InfluencePoint[],
  cuts: FlagCuts,
  viewport: Viewport,
): InfluenceLayout {
  check(points, cuts);
  const g = influenceGeometry;
  const ordered = influenceOrder(points);
  const values: Record<PanelKey, (p: InfluencePoint) => number | null> = {
    cook: (p) => p.cooksDistance,
    leverage: (p) => p.leverage,
    residual: (p) => (p.residual === null ? null : Math.abs(p.residual)),
  };
  const cutOf: Record<PanelKey, number | null> = {
    cook: cuts.cooksDistance,
    leverage: cuts.leverage,
    residual: cuts.outlierT,
  };
  const keys: PanelKey[] = ["cook", "leverage", "residual"];
  // value ranges and tick labels first: the left margin fits the widest tick label
  const ranges = keys.map((key) => {
    let max = cutOf[key] ?? 0;
    for (const p of ordered) {
      const v = values[key](p);
      if (v !== null && v > max) max = v;
    }
    max = max > 0 ? max * 1.08 : 1;
    const ticks = tickValues([0, max], 3).filter((t) => t >= 0 && t <= max);
    return { key, max, ticks, labels: formatTicks(ticks) };
  });
  const widest = ranges.reduce(
    (m, r) => r.labels.reduce((mm, l) => Math.max(mm, estimateTextWidth(l, g.tickText)), m),
    0,
  );
  const left = Math.ceil(widest + 10);
  const right = viewport.width - g.right;
  if (right - left < 40)
    throw new ChartInputError(
      "viewport",
      `is too narrow for the influence view (${viewport.width} px)`,
    );
  // panel heights: Cook's distance gets half the room, leverage and residual a quarter each
  const usable = viewport.height - g.bottom - 3 * g.titleBand - 2 * g.gap;
  const shares: Record<PanelKey, number> = { cook: 0.5, leverage: 0.25, residual: 0.25 };
  const panels: Panel[] = [];
  const scaleOf = {} as Record<PanelKey, (v: number) => number>;
  let cursor = 0;
  for (const r of ranges) {
    const top = cursor + g.titleBand;
    const bottom = top + usable * shares[r.key];
    const dataTop = r.key === "cook" ? top + g.labelHeadroom : top;
    const scale = (v: number) => bottom - (v / r.max) * (bottom - dataTop);
    scaleOf[r.key] = scale;
    const cutValue = cutOf[r.key];
    let cut: CutLine | null = null;
    if (cutValue !== null) {
      const flag = panelFlag[r.key];
      const y = scale(cutValue);
      const text = cutText[flag](cutValue);
      const textX = right - 2;
      const textY = y - 3;
      cut = {
        flag,
        value: cutValue,
        y,
        text,
        textX,
        textY,
        box: labelBox(text, textX, textY, "end", g.tickText),
      };
    }
    panels.push({
      key: r.key,
      title: panelTitle[r.key],
      top,
      bottom,
      max: r.max,
      ticks: r.ticks.map((t, i) => ({ value: t, y: scale(t), label: r.labels[i] })),
      cut,
    });
    cursor = bottom + g.gap;
  }
  const inset = g.markRadius + 3;
  const step = (right - left - 2 * inset) / Math.max(1, ordered.length);
  const placed: PlacedInfluence[] = ordered.map((p, i) => {
    const x = left + inset + (i + 0.5) * step;
    const y = {} as Record<PanelKey, number | null>;
    const cues = {} as Record<PanelKey, Cue[]>;
    const style = markFor(p.flags, p.setAside ?? false);
    const extras = extraFlags(p.flags);
    for (const key of keys) {
      const v = values[key](p);
      const cy = v === null ? null : scaleOf[key](v);
      y[key] = cy;
      cues[key] =
        cy === null
          ? []
          : [
              {
                shape: style.shape,
                colour: style.colour,
                hollow: style.hollow,
                cx: x,
                cy,
                r: g.markRadius,
              },
              ...extras.map((f, k) => ({
                shape: roleShape[f],
                colour: p.setAside ? markRoles.setAside : markRoles[f],
                hollow: p.setAside ?? false,
                cx: x,
                cy: cy - g.markRadius - g.cueRadius - 1.5 - k * (2 * g.cueRadius + 1.5),
                r: g.cueRadius,
              })),
            ];
    }
    return { ...p, x, y, cues };
  });
  // labels: flagged participants with a Cook's mark, most influential first
  const cook = panels[0];
  const wanted = placed
    .filter((p) => p.flags.length > 0 && p.y.cook !== null)
    .map((p) => ({
      id: p.id,
      text: p.id,
      x: p.x,
      y: (p.y.cook as number) - extraFlags(p.flags).length * (2 * g.cueRadius + 1.5),
    }));
  const obstacles = panels.flatMap((p) => (p.cut ? [p.cut.box] : []));
  const { labels, unplaced } = placeLabels(
    wanted,
    // right of the axis: a label never covers the tick labels in the left margin
    { left, top: cook.top, right: viewport.width, bottom: cook.bottom },
    obstacles,
    {
      fontSize: g.labelText,
      markRadius: g.markRadius,
    },
  );
  return {
    plot: { left, right },
    panels,
    points: placed,
    labels,
    unlabelled: unplaced.length,
    undefinedCook: placed.filter((p) => p.y.cook === null).length,
    legend: legendFor(placed, panels),
    axisTitle: {
      x: (left + right) / 2,
      y: viewport.height - 22,
      text: "Participants, largest Cook's distance first",
    },
    note: noteFor(
      unplaced.length,
      placed.filter((p) => p.y.cook === null).length,
      (left + right) / 2,
      viewport.height - 5,
    ),
  };
}

function noteFor(
  unlabelled: number,
  undefinedCook: number,
  x: number,
  y: number,
): InfluenceLayout["note"] {
  const parts: string[] = [];
  if (unlabelled > 0) parts.push(`${unlabelled} more flagged, not named`);
  if (undefinedCook > 0) parts.push(`${undefinedCook} at leverage 1, no Cook's distance`);
  return parts.length > 0 ? { x, y, text: parts.join("; ") } : null;
}

/** Legend entries for the marks and cut-off lines actually drawn, in a fixed order. */
export function legendFor(
  points: readonly PlacedInfluence[],
  panels: readonly Panel[],
): InfluenceLegendEntry[] {
  const present = new Set<MarkRole>();
  for (const p of points) {
    const drawn = Object.values(p.cues).some((c) => c.length > 0);
    if (!drawn) continue;
    if (p.setAside) present.add("setAside");
    else if (p.flags.length === 0) present.add("participant");
    for (const f of p.flags) present.add(f);
  }
  const order: MarkRole[] = ["participant", "outlier", "leverage", "influence", "setAside"];
  const marks: InfluenceLegendEntry[] = order
    .filter((r) => present.has(r))
    .map((role) => ({
      kind: "mark",
      role,
      label: roleLabel[role],
      shape: roleShape[role],
      colour: markRoles[role],
      hollow: role === "setAside",
    }));
  const lines: InfluenceLegendEntry[] = panels.flatMap((p) =>
    p.cut
      ? [
          {
            kind: "line" as const,
            label: `${cutLegend[p.cut.flag]} (${formatValue(p.cut.value)})`,
            colour: cutColour[p.cut.flag],
            dashed: true,
          },
        ]
      : [],
  );
  return [...marks, ...lines];
}

/** Each cut-off line in the colour of the flag it decides. */
export const cutColour: Record<Flag, string> = {
  influence: markRoles.influence,
  leverage: markRoles.leverage,
  outlier: markRoles.outlier,
};

/** The influence view's accessible description: counts, cut-offs and how many are flagged. */
export function influenceDescription(points: readonly InfluencePoint[], cuts: FlagCuts): string {
  const parts = [`influence cut-off 4/n = ${formatValue(cuts.cooksDistance)}`];
  if (cuts.leverage !== null) parts.push(`leverage cut-off 2p/n = ${formatValue(cuts.leverage)}`);
  if (cuts.outlierT !== null) parts.push(`outlier cut-off ${formatValue(cuts.outlierT)}`);
  const flagged = points.filter((p) => p.flags.length > 0).length;
  return `Cook's distance, leverage and studentized residual for ${points.length} participants, largest Cook's distance first; ${parts.join(", ")}; ${flagged} flagged.`;
}

/** The participant marks of the Cook's distance panel (one per participant with a Cook's distance), with their accessible names. */
export function influenceMarks(layout: InfluenceLayout): PlacedMark[] {
  return layout.points
    .filter((p) => p.y.cook !== null)
    .map((p) => ({
      id: p.id,
      flags: p.flags,
      setAside: p.setAside,
      cx: p.x,
      cy: p.y.cook as number,
      label: describePoint(p, [
        { name: "Cook's distance", value: p.cooksDistance },
        { name: "leverage", value: p.leverage },
        { name: "studentized residual", value: p.residual },
      ]),
    }));
}
