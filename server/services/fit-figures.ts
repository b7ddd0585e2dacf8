/**
 * A finished fit's figures, for the figures routes and the report bundle.
 *
 * Names: `forest`, `variance-shares` (weighted fits), `<region>-scatter` or
 * `<region>-strip`, `<region>-influence`, `<region>-null`; a prediction
 * fit has `observed-predicted`, `learning-curve` (when it computed one) and
 * `weights` instead (a specification curve has none).
 *
 *   listFigures(db, fit, access)                 → FigureSummary[]
 *   figureSvg(db, fit, name, access, widthMm?)   → Promise<string>  SVG, text as outlines, widthMm 89 (default) or 183
 *   figurePng(db, fit, name, access, widthMm)    → Promise<Buffer>  PNG at 300 dpi, round(mm / 25.4 × 300) px wide, pHYs set
 *   figureCaption(db, fit, name, access)         → Promise<string>  plain-text caption
 *
 * `access` is `{ participantsVisible }` — whether the caller may see
 * participant-level rows (contract/permissions.ts `fits.participants.read`
 * for the study's restriction). Without it the figures that draw one mark
 * per participant (scatter, strip, influence, observed-predicted) are not listed and asking
 * for one throws 403, as the region screen shows a Viewer of a restricted
 * study no participant plots; the forest plot and the null distribution
 * stay available. Every function throws 409 while the fit is not done and
 * 404 for a name that is not one of the fit's figures. The request thread
 * reads the fit and writes the caption; laying out, outlining and
 * rasterizing run in the figure worker thread (server/jobs/figure-jobs.ts);
 * a finished fit never changes, so outlined SVGs are kept (a small LRU).
 */
import type { Queryable } from "../../db/client";
import type { Fit } from "../../db/schema";
import { nullHistogramWords } from "../../components/charts/histogram-layout";
import { formatCount } from "../../components/charts/number-format";
import { weightDotHeight } from "../../components/charts/weight-dot-layout";
import { weightRows } from "../../components/fit/prediction-layout";
import type { PredictionBlock } from "../../contract/prediction";
import { estimateLabel } from "../../components/fit/estimate-label";
import {
  varianceShareInputsOf,
  varianceSharesMethod,
} from "../../components/fit/variance-shares-layout";
import {
  dataPlotKind,
  influenceInputOf,
  influenceTitle,
  nullHistogramInputOf,
  nullHistogramTitle,
  scatterInputOf,
  scatterTitle,
  stripInputOf,
  stripTitle,
} from "../../components/fit/region-plot-inputs";
import { specOfRecipe } from "../../contract/recipe";
import type { Flag, RegionResult } from "../../contract/spec";
import {
  type FigureKind,
  type FigureSummary,
  type FigureWidth,
  figureName,
  isPredictionFigureKind,
} from "../../contract/views/figures";
import {
  type CaptionContext,
  dataPlotCaption,
  forestCaption,
  influenceCaption,
  learningCurveCaption,
  nullCaption,
  observedPredictedCaption,
  varianceCaption,
  weightsCaption,
} from "../figures/captions";
import { type FigureInput, figureLayoutWidth } from "../figures/figure-svg";
import { forestHeight } from "../../components/charts/forest-layout";
import { conflict, forbidden, HttpError, notFound } from "../http/errors";
import { pixelsFor } from "../figures/png-resolution";
import { type FigureJobs, sharedFigureJobs } from "../jobs/figure-jobs";
import { FIT_LEVEL } from "../stats/run-fit";
import { regionDetail } from "./fits";

/** What the caller may see (see the module's doc comment). */
export interface FigureAccess {
  participantsVisible: boolean;
}

/** Resolution of every PNG figure. */
export const FIGURE_DPI = 300;

/** Tallest PNG drawn (a forest plot of a few hundred regions is taller: it comes as SVG only). */
export const MAX_PNG_HEIGHT_PX = 12_000;

/** Figures that draw one mark per participant. */
const participantKinds: readonly FigureKind[] = [
  "scatter",
  "strip",
  "influence",
  "observed-predicted",
];
const regionKinds: readonly FigureKind[] = ["scatter", "strip", "influence", "null"];

function doneResult(fit: Fit): { regions?: RegionResult[]; prediction?: PredictionBlock } {
  if (fit.status !== "done" || !fit.result)
    throw conflict(
      `This fit is not finished (status ${fit.status}); its figures come when it is done.`,
    );
  return fit.result as { regions?: RegionResult[]; prediction?: PredictionBlock };
}

function doneRegions(fit: Fit): RegionResult[] {
  return doneResult(fit).regions ?? [];
}

/** A done prediction fit's block, or null for any other fit. Throws 409 until done. */
function predictionOf(fit: Fit): PredictionBlock | null {
  return doneResult(fit).prediction ?? null;
}

/** A prediction fit's figures: observed against predicted, learning curve, weights. */
function predictionFigures(block: PredictionBlock, access: FigureAccess): FigureSummary[] {
  const list: FigureSummary[] = [];
  if (access.participantsVisible && block.participants.length > 0)
    list.push({
      name: "observed-predicted",
      kind: "observed-predicted",
      title: `Observed and predicted, ${formatCount(block.participants.length)} held-out participants`,
    });
  if (block.learningCurve && block.learningCurve.length > 0)
    list.push({ name: "learning-curve", kind: "learning-curve", title: "Learning curve" });
  if (block.regions.length > 0)
    list.push({
      name: "weights",
      kind: "weights",
      title: `Region weights, ${block.regions.length} region${block.regions.length === 1 ? "" : "s"}`,
      regions: block.regions.map((r) => r.region),
    });
  return list;
}

function context(fit: Fit): CaptionContext {
  const level = ((fit.result as Record<string, unknown>).level as number | undefined) ?? FIT_LEVEL;
  return { spec: specOfRecipe(fit.recipe), level, fitId: fit.id };
}

function hasFlagCuts(r: RegionResult): boolean {
  const t = r.flagThresholds as { cooksDistance?: unknown } | undefined;
  return Boolean(t && typeof t.cooksDistance === "number");
}

function hasNull(r: RegionResult): boolean {
  const h = r.nullHistogram as { edges?: unknown } | undefined | null;
  return Boolean(h && typeof h === "object" && Array.isArray(h.edges));
}

/** The fit's figures the caller may download, forest first, then each region's in the fit's order. Throws 409 until done. */
export async function listFigures(
  _db: Queryable,
  fit: Fit,
  access: FigureAccess,
): Promise<FigureSummary[]> {
  return figuresOf(fit, access);
}

function figuresOf(fit: Fit, access: FigureAccess): FigureSummary[] {
  const regions = doneRegions(fit);
  const spec = specOfRecipe(fit.recipe);
  const prediction = spec.kind === "prediction" ? predictionOf(fit) : null;
  if (prediction) return predictionFigures(prediction, access);
  if (regions.length === 0 || spec.kind === "prediction" || spec.kind === "specification-curve")
    return [];
  const list: FigureSummary[] = [
    {
      name: "forest",
      kind: "forest",
      title: `Estimates with 95% intervals, ${regions.length} region${regions.length === 1 ? "" : "s"}`,
      regions: regions.map((r) => r.region),
    },
  ];
  if (
    spec.weights === "first-level-se" &&
    varianceShareInputsOf(regions, spec.tau2Method).length > 0
  )
    list.push({
      name: "variance-shares",
      kind: "variance-shares",
      title: "Measurement noise and true differences",
      regions: varianceShareInputsOf(regions, spec.tau2Method).map((r) => r.region),
    });
  const dataKind = dataPlotKind(spec);
  for (const r of regions) {
    if (access.participantsVisible) {
      list.push({
        name: figureName(r.region, dataKind),
        kind: dataKind,
        title: `${r.region}: ${dataKind === "scatter" ? scatterTitle(spec.predictor ?? null) : stripTitle(spec.kind !== "two-group")}`,
        regions: [r.region],
      });
      if (spec.kind !== "reliability" && hasFlagCuts(r))
        list.push({
          name: figureName(r.region, "influence"),
          kind: "influence",
          title: `${r.region}: ${influenceTitle}`,
          regions: [r.region],
        });
    }
    if (hasNull(r))
      list.push({
        name: figureName(r.region, "null"),
        kind: "null",
        title: `${r.region}: ${nullHistogramTitle.toLowerCase()}`,
        regions: [r.region],
      });
  }
  return list;
}

/** The listed figure called `name`; throws 404 (unknown) or 403 (participant plots for a caller who may not see them). */
function findFigure(fit: Fit, name: string, access: FigureAccess): FigureSummary {
  const all = figuresOf(fit, { participantsVisible: true });
  const found = all.find((f) => f.name === name);
  if (!found) {
    throw notFound(
      `No figure '${name}' for this fit. Its figures are listed at GET /api/fits/${fit.id}/figures.`,
    );
  }
  if (participantKinds.includes(found.kind) && !access.participantsVisible) {
    throw forbidden(
      "This study restricts participant-level rows, and this figure draws one mark per participant.",
    );
  }
  return found;
}

interface Built {
  figure: FigureInput;
  caption: string;
}

async function build(
  db: Queryable,
  fit: Fit,
  figure: FigureSummary,
  access: FigureAccess,
): Promise<Built> {
  const ctx = context(fit);
  const regions = doneRegions(fit);
  const prediction = predictionOf(fit);
  if (prediction && isPredictionFigureKind(figure.kind))
    return buildPrediction(ctx, prediction, figure);
  if (figure.kind === "forest") {
    const label = estimateLabel(ctx.spec);
    return {
      figure: {
        kind: "forest",
        rows: regions.map((r) => ({
          region: r.region,
          estimate: r.estimate,
          low: r.ciLow,
          high: r.ciHigh,
        })),
        estimateLabel: label,
        title: figure.title,
      },
      caption: forestCaption(ctx, regions, label),
    };
  }
  if (figure.kind === "variance-shares") {
    const shares = varianceShareInputsOf(regions, ctx.spec.tau2Method);
    return {
      figure: { kind: "variance-shares", regions: shares, title: figure.title },
      caption: varianceCaption(ctx, shares.length, varianceSharesMethod(shares)),
    };
  }
  const region = (figure.regions ?? [])[0];
  if (!regionKinds.includes(figure.kind) || region === undefined)
    throw notFound(`No figure '${figure.name}' for this fit.`);
  const detail = await regionDetail(db, fit, region, access.participantsVisible);
  const summary = regions.find((r) => r.region === region) as RegionResult;
  const flags = new Set<Flag>();
  for (const p of detail.points ?? []) for (const f of p.flags) flags.add(f as Flag);
  const ordered = (["outlier", "leverage", "influence"] as const).filter((f) => flags.has(f));
  if (figure.kind === "scatter") {
    const s = scatterInputOf(detail);
    return {
      figure: { kind: "scatter", input: s.input, title: figure.title },
      caption: dataPlotCaption(ctx, summary, "scatter", {
        axis: detail.axes.x,
        flags: ordered,
        bandMethod: detail.band?.method ?? null,
        hollow: s.input.points.some((p) => p.setAside),
      }),
    };
  }
  if (figure.kind === "strip") {
    const s = stripInputOf(detail);
    return {
      figure: { kind: "strip", input: s.input, title: figure.title },
      caption: dataPlotCaption(ctx, summary, "strip", {
        axis: null,
        flags: ordered,
        bandMethod: null,
        hollow: s.input.points.some((p) => p.setAside),
      }),
    };
  }
  if (figure.kind === "influence") {
    const input = influenceInputOf(detail);
    if (!input) throw notFound(`No figure '${figure.name}' for this fit.`);
    return {
      figure: { kind: "influence", points: input.points, cuts: input.cuts, title: figure.title },
      caption: influenceCaption(
        ctx,
        summary,
        input.points.filter((p) => p.flags.length > 0).length,
        input.points.some((p) => p.setAside),
      ),
    };
  }
  const input = nullHistogramInputOf(detail);
  if (!input) throw notFound(`No figure '${figure.name}' for this fit.`);
  return {
    figure: { kind: "null", input, title: figure.title },
    caption: nullCaption(ctx, summary, nullHistogramWords(input).caption),
  };
}

/** The screen's trait name and confounds (fit-screen.tsx passes the same to PredictionView). */
function predictionCaptionInput(ctx: CaptionContext, block: PredictionBlock) {
  return { block, trait: ctx.spec.predictor ?? "trait", confounds: ctx.spec.covariates ?? [] };
}

function buildPrediction(
  ctx: CaptionContext,
  block: PredictionBlock,
  figure: FigureSummary,
): Built {
  const input = predictionCaptionInput(ctx, block);
  if (figure.kind === "observed-predicted")
    return {
      figure: {
        kind: "observed-predicted",
        input: { participants: block.participants, trait: input.trait, confounds: input.confounds },
        title: figure.title,
      },
      caption: observedPredictedCaption(ctx, input),
    };
  if (figure.kind === "learning-curve")
    return {
      figure: { kind: "learning-curve", points: block.learningCurve ?? [], title: figure.title },
      caption: learningCurveCaption(ctx, input),
    };
  return {
    figure: { kind: "weights", rows: weightRows(block.regions, null).rows, title: figure.title },
    caption: weightsCaption(ctx, input),
  };
}

/** Drawing height in layout units of the figures that grow with their rows (0 for the others). */
function drawingHeight(figure: FigureInput, widthMm: FigureWidth): number {
  if (figure.kind === "forest") return forestHeight(figure.rows.length);
  if (figure.kind === "weights") return weightDotHeight(figure.rows, figureLayoutWidth(widthMm));
  return 0;
}

const kept = new Map<string, string>();
const KEEP = 32;

/** The figure as SVG with its text as outlines, `widthMm` wide (89 or 183). */
export async function figureSvg(
  db: Queryable,
  fit: Fit,
  name: string,
  access: FigureAccess,
  widthMm: FigureWidth = 89,
  jobs: FigureJobs = sharedFigureJobs(),
): Promise<string> {
  const figure = findFigure(fit, name, access);
  const key = `${fit.id}\u0000${name}\u0000${widthMm}\u0000${access.participantsVisible}`;
  const hit = kept.get(key);
  if (hit !== undefined) {
    kept.delete(key);
    kept.set(key, hit);
    return hit;
  }
  const built = await build(db, fit, figure, access);
  const svg = await jobs.svg(built.figure, widthMm);
  kept.set(key, svg);
  if (kept.size > KEEP) kept.delete(kept.keys().next().value as string);
  return svg;
}

/** The figure as a PNG `widthMm` wide (89 or 183) at 300 dpi, with a pHYs chunk saying so. */
export async function figurePng(
  db: Queryable,
  fit: Fit,
  name: string,
  access: FigureAccess,
  widthMm: FigureWidth,
  jobs: FigureJobs = sharedFigureJobs(),
): Promise<Buffer> {
  const figure = findFigure(fit, name, access);
  const built = await build(db, fit, figure, access);
  const heightPx = Math.round(
    (pixelsFor(widthMm, FIGURE_DPI) * drawingHeight(built.figure, widthMm)) /
      figureLayoutWidth(widthMm),
  );
  if (heightPx > MAX_PNG_HEIGHT_PX) {
    throw new HttpError(
      422,
      "figure_too_large",
      `This figure would be ${heightPx} px tall at ${FIGURE_DPI} dpi (at most ${MAX_PNG_HEIGHT_PX}); download it as SVG.`,
      { heightPx, maxHeightPx: MAX_PNG_HEIGHT_PX },
    );
  }
  return jobs.png(built.figure, widthMm, FIGURE_DPI);
}

/** The figure's caption (plain text, one statement per line). */
export async function figureCaption(
  db: Queryable,
  fit: Fit,
  name: string,
  access: FigureAccess,
): Promise<string> {
  const figure = findFigure(fit, name, access);
  const { caption } = await build(db, fit, figure, access);
  return `${figure.title}\n\n${caption}\n`;
}
