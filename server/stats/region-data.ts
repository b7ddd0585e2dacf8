/**
 * What one region's computation receives and gives back, shared by the
 * parametric estimate (fit-methods.ts), the statistic a permutation test
 * rearranges (permutation-statistic.ts) and the one a bootstrap resamples
 * (bootstrap-statistic.ts). The fit's estimate stage (fit/estimate.ts) builds
 * a RegionData per region.
 */
import type { Design } from "./design-matrix";

export type Kind = "one-sample" | "two-group" | "association";
export type Estimator = "ols" | "welch" | "rank" | "huber" | "bisquare" | "skipped" | "bend";

/** Everything one region's computation needs, already restricted to its participants. */
export interface RegionData {
  kind: Kind;
  estimator: Estimator;
  /** Contrast values of the included participants. */
  y: Float64Array;
  design: Design;
  /** Index of the tested column in the design. */
  tested: number;
  /** Number of covariate columns (non-intercept columns other than the tested one and, for association, the predictor/group terms). */
  covariateColumns: number;
  /** association: the predictor's values; two-group: 1 for the first level, 0 for the second. */
  x: Float64Array | null;
  /** For association with group (and interaction): 1 for the first level. */
  groupIndicator: Float64Array | null;
  level: number;
}

/** The numbers of a region result that estimateRegion (fit-methods.ts) computes (names as in RegionResult). */
export interface RegionEstimate {
  estimate: number;
  se: number | null;
  statistic: number | null;
  df: number | null;
  p: number;
  ciLow: number | null;
  ciHigh: number | null;
  r?: number;
  rCiLow?: number;
  rCiHigh?: number;
  method: string;
  extras: Record<string, unknown>;
}
