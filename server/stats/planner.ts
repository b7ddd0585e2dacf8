/**
 * Sample size and power for the next study: the formula answer from
 * server/stats/power.ts and, on request, a Monte Carlo answer from three
 * variance components at a handful of study sizes around it.
 *
 * Pure computation that can take seconds (the simulation) or tens of
 * milliseconds (the noncentral t search): it runs in the planner's worker
 * thread (server/jobs/planner-jobs.ts), never on the request thread. A
 * simulation whose draws exceed PLANNER_MAX_DRAWS is refused (StatsError
 * `planner_too_costly`, 422 with the cost in `details`) before anything is
 * drawn.
 */
import {
  PLANNER_MAX_DRAWS,
  type PlannerAnswer,
  type PlannerQuestion,
  simulationDraws,
} from "../../contract/planner";
import { StatsError } from "./errors";
import { planSampleSize } from "./power";
import { componentReliability, simulatePower } from "./power-simulation";
import { createRng } from "./rng";

const methodByDesign = {
  correlation: "Fisher z approximation for a Pearson correlation, two-sided",
  "two-group": "exact power of the two-sample t test from the noncentral t distribution, two-sided",
  "one-sample":
    "exact power of the one-sample t test from the noncentral t distribution, two-sided",
} as const;

export function planStudy(question: PlannerQuestion): PlannerAnswer {
  let reliabilityBrain = question.reliabilityBrain;
  if (question.mode === "simulation" && question.components) {
    reliabilityBrain = componentReliability(question.components, {
      sessions: question.sessions,
      trials: question.trials,
    });
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
    reliabilityBrain !== undefined || question.reliabilityTrait !== undefined
      ? "; the effect is first reduced by the measures' reliability (Spearman's attenuation)"
      : "";
  const answer: PlannerAnswer = {
    ...plan,
    method: `${methodByDesign[question.design]}${reliabilityNote}`,
  };
  if (question.mode === "simulation" && question.components) {
    const nValues = simulationSizes(
      plan.curve.map((p) => p.n),
      plan.n,
    );
    checkSimulationCost(question, nValues);
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

/** Refuses (422 `planner_too_costly`) a simulation whose random draws exceed the cap, naming the limit, the cost asked for and what would fit. */
function checkSimulationCost(question: PlannerQuestion, nValues: readonly number[]): void {
  const sessions = question.sessions ?? 1;
  const draws = simulationDraws(question.simulations, nValues, sessions);
  if (draws <= PLANNER_MAX_DRAWS) return;
  const participants = nValues.reduce((sum, n) => sum + n, 0);
  const maxSimulations = Math.floor(PLANNER_MAX_DRAWS / simulationDraws(1, nValues, sessions));
  const millions = (value: number) =>
    `${(value / 1e6).toLocaleString("en", { maximumFractionDigits: 1 })} million`;
  const remedy =
    maxSimulations >= 100
      ? `Ask for at most ${maxSimulations.toLocaleString("en")} simulated studies, or fewer sessions.`
      : "These study sizes are too large to simulate; use the formula answer.";
  throw new StatsError(
    `This simulation would take ${millions(draws)} random draws (${question.simulations.toLocaleString("en")} simulated studies × ${participants.toLocaleString("en")} participants over ${nValues.length} study sizes × (${sessions} sessions + 2)); the limit is ${millions(PLANNER_MAX_DRAWS)}. ${remedy}`,
    "planner_too_costly",
    {
      field: "simulations",
      limit: PLANNER_MAX_DRAWS,
      requested: draws,
      simulations: question.simulations,
      participants,
      sessions,
      maxSimulations,
    },
  );
}
