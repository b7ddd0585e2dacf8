/**
 * Sample size and power for the next study, with the reliability of the
 * measures taken into account: unreliable measures shrink the effect that can
 * be observed, so the same true effect needs more participants. Power by
 * simulation from variance components is in power-simulation.ts.
 */
import { StatsError } from "./errors";
import {
  noncentralTCdf,
  noncentralTUpper,
  normalCdf,
  normalQuantile,
  studentTQuantile,
} from "./distributions";

export type PowerDesign = "correlation" | "two-group" | "one-sample";

export interface PowerQuestion {
  design: PowerDesign;
  /** True effect: Pearson r for "correlation", Cohen's d (standardised mean difference) otherwise. */
  effect: number;
  /** Two-sided significance level, 0 < alpha < 1. */
  alpha: number;
  /** Reliability of the brain measure, 0 < rel ≤ 1 (default 1). */
  reliabilityBrain?: number;
  /** Reliability of the trait measure, 0 < rel ≤ 1 (default 1); used by "correlation" only. */
  reliabilityTrait?: number;
  /** "two-group": size of the second group relative to the first, n2 = ⌈ratio · n1⌉ (default 1). */
  groupRatio?: number;
}

export interface PlanSampleSizeInput extends PowerQuestion {
  /** Target power, 0 < power < 1. */
  power: number;
}

export interface PowerPoint {
  /** Total participants. */
  n: number;
  power: number;
}

export interface PlanSampleSizeResult {
  /** Total participants needed. */
  n: number;
  /** "two-group": [first group, second group]. */
  nPerGroup?: [number, number];
  /** The effect that can be observed through the unreliable measures. */
  observableEffect: number;
  /** Power against total participants, from the smallest valid study to about twice the answer. */
  curve: PowerPoint[];
}

export interface PowerAtInput extends PowerQuestion {
  /** Total participants; for "two-group" split by groupRatio unless nPerGroup is given. */
  n: number;
  /** "two-group": explicit group sizes (override n). */
  nPerGroup?: readonly [number, number];
}

export interface PowerAtResult {
  power: number;
  observableEffect: number;
  nPerGroup?: [number, number];
}

/** Largest study the planner searches (total participants). */
export const MAX_PLANNED_PARTICIPANTS = 10_000_000;

/** A power question checked, with the observable effect (the true effect shrunk by the reliabilities). */
export interface CheckedQuestion {
  design: PowerDesign;
  observable: number;
  alpha: number;
  ratio: number;
}

/** Checks a power question's fields (StatsError naming the field and `name`) and shrinks its effect by the reliabilities. Cost O(1). */
export function checkQuestion(input: PowerQuestion, name: string): CheckedQuestion {
  const { design, effect, alpha } = input;
  if (design !== "correlation" && design !== "two-group" && design !== "one-sample") {
    throw new StatsError(
      `${name} requires design "correlation", "two-group" or "one-sample" (got ${String(design)})`,
    );
  }
  if (!Number.isFinite(effect) || effect === 0)
    throw new StatsError(`${name} requires a non-zero finite effect (got ${effect})`);
  if (design === "correlation" && !(Math.abs(effect) < 1))
    throw new StatsError(`${name} requires a correlation effect between −1 and 1 (got ${effect})`);
  if (!(alpha > 0 && alpha < 1))
    throw new StatsError(`${name} requires alpha between 0 and 1 (got ${alpha})`);
  const relBrain = input.reliabilityBrain ?? 1;
  const relTrait = input.reliabilityTrait ?? 1;
  if (!(relBrain > 0 && relBrain <= 1))
    throw new StatsError(
      `${name} requires reliabilityBrain greater than 0 and at most 1 (got ${relBrain})`,
    );
  if (!(relTrait > 0 && relTrait <= 1))
    throw new StatsError(
      `${name} requires reliabilityTrait greater than 0 and at most 1 (got ${relTrait})`,
    );
  const ratio = input.groupRatio ?? 1;
  if (!(Number.isFinite(ratio) && ratio > 0))
    throw new StatsError(`${name} requires a positive groupRatio (got ${ratio})`);
  const observable =
    design === "correlation"
      ? effect * Math.sqrt(relBrain * relTrait)
      : effect * Math.sqrt(relBrain);
  return { design, observable, alpha, ratio };
}

/** Second group size for a first group of n1: ⌈ratio · n1⌉ (guarding against rounding like 1.1 · 10 = 11.000000000000002). */
function secondGroup(n1: number, ratio: number): number {
  return Math.max(1, Math.ceil(ratio * n1 - 1e-9));
}

/** Fisher z power of the two-sided test of ρ = 0 (Cohen 1988, ch. 3). */
function correlationPower(r: number, n: number, alpha: number): number {
  const shift = Math.abs(Math.atanh(r)) * Math.sqrt(n - 3);
  const zc = normalQuantile(1 - alpha / 2);
  return normalCdf(shift - zc) + normalCdf(-shift - zc);
}

/** Exact power of a two-sided t test: P(|T| > t_c) with T noncentral t(df, δ). */
function tTestPower(df: number, ncp: number, alpha: number): number {
  const tc = studentTQuantile(1 - alpha / 2, df);
  const upper = noncentralTUpper(tc, df, ncp);
  const lower = noncentralTCdf(-tc, df, ncp);
  return Math.min(1, Math.max(0, upper + lower));
}

function twoGroupPower(d: number, n1: number, n2: number, alpha: number): number {
  return tTestPower(n1 + n2 - 2, Math.abs(d) * Math.sqrt((n1 * n2) / (n1 + n2)), alpha);
}

function oneSamplePower(d: number, n: number, alpha: number): number {
  return tTestPower(n - 1, Math.abs(d) * Math.sqrt(n), alpha);
}

/** A total of n split into two groups with n2/n1 ≈ ratio: n1 = round(n/(1 + ratio)). */
export function splitTotal(n: number, ratio: number): [number, number] {
  const n1 = Math.round(n / (1 + ratio));
  return [n1, n - n1];
}

/**
 * Power of a planned study of n participants.
 *
 * - "correlation": two-sided test of ρ = 0 by Fisher's z, power
 *   Φ(|atanh ρ_obs|·√(n−3) − z_{1−α/2}) + Φ(−|atanh ρ_obs|·√(n−3) − z_{1−α/2})
 *   (Cohen 1988, Statistical Power Analysis for the Behavioral Sciences,
 *   2nd ed., ch. 3), with the observable ρ_obs = ρ·√(rel_brain·rel_trait)
 *   (Spearman 1904).
 * - "two-group": Student's two-sample t test, exact power from the noncentral
 *   t distribution with df = n1 + n2 − 2 and δ = d_obs·√(n1 n2/(n1 + n2))
 *   (Cohen 1988, ch. 2), d_obs = d·√rel_brain.
 * - "one-sample": one-sample t test, noncentral t with df = n − 1 and
 *   δ = d_obs·√n.
 *
 * Cost: O(1) for correlation; two noncentral t evaluations (about 3,000
 * normal integrand evaluations) for the t designs.
 *
 * Preconditions: valid design, non-zero finite effect (|r| < 1), 0 < alpha < 1,
 * reliabilities in (0, 1], positive groupRatio, an integer n of at least 4
 * (correlation), 2 (one-sample) or groups of at least 2 each (two-group).
 * Throws StatsError naming the field otherwise.
 */
export function powerAt(input: PowerAtInput): PowerAtResult {
  const q = checkQuestion(input, "powerAt");
  if (q.design === "two-group") {
    const groups = input.nPerGroup ?? splitTotal(input.n, q.ratio);
    const [n1, n2] = groups;
    if (!(Number.isInteger(n1) && Number.isInteger(n2) && n1 >= 2 && n2 >= 2)) {
      throw new StatsError(
        `powerAt requires at least two participants in each group (got ${n1} and ${n2})`,
      );
    }
    return {
      power: twoGroupPower(q.observable, n1, n2, q.alpha),
      observableEffect: q.observable,
      nPerGroup: [n1, n2],
    };
  }
  const n = input.n;
  const minimum = q.design === "correlation" ? 4 : 2;
  if (!(Number.isInteger(n) && n >= minimum))
    throw new StatsError(
      `powerAt requires n of at least ${minimum} participants for ${q.design} (got ${n})`,
    );
  const power =
    q.design === "correlation"
      ? correlationPower(q.observable, n, q.alpha)
      : oneSamplePower(q.observable, n, q.alpha);
  return { power, observableEffect: q.observable };
}

/** Smallest integer m ≥ lo with ok(m), for a monotone predicate; StatsError beyond max. */
function smallestSatisfying(
  ok: (m: number) => boolean,
  lo: number,
  max: number,
  name: string,
): number {
  if (ok(lo)) return lo;
  let bad = lo;
  let good = lo * 2;
  while (!ok(good)) {
    bad = good;
    if (good >= max) {
      throw new StatsError(
        `${name} requires an effect large enough to reach the target power with at most ${MAX_PLANNED_PARTICIPANTS} participants`,
      );
    }
    good = Math.min(max, good * 2);
  }
  while (good - bad > 1) {
    const mid = Math.floor((bad + good) / 2);
    if (ok(mid)) good = mid;
    else bad = mid;
  }
  return good;
}

/** About `count` integers from lo to hi, always including `must`. */
function grid(lo: number, hi: number, must: number, count: number): number[] {
  const values = new Set<number>([lo, must, hi]);
  const step = (hi - lo) / (count - 1);
  for (let i = 0; i < count; i++) values.add(Math.round(lo + i * step));
  return [...values].filter((v) => v >= lo && v <= hi).sort((a, b) => a - b);
}

const CURVE_POINTS = 30;

/**
 * Sample size for a target power (two-sided test), with the observable effect
 * reduced by unreliable measures.
 *
 * - "correlation": n = ⌈((z_{1−α/2} + z_{power}) / atanh|ρ_obs|)² + 3⌉
 *   (Fisher z; Cohen 1988, ch. 3), ρ_obs = ρ·√(rel_brain·rel_trait).
 * - "two-group": smallest first group n1 (second group ⌈ratio·n1⌉) whose exact
 *   noncentral t power reaches the target (Cohen 1988, ch. 2), d_obs = d·√rel_brain.
 * - "one-sample": smallest n whose exact noncentral t power reaches the target.
 *
 * The curve gives power (by powerAt's formulas) at about 30 study sizes from
 * the smallest valid study to about twice the answer.
 *
 * Cost: O(1) for correlation plus the curve; about 25 + 30 power evaluations
 * (each two noncentral t integrals) for the t designs, a few milliseconds.
 *
 * Preconditions: those of powerAt, and 0 < power < 1. Throws StatsError when
 * more than MAX_PLANNED_PARTICIPANTS participants would be needed.
 */
export function planSampleSize(input: PlanSampleSizeInput): PlanSampleSizeResult {
  const q = checkQuestion(input, "planSampleSize");
  const target = input.power;
  if (!(target > 0 && target < 1))
    throw new StatsError(`planSampleSize requires a target power between 0 and 1 (got ${target})`);

  if (q.design === "correlation") {
    const zSum = normalQuantile(1 - q.alpha / 2) + normalQuantile(target);
    const exact = (zSum / Math.atanh(Math.abs(q.observable))) ** 2 + 3;
    if (!(exact <= MAX_PLANNED_PARTICIPANTS)) {
      throw new StatsError(
        `planSampleSize requires an effect large enough to reach the target power with at most ${MAX_PLANNED_PARTICIPANTS} participants`,
      );
    }
    const n = Math.max(4, Math.ceil(exact - 1e-9));
    const curve = grid(4, Math.max(2 * n, 14), n, CURVE_POINTS).map((m) => ({
      n: m,
      power: correlationPower(q.observable, m, q.alpha),
    }));
    return { n, observableEffect: q.observable, curve };
  }

  if (q.design === "one-sample") {
    const n = smallestSatisfying(
      (m) => oneSamplePower(q.observable, m, q.alpha) >= target,
      2,
      MAX_PLANNED_PARTICIPANTS,
      "planSampleSize",
    );
    const curve = grid(2, Math.max(2 * n, 12), n, CURVE_POINTS).map((m) => ({
      n: m,
      power: oneSamplePower(q.observable, m, q.alpha),
    }));
    return { n, observableEffect: q.observable, curve };
  }

  // Two groups: search over the first group; the second follows the ratio.
  let firstMin = 2;
  while (secondGroup(firstMin, q.ratio) < 2) firstMin++;
  const maxFirst = Math.max(firstMin, Math.floor(MAX_PLANNED_PARTICIPANTS / (1 + q.ratio)));
  const n1 = smallestSatisfying(
    (m) => twoGroupPower(q.observable, m, secondGroup(m, q.ratio), q.alpha) >= target,
    firstMin,
    maxFirst,
    "planSampleSize",
  );
  const n2 = secondGroup(n1, q.ratio);
  const curve = grid(firstMin, Math.max(2 * n1, firstMin + 10), n1, CURVE_POINTS).map((m) => {
    const m2 = secondGroup(m, q.ratio);
    return { n: m + m2, power: twoGroupPower(q.observable, m, m2, q.alpha) };
  });
  return { n: n1 + n2, nPerGroup: [n1, n2], observableEffect: q.observable, curve };
}
