/**
 * The layout of a specification curve's screen, without drawing: the
 * specifications in estimate order as columns (x), each estimate and
 * interval on one value scale (y), and the rows of the choice panel (one
 * row per estimator, covariate set and exclusion rule) with, per column,
 * whether that specification made the choice. Pure; the view draws it.
 */
import type {
  CurveJointTest,
  CurveSpecification,
  CurveSummary,
} from "../../contract/specification-curve";
import { estimatorLabels } from "../../contract/labels";
import type { ModelSpec } from "../../contract/spec";
import { formatP, formatPercent, formatValue } from "../charts/number-format";
import { estimateTextWidth } from "../charts/scales";

export interface ChoiceRow {
  key: string;
  /** Group heading: "Estimator", "Covariates" or "Exclusion rule". */
  group: string;
  label: string;
  /** Per column (specification, in estimate order): made this choice. */
  made: boolean[];
}

export interface CurveLayout {
  width: number;
  columnWidth: number;
  /** Value range of the estimate panel (includes 0 and every interval). */
  low: number;
  high: number;
  /** y of a value in the estimate panel of the given height (top 0). */
  y: (value: number, height: number) => number;
  rows: ChoiceRow[];
}

/** The smallest column a specification gets (px); the panel scrolls sideways beyond the screen. */
export const CURVE_COLUMN_MIN = 12;

export function curveLayout(
  specs: readonly CurveSpecification[],
  rules: readonly { column: string; op: string; value: number | string; reason: string }[],
  availableWidth: number,
): CurveLayout {
  const count = Math.max(1, specs.length);
  const columnWidth = Math.max(CURVE_COLUMN_MIN, Math.floor(availableWidth / count));
  let low = 0;
  let high = 0;
  for (const s of specs) {
    for (const v of [s.estimate, s.ciLow, s.ciHigh]) {
      if (v === null || !Number.isFinite(v)) continue;
      low = Math.min(low, v);
      high = Math.max(high, v);
    }
  }
  if (high === low) high = low + 1;
  const pad = (high - low) * 0.05;
  low -= pad;
  high += pad;
  const y = (value: number, height: number) => ((high - value) / (high - low)) * height;
  const estimators = [...new Set(specs.map((s) => s.estimator))];
  const sets = [...new Set(specs.map((s) => s.covariates.join(", ")))];
  const rows: ChoiceRow[] = [
    ...estimators.map((e) => ({
      key: `estimator-${e}`,
      group: "Estimator",
      label: estimatorLabels[e as ModelSpec["estimator"]] ?? e,
      made: specs.map((s) => s.estimator === e),
    })),
    ...sets.map((set) => ({
      key: `covariates-${set}`,
      group: "Covariates",
      label: set === "" ? "no covariates" : `+ ${set}`,
      made: specs.map((s) => s.covariates.join(", ") === set),
    })),
    ...rules.map((rule, k) => ({
      key: `rule-${k}`,
      group: "Exclusion rule",
      label: `excl. ${rule.column} ${rule.op} ${rule.value}`,
      made: specs.map((s) => s.exclusions.includes(k)),
    })),
  ];
  return { width: columnWidth * count, columnWidth, low, high, y, rows };
}

/** The narrowest column of choice labels (px): a phone's share of the width. */
export const CURVE_LABELS_MIN = 112;

/**
 * The width of the choice labels beside the panel of `panelWidth` px: the
 * widest label at `fontSize` with a little room, at least CURVE_LABELS_MIN
 * and at most a third of the panel (a longer label is cut with "…").
 */
export function curveLabelWidth(
  rows: readonly Pick<ChoiceRow, "label">[],
  panelWidth: number,
  fontSize: number,
): number {
  const widest = rows.reduce((m, r) => Math.max(m, estimateTextWidth(r.label, fontSize)), 0);
  const most = Math.max(CURVE_LABELS_MIN, Math.floor(panelWidth / 3));
  return Math.min(most, Math.max(CURVE_LABELS_MIN, Math.ceil(widest + 12)));
}

/** A specification's identity: its estimator, covariates and rules (unique within a curve). */
export function specKey(
  s: Pick<CurveSpecification, "estimator" | "covariates" | "exclusions">,
): string {
  return `${s.estimator}|${s.covariates.join(",")}|${s.exclusions.join(",")}`;
}

/** The curve's summary in one sentence (the screen's summary card and the report bundle's curve.md). */
export function curveSummaryWords(summary: CurveSummary): string {
  return `Median estimate ${formatValue(summary.medianEstimate)}; ${formatPercent(summary.sharePositive)} above zero; significant (p < .05) above zero in ${formatPercent(summary.shareSignificantPositive)}, below zero in ${formatPercent(summary.shareSignificantNegative)}.`;
}

/** The joint test in one sentence (the screen and the report bundle's curve.md). */
export function jointTestWords(jointTest: CurveJointTest): string {
  return `Joint test against ${jointTest.resamples} null data sets (trait permuted): median estimate ${formatP(jointTest.pMedian)}; share significant ${jointTest.dominantDirection === "positive" ? "above" : "below"} zero ${formatP(jointTest.pShareSignificant)}; Stouffer's Z = ${formatValue(jointTest.stoufferZ)}, ${formatP(jointTest.pStouffer)}.`;
}
