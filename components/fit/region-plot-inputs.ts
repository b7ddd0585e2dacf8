/**
 * What a region's plots are drawn from, read off the region's detail (GET
 * /api/fits/:fitId/regions/:region): the scatter plot of an association,
 * the strip plot of two groups or of one sample around zero, the influence
 * view and the permutation null distribution, with their titles and the
 * short notes printed under them. The region screen and the figure writer
 * (server/figures/) both read a detail through this module, so a figure
 * shows what the screen shows. Pure: no React.
 */
import type { RegionDetail } from "../../contract/views/fits";
import type { Flag } from "../../contract/spec";
import type { FlagCuts, InfluencePoint } from "../charts/influence-layout";
import type { NullHistogramInput } from "../charts/histogram-layout";
import type { ScatterInput } from "../charts/scatter-layout";
import type { StripInput } from "../charts/strip-layout";

/** Which data plot a region gets: a scatter plot for an association, a strip plot otherwise. */
export function dataPlotKind(detail: Pick<RegionDetail, "kind">): "scatter" | "strip" {
  return detail.kind === "association" ? "scatter" : "strip";
}

/** The scatter plot's title for a trait. */
export function scatterTitle(trait: string | null): string {
  return `${trait ?? "trait"} and the contrast value`;
}

/** The strip plot's title: one sample around zero, or two groups. */
export function stripTitle(single: boolean): string {
  return single ? "Contrast values around zero" : "Contrast values by group";
}

function setAsideIds(detail: RegionDetail): Set<string> {
  return new Set((detail.setAside ?? []).map((s) => s.participant));
}

/** The scatter plot's input and title (an association's region). */
export function scatterInputOf(detail: RegionDetail): {
  title: string;
  input: ScatterInput;
  note: string;
} {
  const aside = setAsideIds(detail);
  const points = detail.points ?? [];
  const line = detail.band?.lines[0];
  return {
    title: scatterTitle(detail.axes.x),
    input: {
      points: points.map((p) => ({
        id: p.participant,
        flags: p.flags as Flag[],
        setAside: aside.has(p.participant),
        x: p.x,
        y: p.y,
      })),
      band: line?.points.map((b) => ({ x: b.x, fit: b.fit, low: b.low, high: b.high })),
      xLabel: detail.axes.x ?? "trait",
      yLabel: "Contrast value",
      xName: detail.axes.x ?? "trait",
      yName: "contrast",
      bandLabel: detail.band
        ? `${Math.round(detail.band.level * 100)}% confidence band`
        : undefined,
    },
    note: `One mark per participant (${points.length}). Fitted line: ${detail.band?.method ?? "least squares"}.`,
  };
}

/** The strip plot's input and title (two groups, or one sample around zero). */
export function stripInputOf(detail: RegionDetail): {
  title: string;
  input: StripInput;
  note: string;
} {
  const aside = setAsideIds(detail);
  const points = detail.points ?? [];
  const groups =
    detail.groupMeans && detail.groupMeans.length > 0
      ? detail.groupMeans.map((g) => ({
          key: g.label,
          label: g.label,
          n: g.n,
          mean: g.mean,
          low: g.ciLow,
          high: g.ciHigh,
        }))
      : [
          {
            key: "all",
            label: "All participants",
            n: detail.n,
            mean: detail.result.estimate,
            low: detail.result.ciLow,
            high: detail.result.ciHigh,
          },
        ];
  const single = groups.length === 1;
  return {
    title: stripTitle(single),
    input: {
      groups,
      points: points.map((p) => ({
        id: p.participant,
        flags: p.flags as Flag[],
        setAside: aside.has(p.participant),
        group: single ? groups[0].key : (p.group ?? ""),
        value: p.y,
      })),
      valueLabel: "Contrast value",
      valueName: "contrast",
      summaryLabel: "mean and 95% CI",
    },
    note: `One mark per participant (${points.length}); horizontal offset is for visibility only.`,
  };
}

/** The flags' cut-offs as the fit kept them (see flagThresholds in the engine), or null for a fit that did not keep them. */
export function flagCutsOf(detail: RegionDetail): FlagCuts | null {
  const t = detail.result.flagThresholds as
    | { cooksDistance?: unknown; leverage?: unknown; outlierT?: unknown }
    | undefined;
  if (!t || typeof t.cooksDistance !== "number") return null;
  return {
    cooksDistance: t.cooksDistance,
    leverage: typeof t.leverage === "number" ? t.leverage : null,
    outlierT: typeof t.outlierT === "number" ? t.outlierT : null,
  };
}

export const influenceTitle = "Who moves this estimate?";

/** What the influence view's dashed lines mean. */
export const influenceNote =
  "Dashed lines: the cut-offs the flags use — influence when Cook's distance is above 4/n, leverage above 2p/n, outlier when the studentized residual is beyond the Bonferroni cut-off (n participants, p terms in the region's design). From the least-squares fit of the region's design.";

/** The influence view's points and cut-offs, or null when the region has none (no participants shown, a reliability fit, or cut-offs not kept). */
export function influenceInputOf(
  detail: RegionDetail,
): { points: InfluencePoint[]; cuts: FlagCuts } | null {
  const cuts = flagCutsOf(detail);
  if (!detail.points || detail.kind === "reliability" || !cuts) return null;
  const aside = setAsideIds(detail);
  return {
    points: detail.points.map((p) => ({
      id: p.participant,
      flags: p.flags as Flag[],
      setAside: aside.has(p.participant),
      cooksDistance: p.cooksDistance,
      leverage: p.leverage,
      residual: p.studentizedResidual,
    })),
    cuts,
  };
}

export const nullHistogramTitle = "Permutation null distribution";

/** The null histogram's input, or null when the fit kept no null distribution for the region. */
export function nullHistogramInputOf(detail: RegionDetail): NullHistogramInput | null {
  const h = detail.nullHistogram as {
    edges?: unknown;
    counts?: unknown;
    observed?: unknown;
  } | null;
  if (!h || typeof h !== "object" || !Array.isArray(h.edges)) return null;
  return {
    edges: h.edges as number[],
    counts: h.counts as number[],
    observed: h.observed as number,
    statisticName: "t",
    p: detail.result.p,
  };
}
