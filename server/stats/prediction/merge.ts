/**
 * Adds the partials of every outer split of a planned prediction model
 * (split.ts), in split order whatever order they arrive in, into the
 * model's output block: scores per repeat and averaged over repeats, the
 * per-participant means over repeats, the region weights and their sign
 * consistency, the penalties, the permutation p of r and R² ((b + 1)/(m + 1);
 * Phipson & Smyth 2010, Stat. Appl. Genet. Mol. Biol. 9:39) and the learning
 * curve (Hastie, Tibshirani & Friedman 2009, §7.10, Fig. 7.8).
 */
import type { PredictionBlock } from "../../../contract/prediction";
import { StatsError } from "../errors";
import { TIE_TOLERANCE } from "../rearrangements";
import type { PredictionInput } from "./cross-validate";
import { CURVE_FRACTIONS, type PredictionPlan } from "./plan";
import { meanOrNull, SCORE_SUM_LENGTH, ScoreSums, scorePairs, sdOrNull } from "./scores";
import type { PredictionPartial } from "./split";

/**
 * The output block from one partial per split (any order). Throws StatsError
 * when a split is missing or given twice. Cost O(n·repeats + splits·(p + m)).
 */
export function mergePrediction(
  plan: PredictionPlan,
  input: PredictionInput,
  partials: readonly PredictionPartial[],
): PredictionBlock {
  const { n, repeats, splits } = plan;
  const bySplit: (PredictionPartial | undefined)[] = new Array(splits.length);
  for (const partial of partials) {
    if (!(Number.isInteger(partial.split) && partial.split >= 0 && partial.split < splits.length))
      throw new StatsError(`a partial names split ${partial.split}, which is not in the plan`);
    if (bySplit[partial.split])
      throw new StatsError(`split ${partial.split} was given twice to mergePrediction`);
    bySplit[partial.split] = partial;
  }
  const missing = splits.findIndex((_, s) => bySplit[s] === undefined);
  if (missing >= 0) throw new StatsError(`split ${missing} is missing from mergePrediction`);
  const ordered = bySplit as PredictionPartial[];

  const observedSum = new Float64Array(n);
  const predictedSum = new Float64Array(n);
  const repeatObserved = Array.from({ length: repeats }, () => new Float64Array(n));
  const repeatPredicted = Array.from({ length: repeats }, () => new Float64Array(n));
  const lambdas: PredictionBlock["lambdas"] = [];
  const total = plan.permutationCount;
  const permSums = Array.from({ length: total }, () =>
    Array.from({ length: repeats }, () => new ScoreSums()),
  );
  const curveSums = CURVE_FRACTIONS.map(() =>
    Array.from({ length: repeats }, () => new ScoreSums()),
  );
  const curveRows = CURVE_FRACTIONS.map(() => Number.POSITIVE_INFINITY);
  const curveFailed = CURVE_FRACTIONS.map(() => false);

  ordered.forEach((partial, s) => {
    const split = splits[s];
    lambdas.push({ repeat: split.repeat, fold: split.fold, lambda: partial.lambda });
    for (let i = 0; i < split.held.length; i++) {
      const unit = split.held[i];
      repeatObserved[split.repeat][unit] = partial.observed[i];
      repeatPredicted[split.repeat][unit] = partial.predicted[i];
      observedSum[unit] += partial.observed[i];
      predictedSum[unit] += partial.predicted[i];
    }
    if (partial.permutationSums)
      for (let k = 0; k < total; k++)
        permSums[k][split.repeat].addFrom(partial.permutationSums, k * SCORE_SUM_LENGTH);
    partial.curve?.forEach((point, f) => {
      curveRows[f] = Math.min(curveRows[f], point.rows);
      if (point.sums === null) curveFailed[f] = true;
      else curveSums[f][split.repeat].addFrom(point.sums, 0);
    });
  });

  const perRepeat = repeatObserved.map((obs, repeat) => ({
    repeat,
    ...scorePairs(obs, repeatPredicted[repeat]),
  }));
  const r = meanOrNull(perRepeat.map((x) => x.r));
  const r2 = meanOrNull(perRepeat.map((x) => x.r2));
  const mae = meanOrNull(perRepeat.map((x) => x.mae)) ?? Number.NaN;

  const regions = input.regions.map((region, j) => {
    let weight = 0;
    for (const partial of ordered) weight += partial.weights[j];
    weight /= ordered.length;
    let same = 0;
    for (const partial of ordered) if (Math.sign(partial.weights[j]) === Math.sign(weight)) same++;
    return { region, weight, signConsistency: same / ordered.length };
  });

  let permutation: PredictionBlock["permutation"] = null;
  if (plan.inference === "permutation") {
    const permR = permSums.map((sums) => meanOrNull(sums.map((x) => x.scores().r)));
    const permR2 = permSums.map((sums) => meanOrNull(sums.map((x) => x.scores().r2)));
    permutation = {
      resamples: plan.resamples,
      pR: permutationP(permR, r),
      pR2: permutationP(permR2, r2),
    };
  }

  const learningCurve = plan.learningCurve
    ? [
        ...CURVE_FRACTIONS.map((fraction, f) => {
          const scores = curveSums[f].map((x) => (x.count > 0 ? x.scores() : null));
          const rs = curveFailed[f] ? [null] : scores.map((x) => x?.r ?? null);
          const r2s = curveFailed[f] ? [null] : scores.map((x) => x?.r2 ?? null);
          return {
            fraction,
            trainingRows: Number.isFinite(curveRows[f]) ? curveRows[f] : 0,
            r: meanOrNull(rs),
            r2: meanOrNull(r2s),
            rSpread: sdOrNull(rs),
            r2Spread: sdOrNull(r2s),
          };
        }),
        {
          fraction: 1,
          trainingRows: Math.min(...splits.map((split) => split.train.length)),
          r,
          r2,
          rSpread: sdOrNull(perRepeat.map((x) => x.r)),
          r2Spread: sdOrNull(perRepeat.map((x) => x.r2)),
        },
      ]
    : null;

  return {
    folds: plan.folds,
    repeats,
    seed: plan.seed,
    lambdaChoice: plan.lambda === null ? "inner-cv" : "fixed",
    r,
    r2,
    mae,
    spread: {
      r: sdOrNull(perRepeat.map((x) => x.r)),
      r2: sdOrNull(perRepeat.map((x) => x.r2)),
      mae: sdOrNull(perRepeat.map((x) => x.mae)),
    },
    perRepeat,
    participants: input.participants.map((participant, i) => ({
      participant,
      observed: observedSum[i] / repeats,
      predicted: predictedSum[i] / repeats,
    })),
    regions,
    lambdas,
    permutation,
    learningCurve,
  };
}

/**
 * One-sided permutation p: the share of evaluated rearrangements (the
 * identity, index 0, among them) whose statistic reaches the observed one,
 * within the engine's tie tolerance. Null when the observed statistic is.
 */
function permutationP(
  statistics: readonly (number | null)[],
  observed: number | null,
): number | null {
  if (observed === null) return null;
  const threshold = observed - Math.abs(observed) * TIE_TOLERANCE;
  let count = 1; // the identity is the observed data
  for (let k = 1; k < statistics.length; k++) {
    const t = statistics[k];
    if (t !== null && t >= threshold) count++;
  }
  return count / statistics.length;
}
