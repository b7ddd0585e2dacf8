/**
 * The API's views of fits, as the server sends them (server/services/fits.ts
 * and its neighbours) and the web app reads them: the fits list and the fit
 * view with lineage, approval and seal; a region's detail, its plot and its
 * participants' diagnostics; the one-region preview with the current
 * set-asides. No server imports, so the web app can use it.
 */
import type { ExclusionRule } from "../exclusion-rules";
import type { FitPlanView } from "./plans";
import type { RegionResult } from "../spec";

/** A fit's life: queued, running, then done, failed or cancelled. */
export const fitStatuses = ["queued", "running", "done", "failed", "cancelled"] as const;
export type FitStatus = (typeof fitStatuses)[number];

/** Progress of a queued or running fit. */
export interface FitProgress {
  /** 0…1 */
  fraction: number;
  /** Estimated seconds left, or null while unknown. */
  secondsLeft: number | null;
}

export interface DatasetRef {
  id: string;
  version: number;
  fileName: string;
  sha256: string;
}

/** A fit's status as its badge shows it: a done fit that was approved or sealed says so. */
export type FitStage = FitStatus | "approved" | "sealed";

/** A set-aside a fit applied, as its view shows it. */
export interface FitSetAsideView {
  /** The participant's id, or null when participant ids are withheld from the caller. */
  participant: string | null;
  /** null = every region */
  region: string | null;
  scope: "all regions" | "one region";
  reason: string;
  /** Who set the participant aside and when (null when no matching record is found). */
  createdBy: { id: string; name: string | null } | null;
  createdAt: string | null;
}

/** A rule of the fit's model (its `exclusionRules`) and whom it left out, as the fit view shows it. */
export interface FitRuleExclusionView {
  rule: ExclusionRule;
  /** How many participants it left out; null until the fit is done. */
  count: number | null;
  /** Their ids; null when participant ids are withheld from the caller or the fit is not done. */
  participants: string[] | null;
}

/** What the fits list and the fit view show of a fit's lineage. */
export interface FitLineage {
  /** Smallest and largest N over the regions of a done fit; null before. */
  n: { min: number; max: number } | null;
  /** How many set-asides the fit applied. */
  setAsideCount: number;
  /** The earlier fit of the same model this one re-runs, or null. */
  refitOf: string | null;
  /** When that earlier fit was made (for "refit of the fit of 3 Dec"). */
  refitOfCreatedAt: string | null;
  /** What changed against the earlier fit, in plain words (empty without one). */
  changes: string[];
  /** True when a new fit of the model would run on other data, set-asides or model fields. */
  stale: boolean;
  staleReasons: string[];
}

// ─── Approval and seal (server/services/sealing.ts) ───

/** A fit's approval for sealing. */
export interface ApprovalView {
  by: { id: string; name: string | null };
  at: string;
}

export interface SealView {
  by: { id: string; name: string | null };
  at: string;
  /** SHA-256 of the canonical recipe+result JSON at sealing. */
  sha256: string;
  /** True when the stored recipe and result still hash to `sha256`. */
  intact: boolean;
  /** True when one person started, approved and sealed the fit (the study's "A second person signs off" was off). */
  singlePersonSignOff: boolean;
}

/** The model of a sealed fit as it was at sealing (`fit_seals.model`). */
export interface SealedModel {
  name: string;
  regionSelection: string;
  circular: boolean;
  /** Whether the model had already been deleted when the fit was sealed. */
  deleted: boolean;
}

export interface Publication {
  approval: ApprovalView | null;
  seal: SealView | null;
}

// ─── The fits list and the fit view ───

/**
 * A fit as the fits list shows it, with its lineage (services/fit-lineage.ts):
 * N (smallest and largest over its regions), how many set-asides it applied,
 * the earlier fit it re-runs and what changed, and whether it is stale.
 */
export interface FitSummaryView extends FitLineage {
  id: string;
  studyId: string;
  model: { id: string; name: string; deleted: boolean; circular: boolean };
  status: FitStatus;
  /** The status, or "approved"/"sealed" for a done fit that has been (services/sealing.ts). */
  stage: FitStage;
  progress: FitProgress;
  createdBy: { id: string; name: string | null };
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  error: { code: string; message: string } | null;
}

/** A fit's result without its per-participant rows (those are in the region detail). */
export interface FitResultSummary {
  regions: RegionResult[];
  notes: string[];
  [extra: string]: unknown;
}

export interface FitView extends FitSummaryView {
  model: FitSummaryView["model"] & { caution: string | null };
  datasets: { brain: DatasetRef; participants: DatasetRef | null };
  /** False when participant-level content is withheld from the caller. */
  participantsVisible: boolean;
  /** The full recipe, or null when participant-level content is withheld. */
  recipe: Record<string, unknown> | null;
  /**
   * The result when done, without per-participant rows and with each
   * region's row without REGION_DETAIL_KEYS (those are in the region
   * detail); with attenuation where it applies (services/attenuation.ts).
   */
  result: FitResultSummary | null;
  /** Each set-aside the fit applied, with who set it aside and when (participant ids withheld when not visible). */
  setAsides: FitSetAsideView[];
  /** The model's exclusion rules, each with whom it left out (empty for a model without rules). */
  ruleExclusions: FitRuleExclusionView[];
  /** Who approved the fit for sealing, and its seal { by, at, sha256, intact, singlePersonSignOff } (services/sealing.ts). */
  approval: Publication["approval"];
  seal: Publication["seal"];
  /** The fit compared with the study's plan current when it was created (contract/plans.ts), or null when there was none. */
  plan: FitPlanView | null;
}

/**
 * Spearman's correction for attenuation beside an association region's
 * result (server/services/attenuation.ts), where the study states the
 * trait's reliability and the brain table has sessions.
 */
export interface Attenuation {
  /** ICC(3,1) of the region across the brain table's sessions. */
  reliabilityBrain: number;
  reliabilityBrainForm: "ICC(3,1)";
  /** The trait's stated reliability and its source. */
  reliabilityTrait: number;
  traitSource: string;
  /** When the trait's reliability was stated (it is read when the fit is shown, not stored with the fit). */
  traitStatedAt: string;
  trait: string;
  observed: number;
  observedCiLow: number;
  observedCiHigh: number;
  /** √(rel_brain · rel_trait): the largest correlation the two measures could show. */
  ceiling: number;
  /** r / ceiling (not clipped). */
  disattenuated: number;
  disattenuatedCiLow: number;
  disattenuatedCiHigh: number;
  /** Plain-words caution, or null. */
  caution: string | null;
}

// ─── A region's plot (server/stats/region-plot.ts) ───

/** The mean response and its band at one point (server/stats/mean-response-band.ts). */
export interface MeanResponse {
  /** ŷ₀ = x₀ᵀb */
  fit: number;
  /** s·√(x₀ᵀ(XᵀX)⁻¹x₀) */
  se: number;
  low: number;
  high: number;
}

export interface PlotPoint {
  participant: string;
  /** association: the trait value */
  x: number | null;
  /** two-group, or association with a group: the participant's group label */
  group: string | null;
  y: number;
}

export interface BandLine {
  /** "all participants" or the group level the line is drawn for */
  label: string;
  points: ({ x: number } & MeanResponse)[];
}

export interface GroupMean {
  label: string;
  n: number;
  mean: number;
  ciLow: number | null;
  ciHigh: number | null;
}

export interface RegionPlot {
  points: PlotPoint[];
  band: { method: string; level: number; lines: BandLine[] } | null;
  groupMeans: GroupMean[] | null;
  /** Why the band or a group mean could not be computed, in plain words. */
  notes: string[];
}

// ─── A region's detail, its participants and its preview ───

/** One participant of a region's fit with every diagnostic (GET …/regions/:region/participants). */
export interface RegionDetailPoint {
  participant: string;
  x: number | null;
  group: string | null;
  y: number;
  fitted: number | null;
  residual: number | null;
  leverage: number | null;
  studentizedResidual: number | null;
  cooksDistance: number | null;
  dffits: number | null;
  mahalanobis: number | null;
  flags: string[];
}

/** What the region's plots and its participant card draw of one participant (the rest is in the participants' pages). */
export type RegionPlotPoint = Pick<
  RegionDetailPoint,
  | "participant"
  | "x"
  | "group"
  | "y"
  | "leverage"
  | "studentizedResidual"
  | "cooksDistance"
  | "flags"
>;

export interface RegionDetail {
  fitId: string;
  region: string;
  kind: string;
  estimator: string;
  inference: string;
  level: number;
  /** The region's row of the result (estimate, CI, statistic, df, p, adjusted p, extras). */
  result: RegionResult;
  n: number;
  axes: { x: string | null; y: string; group: string | null; levels: string[] | null };
  flagCounts: { outlier: number; leverage: number; influence: number };
  participantsVisible: boolean;
  /**
   * One per participant in the region's fit, with what the plots draw, or
   * null when withheld. Every diagnostic of each participant is paged at
   * GET /api/fits/:fitId/regions/:region/participants.
   */
  points: RegionPlotPoint[] | null;
  /** Participants of the fit's set-aside list that concern this region, or null when withheld. */
  setAside: { participant: string; scope: "all regions" | "this region"; reason: string }[] | null;
  band: RegionPlot["band"];
  groupMeans: RegionPlot["groupMeans"];
  nullHistogram: unknown;
  sensitivity: unknown;
  leaveOneOut: unknown;
  notes: string[];
}

/** A region participant's diagnostics that are numbers (null where the fit gives none). */
export const participantDiagnosticNumbers = [
  "fitted",
  "residual",
  "leverage",
  "studentizedResidual",
  "cooksDistance",
  "dffits",
  "mahalanobis",
] as const;

/** Columns a page can be ordered by ("position" is the fit's participant order). */
export const participantOrders = [
  "position",
  "participant",
  "flags",
  "x",
  "y",
  ...participantDiagnosticNumbers,
] as const;
export type ParticipantOrder = (typeof participantOrders)[number];

/** One page of a region's participants with every diagnostic (GET …/regions/:region/participants). */
export interface RegionParticipantsPage {
  fitId: string;
  region: string;
  /** Participants in the region's fit. */
  n: number;
  /** Participants matching `search` (all of them without one). */
  total: number;
  offset: number;
  limit: number;
  sort: ParticipantOrder;
  direction: "asc" | "desc";
  search: string | null;
  rows: RegionDetailPoint[];
}

/** One region recomputed with the study's current set-asides (GET …/regions/:region/preview). */
export interface RegionPreview {
  fitId: string;
  region: string;
  /** Always "parametric": resampling inference is recomputed by a full refit. */
  inference: "parametric";
  /** The fit's numbers for the region (parametric counterparts when the fit resampled), or null when the fit is not done. */
  fit: {
    n: number;
    estimate: number;
    ciLow: number | null;
    ciHigh: number | null;
    p: number;
    r?: number;
  } | null;
  /** The region recomputed with the study's current set-asides. */
  preview: {
    n: number;
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
    method: unknown;
  };
  /** Set-asides applied in the preview (participant ids withheld when not visible). */
  setAside: {
    count: number;
    participants:
      | { participant: string; scope: "all regions" | "this region"; reason: string }[]
      | null;
  };
  /** How the preview's set-aside list differs from the fit's for this region. */
  changes: { added: number; restored: number };
}
