/**
 * Sample size and power for the next study: the formula answer from
 * server/stats/power.ts and, on request, a Monte Carlo answer from three
 * variance components at a handful of study sizes around it.
 */
import type { PlannerAnswer, PlannerQuestion } from "../model/planner";
import { componentReliability, planSampleSize, simulatePower } from "../stats/power";
import { createRng } from "../stats/rng";

const methodByDesign = {
  correlation: "Fisher z approximation for a Pearson correlation, two-sided",
  "two-group": "exact power of the two-sample t test from the noncentral t distribution, two-sided",
  "one-sample": "exact power of the one-sample t test from the noncentral t distribution, two-sided",
} as const;

export function planStudy(question: PlannerQuestion): PlannerAnswer {
  let reliabilityBrain = question.reliabilityBrain;
  if (question.mode === "simulation" && question.components) {
    reliabilityBrain = componentReliability(question.components, { sessions: question.sessions, trials: question.trials });
  }
  const plan = planSampleSize({
    design: question.design,
    effect: question.effect,
    alpha: question.alpha,
    power: question.power,
    reliabilityBrain,
    reliabilityTrait: question.design === "correlation" ? question.reliabilityTrait : undefined,
    groupRatio: question.groupRatio,
  });
  const reliabilityNote =
    reliabilityBrain !== undefined || question.reliabilityTrait !== undefined ? "; the effect is first reduced by the measures' reliability (Spearman's attenuation)" : "";
  const answer: PlannerAnswer = { ...plan, method: `${methodByDesign[question.design]}${reliabilityNote}` };
  if (question.mode === "simulation" && question.components) {
    const nValues = simulationSizes(plan.curve.map((p) => p.n), plan.n);
    const result = simulatePower({
      design: question.design,
      nValues,
      effect: question.effect,
      alpha: question.alpha,
      components: question.components,
      sessions: question.sessions,
      trials: question.trials,
      groupRatio: question.groupRatio,
      simulations: question.simulations,
      rng: createRng(question.seed),
    });
    const reached = result.points.find((p) => p.power >= question.power);
    answer.simulation = {
      reliability: result.reliability,
      observableEffect: result.observableEffect,
      simulations: question.simulations,
      seed: question.seed,
      n: reached ? reached.n : null,
      points: result.points,
    };
    answer.method += `; Monte Carlo check with ${question.simulations} simulated studies per size (seed ${question.seed})`;
  }
  return answer;
}

/** Up to seven study sizes spread over the curve, always including the formula's answer. */
function simulationSizes(curveSizes: readonly number[], answer: number): number[] {
  const sizes = new Set<number>([answer]);
  const step = Math.max(1, Math.floor(curveSizes.length / 6));
  for (let i = 0; i < curveSizes.length; i += step) sizes.add(curveSizes[i]);
  return [...sizes].sort((a, b) => a - b).slice(0, 8);
}
