/**
 * Cross-validated prediction of a trait from brain regions: repeated k-fold
 * (or leave-one-out) cross-validation of a confound-regression → scaling →
 * ridge pipeline with the penalty chosen by nested cross-validation, a
 * permutation test that re-runs the whole pipeline, and a learning curve.
 *
 * Sources: out-of-sample prediction with every fitted step inside the
 * training folds (Poldrack, Huckins & Varoquaux 2020, JAMA Psychiatry
 * 77:534–540; Varoquaux et al. 2017, NeuroImage 145:166–179); confounds
 * removed within folds (Snoek, Miletić & Scholte 2019, NeuroImage
 * 184:741–760); ridge regression and its decomposition (Hastie, Tibshirani &
 * Friedman 2009, The Elements of Statistical Learning, 2nd ed., §3.4.1,
 * §7.10); the permutation test of a cross-validated score (Ojala & Garriga
 * 2010, JMLR 11:1833–1863, "test 1") with p = (b + 1)/(m + 1) (Phipson &
 * Smyth 2010, Stat. Appl. Genet. Mol. Biol. 9:39); learning curves over
 * training-set sizes (Hastie et al. §7.10, Fig. 7.8).
 */
import type { LearningCurvePoint, PredictionBlock } from "../../../contract/prediction";
import { mergePrediction } from "./merge";
import { type PredictionPlan, planPrediction, predictionSplitCount } from "./plan";
import { type PredictionPartial, predictionSplit, type SplitControl } from "./split";

export type {
  LearningCurvePoint,
  PredictionBlock,
  PredictionPartial,
  PredictionPlan,
  SplitControl,
};
export { mergePrediction, planPrediction, predictionSplit, predictionSplitCount };

export interface PredictionInput {
  participants: readonly string[];
  /** One array per region: its value for each participant (no NaN; the caller drops incomplete rows). */
  X: readonly Float64Array[];
  regions: readonly string[];
  /** The trait, one value per participant. */
  y: Float64Array;
  /** Confounds, one array per covariate (may be empty). */
  covariates: readonly Float64Array[];
  /** Names of the covariates for error messages (default "covariate 1", …). */
  covariateNames?: readonly string[];
  /** Stratifies the folds when given (null is a label of its own). */
  group?: readonly (string | null)[];
}

export interface PredictionOptions {
  /** k of k-fold (default 10) or "leave-one-out". */
  folds?: number | "leave-one-out";
  /** Partitions (default 10; 1 for leave-one-out). */
  repeats?: number;
  /** Fixed ridge penalty; otherwise chosen by inner 5-fold cross-validation over `lambdaGrid`. */
  lambda?: number;
  /** Penalties for the inner choice (default 20 values log-spaced over 10⁻³…10³ × training rows). */
  lambdaGrid?: readonly number[];
  seed: number;
  inference: "permutation" | "none";
  /** Permutations of the trait (default 1000). */
  resamples?: number;
  learningCurve: boolean;
  /**
   * Scale each region by its training SD (default true). Turned off only to
   * check the closed-form leave-one-out identity of ridge, which needs the
   * same design in every fold.
   */
  standardize?: boolean;
  onProgress?: (fraction: number) => void;
  shouldCancel?: () => boolean;
}

/**
 * Runs the prediction model. Splits come from `createRng(seed)` (outer
 * partitions first, then each fold's inner partition), learning-curve
 * subsamples from `createRng(seed + 1)`, trait permutations from
 * `createRng(seed + 2)`; the output depends only on the input and options.
 *
 * Exchangeability of the permutation test: the trait is permuted across all
 * participants while each participant keeps their regions and covariates
 * together (rows of [regions, covariates] stay intact). Under the null
 * hypothesis that the trait is unrelated to the brain values and the
 * confounds, trait values are exchangeable between participants; keeping
 * covariates with the brain values preserves their real dependence, so the
 * confound step removes as much from the regions under the null as in the
 * data, and the whole pipeline (confounds, scaling, λ choice) is re-run on
 * every permutation (Ojala & Garriga 2010, test 1). The folds (and inner
 * folds) stay fixed, so each decomposition serves every permutation.
 *
 * The model is `planPrediction` (every random draw), `predictionSplit` for
 * each outer split (independent; any thread or process) and
 * `mergePrediction` (partials added in split order).
 *
 * Cost per training set: O(n·p·r + r³) once, O(n·r·|grid|) per permutation
 * (r = min(n_train, p)), as matrix products over blocks of permutations. Throws StatsError naming the bad option or input,
 * and with code "cancelled" when `shouldCancel()` returns true.
 */
export function crossValidatedPrediction(
  input: PredictionInput,
  options: PredictionOptions,
): PredictionBlock {
  const plan = planPrediction(input, options);
  const count = predictionSplitCount(plan);
  const partials: PredictionPartial[] = [];
  for (let s = 0; s < count; s++) {
    partials.push(
      predictionSplit(plan, input, s, {
        shouldCancel: options.shouldCancel,
        onProgress: options.onProgress && ((f) => options.onProgress?.((s + f) / count)),
      }),
    );
  }
  return mergePrediction(plan, input, partials);
}
