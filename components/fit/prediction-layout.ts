/**
 * Pure layout and wording for a prediction fit's screen (fit/prediction-view.tsx):
 * the key scores in plain words, the penalty (λ) summary, the region
 * weights sorted for the dot chart, the shared domain of the observed vs
 * predicted plot (equal on both axes so the identity line is the diagonal),
 * and label wrapping so long region names never overlap on a phone.
 * No framework imports.
 */
import type { LearningCurvePoint, PredictionBlock } from "../../contract/prediction";
import { ChartInputError, requireFinite } from "../charts/chart-input-error";
import { formatCount, formatFixed, formatValue } from "../charts/number-format";
import { estimateTextWidth, paddedExtent } from "../charts/scales";
import { pPhrase } from "./p-text";

/** A score as the screen prints it: two decimals for r and r², three significant digits for MAE. */
export function scoreText(value: number | null, kind: "r" | "r2" | "mae"): string {
  if (value === null || !Number.isFinite(value)) return "n/a";
  return kind === "mae" ? formatValue(value, 3) : formatFixed(value, 2);
}

/** "± 0.03" for a spread over repeats, or null when there is none (one repeat). */
export function spreadText(spread: number | null, kind: "r" | "r2" | "mae"): string | null {
  if (spread === null || !Number.isFinite(spread)) return null;
  return `± ${kind === "mae" ? formatValue(spread, 2) : spread.toFixed(2)}`;
}

/** How the folds were drawn, in words: "10 repeats of 5-fold cross-validation", "leave-one-out cross-validation". */
export function schemeWords(block: Pick<PredictionBlock, "folds" | "repeats">): string {
  if (block.folds === "leave-one-out") return "leave-one-out cross-validation";
  const scheme = `${block.folds}-fold cross-validation`;
  return block.repeats === 1 ? scheme : `${formatCount(block.repeats)} repeats of ${scheme}`;
}

/** One key score for the tiles: its name, value, spread and permutation p. */
export interface ScoreTile {
  key: "r" | "r2" | "mae";
  name: string;
  /** The name on a phone's narrow tile. */
  shortName: string;
  value: string;
  spread: string | null;
  p: string | null;
}

/** The three tiles (r, r², MAE); p only where the permutation test gives one (MAE has none). */
export function scoreTiles(block: PredictionBlock): ScoreTile[] {
  const perm = block.permutation;
  return [
    {
      key: "r",
      name: "r",
      shortName: "r",
      value: scoreText(block.r, "r"),
      spread: spreadText(block.spread.r, "r"),
      p: perm ? pPhrase(perm.pR) : null,
    },
    {
      key: "r2",
      name: "r²",
      shortName: "r²",
      value: scoreText(block.r2, "r2"),
      spread: spreadText(block.spread.r2, "r2"),
      p: perm ? pPhrase(perm.pR2) : null,
    },
    {
      key: "mae",
      name: "Mean absolute error",
      shortName: "MAE",
      value: scoreText(block.mae, "mae"),
      spread: spreadText(block.spread.mae, "mae"),
      p: null,
    },
  ];
}

/**
 * The headline in plain words: "Predicted in people the model had not seen
 * (10 repeats of 10-fold cross-validation): r = 0.31 (p = 0.004), r² = 0.09
 * (p = 0.006), mean absolute error 4.2 accuracy points." without a unit
 * when the trait has none.
 */
export function scoreSentence(block: PredictionBlock, trait: string | null): string {
  const perm = block.permutation;
  const withP = (p: number | null) => (perm ? ` (${pPhrase(p)})` : "");
  const r = `r = ${scoreText(block.r, "r")}${withP(perm?.pR ?? null)}`;
  const r2 = `r² = ${scoreText(block.r2, "r2")}${withP(perm?.pR2 ?? null)}`;
  const mae = `mean absolute error ${scoreText(block.mae, "mae")}${trait ? ` (in ${trait})` : ""}`;
  return `Predicted in people the model had not seen (${schemeWords(block)}): ${r}, ${r2}, ${mae}.`;
}

/** What the spread and the permutation test mean, in one sentence, or null when neither applies. */
export function spreadSentence(block: PredictionBlock): string | null {
  const parts: string[] = [];
  if (block.repeats > 1 && block.spread.r !== null)
    parts.push(
      `± is the standard deviation over the ${formatCount(block.repeats)} repeats of the random split into folds`,
    );
  if (block.permutation)
    parts.push(
      `p compares the held-out score with ${formatCount(block.permutation.resamples)} runs of the whole pipeline on shuffled trait values`,
    );
  if (parts.length === 0) return null;
  const text = parts.join("; ");
  return `${text.charAt(0).toUpperCase()}${text.slice(1)}.`;
}

/** The penalty summary: a fixed λ, or the range and most common λ chosen per training fold. */
export type LambdaSummary =
  | { kind: "fixed"; lambda: number; text: string }
  | {
      kind: "inner-cv";
      low: number;
      high: number;
      mostCommon: number;
      mostCommonCount: number;
      folds: number;
      text: string;
    };

/**
 * Summarizes `block.lambdas`. With a fixed penalty, every fold holds the same
 * λ. Chosen per fold: the smallest, the largest and the most common value
 * (ties go to the smaller λ). Throws a `ChartInputError` naming
 * `lambdas[i]` for a non-positive or non-finite λ, or `lambdas` when empty.
 * Cost O(folds log folds).
 */
export function lambdaSummary(
  block: Pick<PredictionBlock, "lambdaChoice" | "lambdas">,
): LambdaSummary {
  if (block.lambdas.length === 0) throw new ChartInputError("lambdas", "holds no folds");
  block.lambdas.forEach((l, i) => {
    requireFinite(l.lambda, "lambdas", i);
    if (l.lambda <= 0)
      throw new ChartInputError("lambdas", `must be positive (got ${l.lambda})`, i);
  });
  if (block.lambdaChoice === "fixed") {
    const lambda = block.lambdas[0].lambda;
    return { kind: "fixed", lambda, text: `Penalty fixed at λ = ${formatValue(lambda, 3)}.` };
  }
  const counts = new Map<number, number>();
  for (const l of block.lambdas) counts.set(l.lambda, (counts.get(l.lambda) ?? 0) + 1);
  const values = [...counts.keys()].sort((a, b) => a - b);
  let mostCommon = values[0];
  for (const v of values) if ((counts.get(v) ?? 0) > (counts.get(mostCommon) ?? 0)) mostCommon = v;
  const mostCommonCount = counts.get(mostCommon) ?? 0;
  const folds = block.lambdas.length;
  const low = values[0];
  const high = values[values.length - 1];
  const range =
    low === high
      ? `the same λ = ${formatValue(low, 3)} in all ${formatCount(folds)} training folds`
      : `λ from ${formatValue(low, 3)} to ${formatValue(high, 3)} over ${formatCount(folds)} training folds; most often ${formatValue(mostCommon, 3)} (${formatCount(mostCommonCount)} of ${formatCount(folds)})`;
  return {
    kind: "inner-cv",
    low,
    high,
    mostCommon,
    mostCommonCount,
    folds,
    text: `Penalty chosen inside each training fold by cross-validation: ${range}.`,
  };
}

export interface WeightRow {
  region: string;
  weight: number;
  signConsistency: number;
}

/**
 * The regions for the dot chart: the `limit` largest by absolute weight
 * (all when `limit` is null), shown from the most positive to the most
 * negative weight; ties keep the input order. Checks every weight and sign
 * consistency (a share in [0, 1]) and throws a `ChartInputError` naming
 * `regions[i].…`. Cost O(n log n).
 */
export function weightRows(
  regions: readonly WeightRow[],
  limit: number | null,
): { rows: WeightRow[]; hidden: number } {
  regions.forEach((r, i) => {
    if (!r.region) throw new ChartInputError(`regions[${i}].region`, "must name a region");
    requireFinite(r.weight, `regions[${i}].weight`);
    requireFinite(r.signConsistency, `regions[${i}].signConsistency`);
    if (r.signConsistency < 0 || r.signConsistency > 1)
      throw new ChartInputError(
        `regions[${i}].signConsistency`,
        `must lie in [0, 1] (got ${r.signConsistency})`,
      );
  });
  const indexed = regions.map((r, i) => ({ r, i }));
  const kept =
    limit === null || regions.length <= limit
      ? indexed
      : [...indexed]
          .sort((a, b) => Math.abs(b.r.weight) - Math.abs(a.r.weight) || a.i - b.i)
          .slice(0, limit);
  const rows = kept.sort((a, b) => b.r.weight - a.r.weight || a.i - b.i).map((k) => ({ ...k.r }));
  return { rows, hidden: regions.length - rows.length };
}

/**
 * Opacity of a weight's dot from its sign consistency: a share of 0.5 (the
 * sign flips as often as not) is faint (0.2), 1 is solid; below 0.5 is
 * treated as 0.5 (the mean's sign then disagrees with most folds). O(1).
 */
export function consistencyOpacity(share: number): number {
  const s = Math.min(1, Math.max(0.5, share));
  return 0.2 + ((s - 0.5) / 0.5) * 0.8;
}

/**
 * `text` broken into at most `maxLines` lines that each fit `maxWidth` px
 * at `fontSize` (estimated widths): breaks after spaces, underscores,
 * hyphens, dots or slashes where it can, otherwise inside a word; the last
 * line ends with an ellipsis when text is left over. Cost O(length).
 */
export function wrapLabel(
  text: string,
  maxWidth: number,
  fontSize: number,
  maxLines: number,
): string[] {
  const perLine = Math.max(1, Math.floor(maxWidth / (fontSize * 0.6)));
  const chars = Array.from(text);
  const lines: string[] = [];
  let start = 0;
  while (start < chars.length && lines.length < maxLines) {
    const rest = chars.length - start;
    if (rest <= perLine) {
      lines.push(chars.slice(start).join("").trim());
      start = chars.length;
      break;
    }
    if (lines.length === maxLines - 1) {
      lines.push(`${chars.slice(start, start + perLine - 1).join("")}…`);
      start = chars.length;
      break;
    }
    let cut = -1;
    for (let i = start + perLine - 1; i > start; i--) {
      if (/[\s_\-./]/.test(chars[i])) {
        cut = i + 1;
        break;
      }
    }
    if (cut <= start) cut = start + perLine;
    lines.push(chars.slice(start, cut).join("").trim());
    start = cut;
  }
  return lines.filter((l) => l.length > 0);
}

/** Width of the widest line, in estimated px. */
export function linesWidth(lines: readonly string[], fontSize: number): number {
  return lines.reduce((m, l) => Math.max(m, estimateTextWidth(l, fontSize)), 0);
}

/**
 * The one domain of both axes of the observed vs predicted plot (so the
 * identity line runs corner to corner at 45°): the range of all observed
 * and predicted values with a 5 % pad. Throws a `ChartInputError` naming
 * `participants[i].observed` or `.predicted` for a non-finite value, or
 * `participants` when empty. Cost O(n).
 */
export function observedPredictedDomain(
  participants: readonly { observed: number; predicted: number }[],
): [number, number] {
  if (participants.length === 0)
    throw new ChartInputError("participants", "holds no held-out predictions");
  participants.forEach((p, i) => {
    requireFinite(p.observed, `participants[${i}].observed`);
    requireFinite(p.predicted, `participants[${i}].predicted`);
  });
  return paddedExtent(participants.flatMap((p) => [p.observed, p.predicted]));
}

/** One learning-curve series point with its band (value ± spread), ready for the plot. */
export interface CurvePoint {
  x: number;
  value: number;
  low: number;
  high: number;
}

/**
 * The learning curve's r or r² series against training rows, in ascending
 * training rows; points whose score is null are left out and a null spread
 * gives no band (low = high = value). Throws a `ChartInputError` naming
 * `learningCurve[i].trainingRows` for a non-positive or non-finite count.
 * Cost O(n log n).
 */
export function curveSeries(
  points: readonly LearningCurvePoint[],
  score: "r" | "r2",
): CurvePoint[] {
  points.forEach((p, i) => {
    requireFinite(p.trainingRows, `learningCurve[${i}].trainingRows`);
    if (p.trainingRows <= 0)
      throw new ChartInputError(
        `learningCurve[${i}].trainingRows`,
        `must be positive (got ${p.trainingRows})`,
      );
  });
  return points
    .map((p) => {
      const value = score === "r" ? p.r : p.r2;
      const spread = score === "r" ? p.rSpread : p.r2Spread;
      if (value === null || !Number.isFinite(value)) return null;
      const s = spread !== null && Number.isFinite(spread) ? spread : 0;
      return { x: p.trainingRows, value, low: value - s, high: value + s };
    })
    .filter((p): p is CurvePoint => p !== null)
    .sort((a, b) => a.x - b.x);
}

/** Fixed sizes of the weight dot chart. */
export const weightChart = {
  /** Header row above the rows (the consistency column's title). */
  top: 22,
  lineHeight: 13,
  rowPadding: 8,
  minRowHeight: 22,
  /** Width of the sign-consistency column on the right. */
  consistencyWidth: 48,
  maxLabelLines: 3,
} as const;

export interface WeightChartRow extends WeightRow {
  lines: string[];
  top: number;
  height: number;
}

/**
 * Where each row of the weight dot chart goes at drawing width `width`: the
 * label column takes the widest name up to 40 % of the width (at least 72
 * px); longer names wrap onto up to three lines and their row grows, so no
 * two labels overlap. `bottom` is the height of the rows and their header.
 * Cost O(total label length).
 */
export function weightChartLayout(
  rows: readonly WeightRow[],
  width: number,
  fontSize: number,
): { labelWidth: number; rows: WeightChartRow[]; bottom: number } {
  const widest = rows.reduce((m, r) => Math.max(m, estimateTextWidth(r.region, fontSize)), 0);
  const labelWidth = Math.max(72, Math.min(width * 0.4, widest));
  let top: number = weightChart.top;
  const laid = rows.map((r) => {
    const lines = wrapLabel(r.region, labelWidth, fontSize, weightChart.maxLabelLines);
    const height = Math.max(
      weightChart.minRowHeight,
      lines.length * weightChart.lineHeight + weightChart.rowPadding,
    );
    const row = { ...r, lines, top, height };
    top += height;
    return row;
  });
  return { labelWidth, rows: laid, bottom: top };
}
