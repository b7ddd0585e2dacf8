/**
 * Everything of one outer split of a planned prediction model (plan.ts): the
 * pipeline fitted on the observed trait (held-out predictions, penalty,
 * ridge weights), its score sums under every permutation of the trait
 * (Ojala & Garriga 2010, JMLR 11:1833–1863, test 1: the whole pipeline re-run
 * per permutation) and its learning-curve fits. The result is a plain
 * partial (numbers and typed arrays) that `mergePrediction` adds up in split
 * order, so splits can be computed in any order, on any thread or process.
 */
import { StatsError } from "../errors";
import { type BlockFit, fitFoldBlock } from "./block-fit";
import type { PredictionInput } from "./cross-validate";
import { prepareFold } from "./fold-pipeline";
import { type PredictionPlan, planData } from "./plan";
import { ridgeWeights } from "./ridge";
import { SCORE_SUM_LENGTH, ScoreSums } from "./scores";
import { fitSingle } from "./single-fit";

/** Traits fitted together per block of permutations. */
export const PERMUTATION_BLOCK = 32;

/** What one outer split contributes to the model. */
export interface PredictionPartial {
  /** Index of the split in the plan. */
  split: number;
  /** Penalty of the observed fit. */
  lambda: number;
  /** Held-out trait and predictions of the observed fit, in the split's held order. */
  observed: Float64Array;
  predicted: Float64Array;
  /** Ridge weights on the scaled regions (observed fit). */
  weights: Float64Array;
  /** Score sums of the held-out pairs per evaluated permutation (SCORE_SUM_LENGTH each), or null without inference. */
  permutationSums: Float64Array | null;
  /** Per learning-curve fraction: training rows and held-out score sums (null when unavailable); null without a curve. */
  curve: { rows: number; sums: Float64Array | null }[] | null;
}

/** Optional controls of `predictionSplit`. */
export interface SplitControl {
  /** Fraction of the split done (0…1). */
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
  /** Filled with the seconds spent preparing, on permutations and on the learning curve. */
  timings?: { prepare: number; permutations: number; learningCurve: number };
}

function sumsOf(fit: BlockFit, b: number, out: Float64Array, offset: number): void {
  const sums = new ScoreSums();
  const { count, observed, predicted } = fit;
  const rows = observed.length / count;
  for (let i = 0; i < rows; i++) sums.add(observed[i * count + b], predicted[i * count + b]);
  sums.writeTo(out, offset);
}

/**
 * Computes split `s` of the plan on the input it was planned from. Throws
 * StatsError naming a region constant (or explained by the confounds) in a
 * training fold, and with code "cancelled" when `shouldCancel()` returns true.
 * Cost: 1 + 5 prepared training sets (Gram matrix, tridiagonal reduction,
 * M and W), the pipeline on the observed trait and every permutation, and
 * 4 × 6 lighter learning-curve fits. Throws StatsError when `input` is not
 * shaped as the plan (participants, regions).
 */
export function predictionSplit(
  plan: PredictionPlan,
  input: PredictionInput,
  s: number,
  control: SplitControl = {},
): PredictionPartial {
  if (!(Number.isInteger(s) && s >= 0 && s < plan.splits.length))
    throw new StatsError(`split ${s} is not in the plan (0 to ${plan.splits.length - 1})`);
  if (input.y.length !== plan.n || input.X.length !== plan.p)
    throw new StatsError(
      `predictionSplit was given ${input.y.length} participants × ${input.X.length} regions for a plan of ${plan.n} × ${plan.p}`,
    );
  const clock = () => performance.now() / 1e3;
  const cancel = () => {
    if (control.shouldCancel?.()) throw new StatsError("the prediction was cancelled", "cancelled");
  };
  cancel();
  const { n } = plan;
  const data = planData(plan, input);
  const split = plan.splits[s];
  const fitOptions = {
    standardize: plan.standardize,
    lambda: plan.lambda ?? undefined,
    lambdaGrid: plan.lambdaGrid ?? undefined,
  };
  let start = clock();
  const fold = prepareFold(data, split.train, split.held, {
    ...fitOptions,
    innerSplits: plan.inner[s],
  });
  const observedFit = fitFoldBlock(fold, input.y, n, 1);
  const partial: PredictionPartial = {
    split: s,
    lambda: observedFit.lambdas[0],
    observed: observedFit.observed,
    predicted: observedFit.predicted,
    weights: ridgeWeights(fold.outer.basis, observedFit.g, observedFit.lambdas[0]),
    permutationSums: null,
    curve: null,
  };
  const prepared = clock();
  if (control.timings) control.timings.prepare += prepared - start;
  start = prepared;

  const total = plan.permutationCount;
  if (plan.inference === "permutation") {
    const sums = new Float64Array(total * SCORE_SUM_LENGTH);
    const traits = new Float64Array(PERMUTATION_BLOCK * n);
    const { y } = input;
    const orders = plan.permutations;
    for (let first = 0; first < total; first += PERMUTATION_BLOCK) {
      cancel();
      control.onProgress?.(first / total);
      const count = Math.min(PERMUTATION_BLOCK, total - first);
      for (let b = 0; b < count; b++) {
        const order = (first + b) * n;
        for (let i = 0; i < n; i++) traits[b * n + i] = y[orders[order + i]];
      }
      const fit = fitFoldBlock(fold, traits.subarray(0, count * n), n, count);
      for (let b = 0; b < count; b++) sumsOf(fit, b, sums, (first + b) * SCORE_SUM_LENGTH);
    }
    partial.permutationSums = sums;
  }
  const permuted = clock();
  if (control.timings) control.timings.permutations += permuted - start;
  start = permuted;

  if (plan.curve) {
    partial.curve = plan.curve[s].map((planned) => {
      cancel();
      if (planned.train === null) return { rows: planned.rows, sums: null };
      let fit: ReturnType<typeof fitSingle>;
      try {
        fit = fitSingle(data, planned.train, split.held, input.y, {
          standardize: plan.standardize,
          lambda: plan.lambda,
          lambdaGrid: plan.lambdaGrid,
          innerSplits: planned.inner,
        });
      } catch (error) {
        if (error instanceof StatsError && error.code === "stats_precondition")
          return { rows: planned.rows, sums: null };
        throw error;
      }
      const sums = new Float64Array(SCORE_SUM_LENGTH);
      const pairs = new ScoreSums();
      for (let i = 0; i < fit.observed.length; i++) pairs.add(fit.observed[i], fit.predicted[i]);
      pairs.writeTo(sums, 0);
      return { rows: planned.rows, sums };
    });
  }
  if (control.timings) control.timings.learningCurve += clock() - start;
  control.onProgress?.(1);
  return partial;
}
