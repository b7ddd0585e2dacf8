/**
 * What a region's plots draw, from a model, the fit data and the
 * participants a fit used in that region:
 *
 * - points: each participant's contrast value (y) with the trait (x) for an
 *   association, or the group label for a two-group model;
 * - association: the fitted line of the least-squares model (the model's
 *   design: predictor, group, interaction, covariates) with its pointwise
 *   confidence band of the mean response (see mean-response-band.ts),
 *   evaluated on an even grid over the observed trait range, other columns
 *   held at their means (an interaction model gets one line per group);
 * - one-sample: the mean with its t interval; two-group: each group's mean
 *   with its t interval (Student 1908; Zar 2010, §7.3).
 *
 * Pure. Cost O(n·p² + grid·p²). Throws StatsError for an unknown region or
 * participant, a participant without a value, or a method's precondition
 * (the band needs n > p, a group mean at least two distinct values).
 */
import type { FitData, ModelSpec } from "../../contract/spec";
import { type DesignTerm, buildDesign, compareCodePoints } from "./design-matrix";
import { StatsError } from "./errors";
import { fitLinearModel } from "./linear-model";
import type { BandLine, GroupMean, RegionPlot } from "../../contract/views/fits";
import { meanResponseBand } from "./mean-response-band";
import { oneSampleTTest } from "./one-sample-t";

export const BAND_GRID_POINTS = 50;

function numericColumn(data: FitData, name: string): readonly (number | null)[] {
  const col = data.numericColumns[name];
  if (!col) throw new StatsError(`regionPlot: unknown numeric column '${name}'`);
  return col;
}

function groupColumn(data: FitData, name: string): readonly (string | null)[] {
  if (Object.hasOwn(data.categoricalColumns, name)) return data.categoricalColumns[name];
  if (Object.hasOwn(data.numericColumns, name))
    return data.numericColumns[name].map((v) =>
      v === null || !Number.isFinite(v) ? null : String(v),
    );
  throw new StatsError(`regionPlot: unknown column '${name}'`);
}

function meanOf(values: ArrayLike<number>): GroupMean["mean"] {
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i];
  return s / values.length;
}

function groupMean(label: string, y: readonly number[], level: number, notes: string[]): GroupMean {
  try {
    const t = oneSampleTTest(y, { level });
    return { label, n: y.length, mean: t.mean, ciLow: t.ciLow, ciHigh: t.ciHigh };
  } catch (e) {
    if (!(e instanceof StatsError) || y.length === 0) throw e;
    notes.push(`No interval for the mean of ${label}: ${e.message}.`);
    return { label, n: y.length, mean: meanOf(y), ciLow: null, ciHigh: null };
  }
}

/**
 * Each participant's position in the roster, made once per roster (a
 * fit's regions share it: at 20,000 participants, making it again for
 * each region was a sixth of the region's plot).
 */
function positionsOf(participants: readonly string[]): ReadonlyMap<string, number> {
  let known = positions.get(participants);
  if (!known) {
    known = new Map(participants.map((id, i) => [id, i]));
    positions.set(participants, known);
  }
  return known;
}

const positions = new WeakMap<readonly string[], ReadonlyMap<string, number>>();

/**
 * The roster positions of the participants `included`, in their order.
 * Throws StatsError for a participant not in the roster.
 */
export function rosterPositions(
  participants: readonly string[],
  included: readonly string[],
): number[] {
  const position = positionsOf(participants);
  return included.map((id) => {
    const i = position.get(id);
    if (i === undefined) throw new StatsError(`regionPlot: unknown participant '${id}'`);
    return i;
  });
}

/**
 * A region's plot data with its points by column, in the order of the
 * participants it was drawn for: point i has trait value x[i], group label
 * group[i] and contrast value y[i] (x null but for an association, group
 * null without a group column: every point's is then null). The fit thread
 * stores this form (server/jobs/region-rows.ts): at 20,000 participants,
 * making a point object each only to read them back column by column was
 * most of a region's plot.
 */
export interface RegionPlotByColumn extends Omit<RegionPlot, "points"> {
  x: readonly (number | null)[] | null;
  group: readonly (string | null)[] | null;
  y: Float64Array;
}

/**
 * Plot data of `region` for the participants in `included` (the fit's
 * participants there, in roster order).
 */
export function regionPlot(
  spec: ModelSpec,
  data: FitData,
  region: string,
  included: readonly string[],
  options: { level?: number; gridPoints?: number } = {},
): RegionPlot {
  const positions = rosterPositions(data.participants, included);
  const { x, group, y, ...rest } = regionPlotColumns(spec, data, region, positions, options);
  const points = included.map((participant, i) => ({
    participant,
    x: x ? x[i] : null,
    group: group ? group[i] : null,
    y: y[i],
  }));
  return { points, ...rest };
}

/**
 * `regionPlot` with its points by column (see RegionPlotByColumn), for the
 * participants at roster positions `rows` (the fit's participants there,
 * in roster order, as the diagnose stage has them): the same numbers.
 */
export function regionPlotColumns(
  spec: ModelSpec,
  data: FitData,
  region: string,
  rows: readonly number[],
  options: { level?: number; gridPoints?: number } = {},
): RegionPlotByColumn {
  const level = options.level ?? 0.95;
  const gridPoints = options.gridPoints ?? BAND_GRID_POINTS;
  const r = data.regions.indexOf(region);
  if (r < 0) throw new StatsError(`regionPlot: unknown region '${region}'`);
  const n = rows.length;
  const values = data.values[r];
  const predictor =
    spec.kind === "association" && spec.predictor ? numericColumn(data, spec.predictor) : null;
  const groupOf =
    spec.group && (spec.kind === "two-group" || spec.kind === "association")
      ? groupColumn(data, spec.group)
      : null;
  const y = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const i = rows[k];
    const v = values[i];
    if (!Number.isFinite(v))
      throw new StatsError(
        `regionPlot: participant '${data.participants[i]}' has no value in region '${region}'`,
      );
    y[k] = v;
  }
  const xs = predictor ? rows.map((i) => predictor[i]) : null;
  const groups = groupOf ? rows.map((i) => groupOf[i]) : null;
  const columns = { x: xs, group: groups, y };
  const notes: string[] = [];
  if (spec.kind === "one-sample") {
    return {
      ...columns,
      band: null,
      groupMeans: n > 0 ? [groupMean("all participants", Array.from(y), level, notes)] : null,
      notes,
    };
  }
  const present = groups
    ? Array.from(new Set(groups.filter((g): g is string => g !== null))).sort(compareCodePoints)
    : [];
  const levels = spec.levels ? [spec.levels[0], spec.levels[1]] : present;
  if (spec.kind === "two-group") {
    const groupMeans = levels.map((label) => {
      const inGroup: number[] = [];
      if (groups) for (let k = 0; k < n; k++) if (groups[k] === label) inGroup.push(y[k]);
      return groupMean(label, inGroup, level, notes);
    });
    return { ...columns, band: null, groupMeans: groupMeans.filter((g) => g.n > 0), notes };
  }
  if (spec.kind !== "association" || !predictor || !xs)
    return { ...columns, band: null, groupMeans: null, notes };
  // Association: the model's least-squares design, as the fit builds it.
  const x = Float64Array.from(xs, (v) => v as number);
  const terms: DesignTerm[] = [
    { name: "(intercept)", kind: "intercept" },
    { name: spec.predictor as string, kind: "numeric", values: x },
  ];
  let indicator: Float64Array | null = null;
  if (groups && levels.length === 2) {
    indicator = Float64Array.from(groups, (g) => (g === levels[0] ? 1 : 0));
    terms.push({ name: `${spec.group}: ${levels[0]}`, kind: "numeric", values: indicator });
    if (spec.interaction)
      terms.push({
        name: `${spec.predictor} × ${spec.group}: ${levels[0]}`,
        kind: "product",
        values: x,
        indicator,
      });
  }
  for (const name of spec.covariates) {
    if (Object.hasOwn(data.numericColumns, name)) {
      const col = data.numericColumns[name];
      terms.push({
        name,
        kind: "numeric",
        values: Float64Array.from(rows, (i) => col[i] as number),
      });
    } else if (Object.hasOwn(data.categoricalColumns, name)) {
      const col = data.categoricalColumns[name];
      terms.push({ name, kind: "categorical", values: rows.map((i) => col[i] as string) });
    } else {
      throw new StatsError(`regionPlot: unknown covariate '${name}'`);
    }
  }
  let band: RegionPlot["band"] = null;
  try {
    const design = buildDesign(n, terms);
    // The band reads the coefficients and R⁻¹ only: no thin Q or hat values (two thirds of the
    // decomposition's time at 20,000 participants).
    const fit = fitLinearModel(design.x, design.n, design.p, y, design.columnNames, {
      thin: false,
    });
    const p = design.p;
    const means = new Float64Array(p);
    for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) means[j] += design.x[i * p + j] / n;
    let lo = Infinity;
    let hi = -Infinity;
    for (const v of x) {
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
    const grid = Array.from({ length: gridPoints }, (_, k) =>
      gridPoints === 1 ? lo : lo + ((hi - lo) * k) / (gridPoints - 1),
    );
    const lineFor = (label: string, g: number | null): BandLine => {
      const designRows = grid.map((gx) => {
        const row = Array.from(means);
        row[1] = gx;
        if (g !== null) {
          row[2] = g;
          if (spec.interaction) row[3] = gx * g;
        }
        return row;
      });
      const fitted = meanResponseBand(fit, designRows, { level });
      return { label, points: fitted.map((f, k) => ({ x: grid[k], ...f })) };
    };
    const lines =
      spec.interaction && indicator
        ? [lineFor(levels[0], 1), lineFor(levels[1], 0)]
        : [lineFor("all participants", null)];
    band = {
      method:
        spec.covariates.length > 0 || (indicator && !spec.interaction)
          ? "least-squares line of the model, other columns held at their means, with the pointwise confidence band of the mean response"
          : "least-squares line with the pointwise confidence band of the mean response",
      level,
      lines,
    };
    if (spec.estimator !== "ols")
      notes.push(
        `The line is the least-squares fit, drawn for reference; the region's estimate comes from estimator '${spec.estimator}'.`,
      );
  } catch (e) {
    if (!(e instanceof StatsError)) throw e;
    notes.push(`No fitted line: ${e.message}.`);
  }
  return { ...columns, band, groupMeans: null, notes };
}
