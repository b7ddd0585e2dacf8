/**
 * The caption of a figure, in plain text: what is drawn, N, the estimator,
 * the interval, the inference and correction, what the marks and flags
 * mean, and how many participants were set aside (and that they are left
 * out of the numbers). Uses the model's words from contract/labels.ts and
 * the methods paragraph's counting words (contract/methods-text.ts).
 */
import { cutLegend } from "../../components/charts/influence-layout";
import { roleLabel, roleShape } from "../../components/charts/marks";
import { formatCount, formatValue } from "../../components/charts/number-format";
import { pPhrase } from "../../components/fit/p-text";
import { schemeWords, scoreSentence, spreadSentence } from "../../components/fit/prediction-layout";
import { predictionCaution } from "../../contract/cautions";
import type { PredictionBlock } from "../../contract/prediction";
import { influenceNote } from "../../components/fit/region-plot-inputs";
import { correctionWords, estimatorWords, inferenceWords } from "../../contract/labels";
import { count } from "../../contract/methods-text";
import type { ModelSpec, RegionResult } from "../../contract/spec";
import type { Flag } from "../../contract/spec";

export interface CaptionContext {
  spec: ModelSpec;
  /** Interval level, e.g. 0.95. */
  level: number;
  fitId: string;
}

function percent(level: number): string {
  return `${Math.round(level * 100)}%`;
}

/** How the estimate and its interval were obtained: "Huber M-estimation; permutation inference; Holm correction over regions." */
export function methodLine(ctx: CaptionContext): string {
  const { spec } = ctx;
  return `Estimator: ${estimatorWords[spec.estimator]}. Inference: ${inferenceWords[spec.inference]}; ${correctionWords[spec.correction]}.`;
}

/** Participants set aside from `region` (every region when null) in this fit, with the words saying they are left out. */
export function setAsideLine(spec: ModelSpec, region: string | null): string {
  const n =
    region === null
      ? new Set(spec.setAside.map((s) => s.participant)).size
      : new Set(
          spec.setAside
            .filter((s) => s.region === undefined || s.region === region)
            .map((s) => s.participant),
        ).size;
  if (n === 0) return "No participant was set aside.";
  return `${count(n, "participant")} set aside before this fit (each with a written reason in the fit's record) ${n === 1 ? "is" : "are"} left out of every number shown.`;
}

function flagMeaning(flags: readonly Flag[], hollow: boolean): string {
  if (flags.length === 0) return hollow ? "Hollow marks: participants set aside." : "";
  const words = flags.map((f) => `${roleShape[f]} = ${roleLabel[f]} (${cutLegend[f]})`);
  return `Flag shapes: ${words.join("; ")}; circles: participants not flagged${hollow ? "; hollow marks: participants set aside" : ""}.`;
}

function resultLine(r: RegionResult, level: number): string {
  const ci =
    r.ciLow !== null && r.ciHigh !== null
      ? `, ${percent(level)} CI ${formatValue(r.ciLow)} to ${formatValue(r.ciHigh)}`
      : "";
  return `Estimate ${formatValue(r.estimate)}${ci}; ${pPhrase(r.p)}, adjusted ${pPhrase(r.pAdjusted)}; N = ${formatCount(r.n)}.`;
}

function source(ctx: CaptionContext): string {
  return `Drawn by Covarion from fit ${ctx.fitId}.`;
}

/** Caption of the forest plot of `regions`. */
export function forestCaption(
  ctx: CaptionContext,
  regions: readonly RegionResult[],
  estimateLabel: string,
): string {
  const ns = regions.map((r) => r.n);
  const lo = Math.min(...ns);
  const hi = Math.max(...ns);
  return [
    `Forest plot of ${count(regions.length, "region")}: for each region the estimate (${estimateLabel.toLowerCase()}, square) and its ${percent(ctx.level)} confidence interval (whiskers); the dashed line marks zero. Regions in the fit's order.`,
    lo === hi
      ? `N = ${formatCount(lo)} participants per region.`
      : `N = ${formatCount(lo)} to ${formatCount(hi)} participants per region.`,
    methodLine(ctx),
    setAsideLine(ctx.spec, null),
    source(ctx),
  ].join("\n");
}

/** Caption of a region's scatter or strip plot. */
export function dataPlotCaption(
  ctx: CaptionContext,
  r: RegionResult,
  kind: "scatter" | "strip",
  what: {
    axis: string | null;
    flags: readonly Flag[];
    bandMethod: string | null;
    /** Participants set aside are drawn (hollow). */
    hollow: boolean;
  },
): string {
  const drawn =
    kind === "scatter"
      ? `Scatter plot of the contrast value in ${r.region} against ${what.axis ?? "the trait"}, one mark per participant, with the fitted line and its ${percent(ctx.level)} confidence band. Line and band: ${what.bandMethod ?? "least squares"}.`
      : ctx.spec.kind === "two-group"
        ? `Strip plot of the contrast value in ${r.region} by group, one mark per participant, with each group's mean (bar) and ${percent(ctx.level)} confidence interval (whiskers); the dashed line marks zero. Horizontal offset within a group is for visibility only.`
        : `Strip plot of the contrast value in ${r.region}, one mark per participant, with the mean (bar) and its ${percent(ctx.level)} confidence interval (whiskers); the dashed line marks zero. Horizontal offset is for visibility only.`;
  return [
    drawn,
    resultLine(r, ctx.level),
    methodLine(ctx),
    flagMeaning(what.flags, what.hollow),
    setAsideLine(ctx.spec, r.region),
    source(ctx),
  ]
    .filter((l) => l.length > 0)
    .join("\n");
}

/** Caption of a region's influence view. */
export function influenceCaption(
  ctx: CaptionContext,
  r: RegionResult,
  flagged: number,
  hollow: boolean,
): string {
  return [
    `Who moves the estimate in ${r.region}: Cook's distance, leverage and the size of the studentized residual of each of ${count(r.n, "participant")}, largest Cook's distance first; ${count(flagged, "participant")} flagged, named by their ids.`,
    influenceNote,
    flagMeaning(["outlier", "leverage", "influence"], hollow),
    setAsideLine(ctx.spec, r.region),
    source(ctx),
  ].join("\n");
}

/** Caption of a region's permutation null distribution. */
export function nullCaption(ctx: CaptionContext, r: RegionResult, words: string): string {
  return [
    `Permutation null distribution of t in ${r.region}: a histogram of the statistic over the rearrangements of the data (bins at least as extreme as the observed value in a second colour), with the observed statistic as a vertical line.`,
    `${words}.`,
    resultLine(r, ctx.level),
    methodLine(ctx),
    setAsideLine(ctx.spec, r.region),
    source(ctx),
  ].join("\n");
}

/** Caption of a weighted fit's variance shares. */
export function varianceCaption(ctx: CaptionContext, regions: number, method: string): string {
  return [
    `Variance shares of ${count(regions, "region")} of a fit weighted by first-level standard errors: for each region a bar split into the share of residual variance that is measurement noise and the share that is true differences between participants, with τ² and I² beside the region's name.`,
    method,
    methodLine(ctx),
    setAsideLine(ctx.spec, null),
    source(ctx),
  ].join("\n");
}

/** What a prediction fit's figures need besides the context. */
export interface PredictionCaptionInput {
  block: PredictionBlock;
  /** The trait predicted (the model's predictor). */
  trait: string;
  /** Confounds removed from the trait inside each training fold (the model's covariates). */
  confounds: readonly string[];
}

function scoreLines(p: PredictionCaptionInput): string[] {
  const lines = [scoreSentence(p.block, p.trait)];
  const spread = spreadSentence(p.block);
  if (spread) lines.push(spread);
  return lines;
}

function foldsLine(block: PredictionBlock): string {
  const trainings = block.lambdas.length;
  return `Cross-validation of N = ${formatCount(block.participants.length)} participants: ${schemeWords(block)}${trainings > 0 ? ` (${count(trainings, "training fold")} in all)` : ""}, ridge regression on the standardized regions.`;
}

function confoundsLine(p: PredictionCaptionInput): string {
  return p.confounds.length > 0
    ? `${p.confounds.join(", ")} removed from ${p.trait} and the regions inside each training fold (fitted on the training rows only, then applied to the held-out rows); the values shown are what is left.`
    : "No confounds were removed.";
}

/** Caption of a prediction fit's observed against predicted plot. */
export function observedPredictedCaption(ctx: CaptionContext, p: PredictionCaptionInput): string {
  const { block } = p;
  const repeats =
    block.repeats > 1 ? `, averaged over the ${formatCount(block.repeats)} repeats` : "";
  return [
    `Observed against predicted ${p.trait} of ${count(block.participants.length, "held-out participant")} (N = ${formatCount(block.participants.length)}), one mark per participant: each prediction comes from a model fitted without that participant${repeats}. The dashed line marks prediction equal to observation; both axes share one scale.`,
    foldsLine(block),
    confoundsLine(p),
    ...scoreLines(p),
    setAsideLine(ctx.spec, null),
    source(ctx),
  ].join("\n");
}

/** Caption of a prediction fit's learning curve. */
export function learningCurveCaption(ctx: CaptionContext, p: PredictionCaptionInput): string {
  const points = [...(p.block.learningCurve ?? [])].sort((a, b) => a.trainingRows - b.trainingRows);
  const sizes = points
    .map((c) => `${formatCount(c.trainingRows)} (${Math.round(c.fraction * 100)}%)`)
    .join(", ");
  const band = points.some((c) => c.rSpread !== null || c.r2Spread !== null)
    ? ` Bands: ± one standard deviation over the ${formatCount(p.block.repeats)} repeats.`
    : " One repeat, so no spread is drawn.";
  return [
    `Learning curve: held-out r (circles, solid line) and r² (squares, dashed line) when the models are trained on fewer participants — ${sizes} training rows (share of the available training rows) — scored on the same held-out participants; the dashed line marks zero.${band} A curve still rising at the right suggests more participants would help.`,
    foldsLine(p.block),
    confoundsLine(p),
    ...scoreLines(p),
    setAsideLine(ctx.spec, null),
    source(ctx),
  ].join("\n");
}

/** Caption of a prediction fit's region weights. */
export function weightsCaption(ctx: CaptionContext, p: PredictionCaptionInput): string {
  const { block } = p;
  return [
    `Region weights of the prediction model: for each of ${count(block.regions.length, "region")} the mean standardized weight over all training folds, sorted from the most positive to the most negative, with the share of training folds that gave the weight the same sign (right column). Solid dots kept their sign in every fold; faint dots flipped about half the time. Blue: positive; red: negative.`,
    predictionCaution,
    foldsLine(block),
    confoundsLine(p),
    ...scoreLines(p),
    setAsideLine(ctx.spec, null),
    source(ctx),
  ].join("\n");
}
