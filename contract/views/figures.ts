/**
 * The API's view of a fit's figures (GET /api/fits/:fitId/figures): one
 * entry per figure that can be downloaded, named stably — `forest`,
 * `variance-shares` (a fit weighted by first-level standard errors),
 * `<region>-scatter` or `<region>-strip`, `<region>-influence`,
 * `<region>-null`; a prediction fit's `observed-predicted`, `learning-curve`
 * and `weights`. Each downloads as `…/figures/:name.svg`,
 * `…/:name.png?width=89|183` and its caption as `…/:name.txt`.
 */

/** The journals' usual figure widths in millimetres: one column, two columns (common practice of journals, no single source). */
export const figureWidths = [89, 183] as const;
export type FigureWidth = (typeof figureWidths)[number];

/** What a figure draws. */
export const figureKinds = [
  "forest",
  "variance-shares",
  "scatter",
  "strip",
  "influence",
  "null",
  "observed-predicted",
  "learning-curve",
  "weights",
] as const;
export type FigureKind = (typeof figureKinds)[number];

/** The figures of a prediction fit (named by their kind; the fit has no region rows). */
export const predictionFigureKinds = ["observed-predicted", "learning-curve", "weights"] as const;

/** Whether a figure is one of a prediction fit's (the figures routes and the report bundle). */
export function isPredictionFigureKind(
  kind: string,
): kind is (typeof predictionFigureKinds)[number] {
  return (predictionFigureKinds as readonly string[]).includes(kind);
}

/** The figures drawn per region. */
export type RegionFigureKind = Exclude<
  FigureKind,
  "forest" | "variance-shares" | (typeof predictionFigureKinds)[number]
>;

export interface FigureSummary {
  /** Stable name, used in the download addresses. */
  name: string;
  kind: FigureKind;
  title: string;
  /** The regions the figure draws (every region for the forest plot). */
  regions?: string[];
}

/** The stable name of a region's figure: "L_dlpfc-scatter". */
export function figureName(region: string, kind: RegionFigureKind): string {
  return `${region}-${kind}`;
}
