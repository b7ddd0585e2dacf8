/**
 * A finished region's participants, joined from what its fit stored — the
 * per-participant diagnostics (`fit_regions.participants`, see
 * region-rows.ts) and the plot data (`fit_regions.plot`: each
 * participant's x, group and y, the band, the group means) — and kept as columns: one
 * array per diagnostic, not one object per participant. A page of the
 * region's participants then makes only its own rows; at 20,000
 * participants an object per participant, made and frozen, cost the request
 * thread ~100 ms more than the columns.
 *
 * A number the fit did not give (null, or absent) reads null.
 */
import { compareCells } from "../../components/tables/cell-values";
import {
  type ParticipantOrder,
  participantDiagnosticNumbers,
  type RegionDetailPoint,
  type RegionPlot,
  type RegionPlotPoint,
} from "../../contract/views/fits";
import { deepFreeze } from "../../db/read-cache";
import { nullIfNaN } from "../stats/diagnostics";
import { decodeRegionColumns, decodeRegionPlot } from "./region-rows";

/** The plot data besides its points: what the region detail draws around them. */
export type RegionPlotHead = Omit<RegionPlot, "points"> | { error: string } | null;

/** Diagnostics read as numbers, by their name in RegionDetailPoint. */
const numberFields = participantDiagnosticNumbers;
type NumberField = (typeof numberFields)[number];

const noFlags: readonly string[] = Object.freeze([]);

/**
 * A region's points as plain columns: what decoding makes, in a worker
 * thread at biobank size (region-read-jobs.ts), and hands back by
 * structured clone. `flags[i]` null: none.
 */
export interface RegionColumns {
  n: number;
  ids: string[];
  flags: (string[] | null)[];
  numbers: Record<NumberField, Float64Array>;
  xs: Float64Array;
  ys: Float64Array;
  groups: (string | null)[];
  plot: RegionPlotHead;
  /**
   * The JSON text of every participant's `plotPoint`, in order — what the
   * region detail sends — made where a large region is decoded, off the
   * request thread; null: made on first use.
   */
  pointsText: string | null;
}

/**
 * The region's columns from its stored texts (`participants` null: no rows
 * stored, as for a region whose fit failed). Pure. Throws SyntaxError on
 * unreadable text. Cost O(participants × fields): ~40 ms at 20,000.
 */
export function decodeRegionPoints(
  participants: string | null,
  plotText: string | null,
): RegionColumns {
  const stored = participants ? decodeRegionColumns(participants) : null;
  const n = stored?.n ?? 0;
  const ids: string[] = new Array(n);
  const flags: (string[] | null)[] = new Array(n);
  for (let i = 0; i < n; i++) {
    ids[i] = String(stored?.value("participant", i));
    const own = stored?.value("flags", i) as string[] | null | undefined;
    flags[i] = own && own.length > 0 ? own : null;
  }
  const drawn = plotText ? decodeRegionPlot(plotText, ids) : null;
  const xs = drawn?.x ?? new Float64Array(n).fill(Number.NaN);
  const groups = drawn?.group ?? new Array<string | null>(n).fill(null);
  // y as the plot drew it, else the region's value.
  const ys = stored ? stored.numbers("value").slice() : new Float64Array(0);
  if (drawn) for (let i = 0; i < n; i++) if (!Number.isNaN(drawn.y[i])) ys[i] = drawn.y[i];
  const numbers = Object.fromEntries(
    numberFields.map((name) => [name, stored ? stored.numbers(name) : new Float64Array(0)]),
  ) as Record<NumberField, Float64Array>;
  const head: RegionPlotHead = drawn?.head ?? null;
  return { n, ids, flags, numbers, xs, ys, groups, plot: head, pointsText: null };
}

/** What an order of a region's participants sorts by, one key per participant: numbers (NaN: missing) or text (null: missing). */
export type OrderKeys = Float64Array | (string | null)[];

/**
 * The positions (in the fit's order) sorted by `keys`: numbers by value,
 * text in natural order as the app's tables sort it (`compareCells`);
 * missing keys last in both directions; ties, and the missing, in the
 * fit's order, so pages never overlap or skip a row. Pure; O(n log n):
 * ~10–25 ms at 20,000 participants, so large regions sort in the region
 * reads' worker thread (region-read-jobs.ts).
 */
export function orderPositions(keys: OrderKeys, direction: "asc" | "desc"): Uint32Array {
  const n = keys.length;
  const sign = direction === "asc" ? 1 : -1;
  const present: number[] = [];
  const missing: number[] = [];
  if (keys instanceof Float64Array) {
    for (let i = 0; i < n; i++) (Number.isFinite(keys[i]) ? present : missing).push(i);
    present.sort((a, b) => sign * (keys[a] - keys[b]) || a - b);
  } else {
    for (let i = 0; i < n; i++) (keys[i] === null ? missing : present).push(i);
    present.sort((a, b) => sign * compareCells(keys[a], keys[b]) || a - b);
  }
  const out = new Uint32Array(n);
  out.set(present);
  out.set(missing, present.length);
  return out;
}

/** A region's points, read-only: the columns stay private and `point(i)` makes a fresh object. */
export class RegionPoints {
  readonly n: number;
  /** The plot data besides its points, frozen. */
  readonly plot: RegionPlotHead;
  private readonly columns: RegionColumns;
  private readonly flagLists: readonly (readonly string[])[];
  private pointsText: string | null;

  constructor(columns: RegionColumns) {
    this.pointsText = columns.pointsText;
    this.n = columns.n;
    this.columns = columns;
    this.plot = deepFreeze(columns.plot);
    this.flagLists = columns.flags.map((f) => (f ? Object.freeze(f) : noFlags));
  }

  /** Participant i's id (in the fit's order). */
  participant(i: number): string {
    return this.columns.ids[i];
  }

  /**
   * The keys an order by `sort` sorts on (see orderPositions): the column
   * itself for numbers and ids, not to be changed; flags as "count, which"
   * ("1 outlier"), none missing.
   */
  sortKeys(sort: Exclude<ParticipantOrder, "position">): OrderKeys {
    const c = this.columns;
    switch (sort) {
      case "participant":
        return c.ids;
      case "flags":
        return this.flagLists.map((f) => (f.length === 0 ? null : `${f.length} ${f.join(", ")}`));
      case "x":
        return c.xs;
      case "y":
        return c.ys;
      default:
        return c.numbers[sort];
    }
  }

  /** Participant i's flags (frozen). */
  flags(i: number): readonly string[] {
    return this.flagLists[i];
  }

  /** Participant i with every diagnostic, as a fresh object. */
  point(i: number): RegionDetailPoint {
    // Written out, not spread from plotPoint(i): a spread and four more keys made each point
    // several times slower to build (sorting 20,000 builds them all).
    const c = this.columns;
    const d = c.numbers;
    return {
      participant: c.ids[i],
      x: nullIfNaN(c.xs[i]),
      group: c.groups[i],
      y: c.ys[i],
      fitted: nullIfNaN(d.fitted[i]),
      residual: nullIfNaN(d.residual[i]),
      leverage: nullIfNaN(d.leverage[i]),
      studentizedResidual: nullIfNaN(d.studentizedResidual[i]),
      cooksDistance: nullIfNaN(d.cooksDistance[i]),
      dffits: nullIfNaN(d.dffits[i]),
      mahalanobis: nullIfNaN(d.mahalanobis[i]),
      flags: this.flagLists[i] as string[],
    };
  }

  /**
   * The JSON text of every participant's `plotPoint`, in order, made once:
   * at 20,000 participants making and writing out the points cost the
   * request thread 40–80 ms for every look at the region's plots.
   */
  plotPointsText(): string {
    if (this.pointsText === null) {
      const points: RegionPlotPoint[] = new Array(this.n);
      for (let i = 0; i < this.n; i++) points[i] = this.plotPoint(i);
      this.pointsText = JSON.stringify(points);
    }
    return this.pointsText;
  }

  /** Participant i as the region detail's plots draw it (a fresh object). */
  plotPoint(i: number): RegionPlotPoint {
    const c = this.columns;
    const d = c.numbers;
    return {
      participant: c.ids[i],
      x: nullIfNaN(c.xs[i]),
      group: c.groups[i],
      y: c.ys[i],
      leverage: nullIfNaN(d.leverage[i]),
      studentizedResidual: nullIfNaN(d.studentizedResidual[i]),
      cooksDistance: nullIfNaN(d.cooksDistance[i]),
      flags: this.flagLists[i] as string[],
    };
  }
}
