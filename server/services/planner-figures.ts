/**
 * The planner's power curve as a figure (POST /api/planner/figure.svg|png|txt).
 *
 * A planner answer is not part of a fit: the figure is drawn from the
 * answer to the question in the request body, computed again in the
 * planner's worker thread (same cost cap, same 422 `planner_too_costly`),
 * and laid out, outlined or rasterized in the figures' worker thread from
 * the layout the screen's `PowerCurve` draws (power-curve-layout.ts).
 *
 *   plannerFigureSvg(question, widthMm, signal)  → Promise<string>  SVG, text as outlines
 *   plannerFigurePng(question, widthMm, signal)  → Promise<Buffer>  PNG at 300 dpi with pHYs
 *   plannerFigureCaption(question, signal)       → Promise<string>  plain-text caption
 *
 * A seeded question always has the same answer, so the last few answers
 * are kept (keyed on the parsed question): the SVG, the PNG and the caption
 * of one answer cost one computation.
 */
import { formatCount, formatPercent } from "../../components/charts/number-format";
import type { PowerCurveInput } from "../../components/charts/power-curve-layout";
import type { PlannerAnswer, PlannerQuestion } from "../../contract/planner";
import type { FigureWidth } from "../../contract/views/figures";
import type { FigureInput } from "../figures/figure-svg";
import { type FigureJobs, sharedFigureJobs } from "../jobs/figure-jobs";
import { type PlannerJobs, sharedPlannerJobs } from "../jobs/planner-jobs";
import { FIGURE_DPI } from "./fit-figures";

const KEEP = 16;
const kept = new Map<string, PlannerAnswer>();

export const plannerFigureTitle = "Power against the number of participants";

export interface PlannerFigureDeps {
  planner?: PlannerJobs;
  figures?: FigureJobs;
}

/** The planner's answer to `question`, from the worker thread or the last few kept. */
export async function plannerAnswerOf(
  question: PlannerQuestion,
  signal: AbortSignal,
  planner: PlannerJobs = sharedPlannerJobs(),
): Promise<PlannerAnswer> {
  const key = JSON.stringify(question);
  const hit = kept.get(key);
  if (hit !== undefined) {
    kept.delete(key);
    kept.set(key, hit);
    return hit;
  }
  const answer = await planner.plan(question, signal);
  kept.set(key, answer);
  if (kept.size > KEEP) kept.delete(kept.keys().next().value as string);
  return answer;
}

/** What the figure draws: the formula's curve, the question's target power and the answer N. */
export function powerCurveInputOf(
  question: PlannerQuestion,
  answer: PlannerAnswer,
): PowerCurveInput {
  return {
    points: answer.curve,
    targetPower: question.power,
    answerN: answer.n,
    nLabel: "Participants (total)",
  };
}

function figureOf(question: PlannerQuestion, answer: PlannerAnswer): FigureInput {
  return {
    kind: "power-curve",
    input: powerCurveInputOf(question, answer),
    title: plannerFigureTitle,
  };
}

export async function plannerFigureSvg(
  question: PlannerQuestion,
  widthMm: FigureWidth,
  signal: AbortSignal,
  deps: PlannerFigureDeps = {},
): Promise<string> {
  const answer = await plannerAnswerOf(question, signal, deps.planner);
  return (deps.figures ?? sharedFigureJobs()).svg(figureOf(question, answer), widthMm);
}

export async function plannerFigurePng(
  question: PlannerQuestion,
  widthMm: FigureWidth,
  signal: AbortSignal,
  deps: PlannerFigureDeps = {},
): Promise<Buffer> {
  const answer = await plannerAnswerOf(question, signal, deps.planner);
  return (deps.figures ?? sharedFigureJobs()).png(figureOf(question, answer), widthMm, FIGURE_DPI);
}

export async function plannerFigureCaption(
  question: PlannerQuestion,
  signal: AbortSignal,
  deps: PlannerFigureDeps = {},
): Promise<string> {
  const answer = await plannerAnswerOf(question, signal, deps.planner);
  return `${plannerFigureTitle}\n\n${powerCurveCaption(question, answer)}\n`;
}

function decimals(value: number, places: number): string {
  return value.toFixed(places).replace(/^(-?)0\./, "$1.");
}

/**
 * The caption: the question (design, expected effect, significance level,
 * target power, reliabilities), the observable effect, the answer, what the
 * curve and its marks are, the method and, when asked for, the simulation.
 */
export function powerCurveCaption(question: PlannerQuestion, answer: PlannerAnswer): string {
  const symbol = question.design === "correlation" ? "r" : "d";
  const design =
    question.design === "correlation"
      ? "Correlation of a brain measure with a trait"
      : question.design === "two-group"
        ? `Difference between two groups${question.groupRatio !== undefined ? ` (group size ratio ${question.groupRatio})` : ""}`
        : "Effect across the group (one sample)";
  const reliabilities = [
    question.reliabilityBrain !== undefined
      ? `brain measure ${decimals(question.reliabilityBrain, 2)}`
      : null,
    question.design === "correlation" && question.reliabilityTrait !== undefined
      ? `trait ${decimals(question.reliabilityTrait, 2)}`
      : null,
  ].filter((s): s is string => s !== null);
  const sorted = answer.curve.map((p) => p.n).sort((a, b) => a - b);
  const target = formatPercent(question.power);
  const lines = [
    `${design}: expected true effect ${symbol} = ${question.effect}; significance level ${decimals(question.alpha, 2)} (two-sided); target power ${target}.`,
    `${reliabilities.length > 0 ? `Reliability: ${reliabilities.join(", ")}. ` : ""}Observable effect through these measures: ${symbol} = ${answer.observableEffect.toFixed(3)}.`,
    `Answer: N = ${formatCount(answer.n)} participants in total${answer.nPerGroup ? ` (${answer.nPerGroup[0]} + ${answer.nPerGroup[1]})` : ""} reach ${target} power.`,
    `Drawn: power at ${sorted.length} planned study size${sorted.length === 1 ? "" : "s"} from N = ${formatCount(sorted[0])} to N = ${formatCount(sorted[sorted.length - 1])} (points joined by a line); dashed lines mark the target power and the answer N.`,
    `Method: ${answer.method}.`,
  ];
  if (answer.simulation) {
    const s = answer.simulation;
    lines.push(
      `Simulation (reliability ${s.reliability.toFixed(2)}, ${formatCount(s.simulations)} simulated studies per size, seed ${s.seed}): ${s.n === null ? "no simulated size reached the target power" : `N = ${formatCount(s.n)} reached the target`}; not drawn.`,
    );
  }
  return lines.join("\n");
}
