/**
 * Power by Monte Carlo simulation from three variance components of a
 * participant's measured value (measurement noise, task design, true
 * differences), and the reliability those components imply; checked against
 * the power formulas of power.ts.
 */
import { StatsError } from "./errors";
import { studentTQuantile } from "./distributions";
import { type PowerDesign, checkQuestion, powerAt, splitTotal } from "./power";
import { type Rng, normalPairs } from "./rng";

/** Variance components of one participant's measured value. */
export interface VarianceComponents {
  /** Variance of a single trial's measurement noise within a participant. */
  measurementNoise: number;
  /** Variance that the task design adds to each session's value (session-to-session variation). */
  taskDesign: number;
  /** Variance of true differences between participants (the unit of the effect). */
  trueDifferences: number;
}

/**
 * Reliability of a participant's value averaged over S sessions of T trials,
 * from the three variance components (classical test theory; the
 * Spearman–Brown step-up over sessions):
 * σ²_true / (σ²_true + (σ²_design + σ²_noise/T) / S). Cost O(1).
 * Callers validate the components (non-negative, true differences > 0).
 */
export function componentReliability(
  components: VarianceComponents,
  options: { sessions?: number; trials?: number } = {},
): number {
  const sessions = options.sessions ?? 1;
  const trials = options.trials ?? 1;
  const { measurementNoise, taskDesign, trueDifferences } = components;
  return trueDifferences / (trueDifferences + (taskDesign + measurementNoise / trials) / sessions);
}

export interface SimulatePowerInput {
  design: PowerDesign;
  /** Total participants for each simulated study size. */
  nValues: readonly number[];
  /** True effect: r with the trait for "correlation", Cohen's d in true-difference units otherwise. */
  effect: number;
  /** Two-sided significance level. */
  alpha: number;
  components: VarianceComponents;
  /** Sessions averaged per participant (default 1). */
  sessions?: number;
  /** Trials averaged per session (default 1). */
  trials?: number;
  /** "two-group": n2/n1; a total n is split as in powerAt (default 1). */
  groupRatio?: number;
  /** Simulated studies per study size (1 to 1,000,000). */
  simulations: number;
  rng: Rng;
}

export interface SimulatedPowerPoint {
  n: number;
  /** Share of simulated studies with p < alpha. */
  power: number;
  /** Monte Carlo standard error √(power(1 − power)/simulations). */
  se: number;
  /** Power from powerAt with the same observable effect, for comparison. */
  formulaPower: number;
}

export interface SimulatePowerResult {
  /** Reliability of a participant's value implied by the components. */
  reliability: number;
  observableEffect: number;
  points: SimulatedPowerPoint[];
}

/**
 * Power by Monte Carlo simulation from three variance components.
 *
 * Model (documented, our own): participant i has a true value t_i with
 * variance σ²_true (trueDifferences). At each of S sessions the measured
 * value is m_is = t_i + a_is + ē_is, where a_is ~ N(0, σ²_design) is the
 * variation the task design adds and ē_is is the mean of T trials' noise,
 * drawn directly as N(0, σ²_noise / T) (the exact distribution of that mean).
 * The participant's value is the mean over sessions, so
 *
 *   reliability = σ²_true / (σ²_true + (σ²_design + σ²_noise/T) / S).
 *
 * The effect is in true-value units: "one-sample" t_i ~ N(d·σ_true, σ²_true);
 * "two-group" the first group's mean is d·σ_true, the second's 0;
 * "correlation" (t_i, trait_i) are bivariate normal with correlation r, the
 * trait measured without error. Each simulated study is tested two-sided at
 * alpha: one-sample t test, Student's two-sample t test, or the t test of
 * Pearson's r on n − 2 df. The power formulas (powerAt) with the observable
 * effect effect·√reliability should agree within Monte Carlo error.
 *
 * Cost: O(simulations · Σ n · S) normal draws.
 *
 * Preconditions: valid design and effect (|r| < 1), 0 < alpha < 1, finite
 * components ≥ 0 with trueDifferences > 0, integer sessions and trials ≥ 1,
 * integer simulations in [1, 1,000,000], study sizes valid for the design.
 * Throws StatsError naming the field otherwise.
 */
export function simulatePower(input: SimulatePowerInput): SimulatePowerResult {
  const { design, effect, alpha, components, simulations, rng } = input;
  const sessions = input.sessions ?? 1;
  const trials = input.trials ?? 1;
  const ratio = input.groupRatio ?? 1;
  checkQuestion({ design, effect, alpha, groupRatio: ratio }, "simulatePower");
  const { measurementNoise, taskDesign, trueDifferences } = components;
  for (const [name, value] of [
    ["measurementNoise", measurementNoise],
    ["taskDesign", taskDesign],
    ["trueDifferences", trueDifferences],
  ] as const) {
    if (!(Number.isFinite(value) && value >= 0))
      throw new StatsError(
        `simulatePower requires components.${name} to be a finite variance of at least 0 (got ${value})`,
      );
  }
  if (!(trueDifferences > 0))
    throw new StatsError(
      "simulatePower requires components.trueDifferences greater than 0 (the effect is in its units)",
    );
  if (!(Number.isInteger(sessions) && sessions >= 1))
    throw new StatsError(
      `simulatePower requires sessions to be a whole number of at least 1 (got ${sessions})`,
    );
  if (!(Number.isInteger(trials) && trials >= 1))
    throw new StatsError(
      `simulatePower requires trials to be a whole number of at least 1 (got ${trials})`,
    );
  if (!(Number.isInteger(simulations) && simulations >= 1 && simulations <= 1_000_000)) {
    throw new StatsError(
      `simulatePower requires simulations between 1 and 1000000 (got ${simulations})`,
    );
  }
  if (input.nValues.length === 0)
    throw new StatsError("simulatePower requires at least one study size in nValues");
  for (const [index, n] of input.nValues.entries()) {
    const groups = design === "two-group" ? splitTotal(n, ratio) : null;
    const minimum = design === "correlation" ? 4 : 2;
    const valid =
      Number.isInteger(n) && (groups === null ? n >= minimum : groups[0] >= 2 && groups[1] >= 2);
    if (!valid) {
      const need =
        design === "two-group"
          ? "at least two participants in each group"
          : `at least ${minimum} participants`;
      throw new StatsError(`simulatePower requires ${need} (nValues[${index}] is ${n})`);
    }
  }

  const sessionSd = Math.sqrt(taskDesign + measurementNoise / trials);
  const trueSd = Math.sqrt(trueDifferences);
  const reliability = componentReliability(input.components, { sessions, trials });
  const normal = normalPairs(rng);
  const measured = (trueValue: number): number => {
    let sum = 0;
    for (let s = 0; s < sessions; s++) sum += trueValue + sessionSd * normal();
    return sum / sessions;
  };
  const question = { design, effect, alpha, reliabilityBrain: reliability, groupRatio: ratio };

  const points: SimulatedPowerPoint[] = [];
  for (const n of input.nValues) {
    const formula = powerAt({ ...question, n });
    let rejections = 0;
    if (design === "one-sample") {
      const tc = studentTQuantile(1 - alpha / 2, n - 1);
      const mean = effect * trueSd;
      for (let sim = 0; sim < simulations; sim++) {
        let sum = 0;
        let sumSq = 0;
        for (let i = 0; i < n; i++) {
          const value = measured(mean + trueSd * normal());
          sum += value;
          sumSq += value * value;
        }
        const m = sum / n;
        const variance = (sumSq - n * m * m) / (n - 1);
        if (Math.abs(m / Math.sqrt(variance / n)) > tc) rejections++;
      }
    } else if (design === "two-group") {
      const [n1, n2] = formula.nPerGroup as [number, number];
      const tc = studentTQuantile(1 - alpha / 2, n1 + n2 - 2);
      const shift = effect * trueSd;
      for (let sim = 0; sim < simulations; sim++) {
        let s1 = 0;
        let q1 = 0;
        let s2 = 0;
        let q2 = 0;
        for (let i = 0; i < n1; i++) {
          const value = measured(shift + trueSd * normal());
          s1 += value;
          q1 += value * value;
        }
        for (let i = 0; i < n2; i++) {
          const value = measured(trueSd * normal());
          s2 += value;
          q2 += value * value;
        }
        const m1 = s1 / n1;
        const m2 = s2 / n2;
        const pooled = (q1 - n1 * m1 * m1 + (q2 - n2 * m2 * m2)) / (n1 + n2 - 2);
        if (Math.abs((m1 - m2) / Math.sqrt(pooled * (1 / n1 + 1 / n2))) > tc) rejections++;
      }
    } else {
      const tc = studentTQuantile(1 - alpha / 2, n - 2);
      const residualSd = Math.sqrt(1 - effect * effect);
      for (let sim = 0; sim < simulations; sim++) {
        let sx = 0;
        let sy = 0;
        let sxx = 0;
        let syy = 0;
        let sxy = 0;
        for (let i = 0; i < n; i++) {
          const trait = normal();
          const trueZ = effect * trait + residualSd * normal();
          const value = measured(trueSd * trueZ);
          sx += value;
          sy += trait;
          sxx += value * value;
          syy += trait * trait;
          sxy += value * trait;
        }
        const cxy = sxy - (sx * sy) / n;
        const r = cxy / Math.sqrt((sxx - (sx * sx) / n) * (syy - (sy * sy) / n));
        if (Math.abs((r * Math.sqrt(n - 2)) / Math.sqrt(1 - r * r)) > tc) rejections++;
      }
    }
    const power = rejections / simulations;
    points.push({
      n,
      power,
      se: Math.sqrt((power * (1 - power)) / simulations),
      formulaPower: formula.power,
    });
  }
  return { reliability, observableEffect: effect * Math.sqrt(reliability), points };
}
