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
import { StatsError } from "../errors";
import { createRearranger, shuffleInPlace, TIE_TOLERANCE } from "../rearrangements";
import { createRng } from "../rng";
import { fitFold, minimumTrainingRows, type PredictionData, prepareFold } from "./fold-pipeline";
import { crossValidationSplits, type Split } from "./folds";
import type { LearningCurvePoint, PredictionBlock } from "../../../contract/prediction";
import { meanOrNull, ScoreSums, scorePairs, sdOrNull } from "./scores";

export type { LearningCurvePoint, PredictionBlock };
import { validatePrediction } from "./validate";

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

const FRACTIONS = [0.2, 0.4, 0.6, 0.8];

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
 * Cost per training set: O(n·p·r + r³) once, O(n·r·|grid|) per permutation
 * (r = min(n_train, p)). Throws StatsError naming the bad option or input,
 * and with code "cancelled" when `shouldCancel()` returns true.
 */
export function crossValidatedPrediction(
  input: PredictionInput,
  options: PredictionOptions,
): PredictionBlock {
  const checked = validatePrediction(input, options);
  const { n, folds, repeats, resamples, standardize } = checked;
  const data: PredictionData = {
    n,
    x: input.X,
    regions: input.regions,
    covariates: input.covariates,
    covariateNames: checked.covariateNames,
  };
  const y = input.y;
  const p = input.X.length;
  const splitRng = createRng(options.seed);
  const splits = crossValidationSplits({
    n,
    folds,
    repeats,
    group: folds === "leave-one-out" ? undefined : input.group,
    rng: splitRng,
  });
  const curveRng = createRng(options.seed + 1);
  const permutations =
    options.inference === "permutation" ? drawPermutations(n, resamples, options.seed + 2) : [];
  const total = permutations.length;

  const observedSum = new Float64Array(n);
  const predictedSum = new Float64Array(n);
  const repeatObserved = Array.from({ length: repeats }, () => new Float64Array(n));
  const repeatPredicted = Array.from({ length: repeats }, () => new Float64Array(n));
  const weightRows: Float64Array[] = [];
  const lambdas: PredictionBlock["lambdas"] = [];
  // permutation sums per (permutation, repeat); index 0 is the identity.
  const permSums = Array.from({ length: total }, () =>
    Array.from({ length: repeats }, () => new ScoreSums()),
  );
  const curveSums = FRACTIONS.map(() => Array.from({ length: repeats }, () => new ScoreSums()));
  const curveRows = FRACTIONS.map(() => Number.POSITIVE_INFINITY);
  const curveFailed = FRACTIONS.map(() => false);
  const permuted = new Float64Array(n);

  const fitOptions = {
    standardize,
    lambda: options.lambda,
    lambdaGrid: options.lambdaGrid,
  };
  for (let s = 0; s < splits.length; s++) {
    checkCancel(options);
    const split = splits[s];
    const fold = prepareFold(data, split.train, split.held, { ...fitOptions, rng: splitRng });
    const fit = fitFold(fold, y, { weights: true });
    lambdas.push({ repeat: split.repeat, fold: split.fold, lambda: fit.lambda });
    weightRows.push(fit.weights ?? new Float64Array(p));
    for (let i = 0; i < split.held.length; i++) {
      const unit = split.held[i];
      repeatObserved[split.repeat][unit] = fit.observed[i];
      repeatPredicted[split.repeat][unit] = fit.predicted[i];
      observedSum[unit] += fit.observed[i];
      predictedSum[unit] += fit.predicted[i];
    }
    for (let k = 0; k < total; k++) {
      if (k % 25 === 0) {
        checkCancel(options);
        options.onProgress?.((s + k / Math.max(total, 1)) / splits.length);
      }
      const order = permutations[k];
      for (let i = 0; i < n; i++) permuted[i] = y[order[i]];
      const permFit = fitFold(fold, permuted);
      const sums = permSums[k][split.repeat];
      for (let i = 0; i < split.held.length; i++)
        sums.add(permFit.observed[i], permFit.predicted[i]);
    }
    if (options.learningCurve) {
      learningCurveFold(data, y, split, fitOptions, curveRng, (f, rows, fitted) => {
        curveRows[f] = Math.min(curveRows[f], rows);
        if (fitted === null) {
          curveFailed[f] = true;
          return;
        }
        for (let i = 0; i < fitted.observed.length; i++)
          curveSums[f][split.repeat].add(fitted.observed[i], fitted.predicted[i]);
      });
    }
    options.onProgress?.((s + 1) / splits.length);
  }

  const perRepeat = repeatObserved.map((obs, repeat) => ({
    repeat,
    ...scorePairs(obs, repeatPredicted[repeat]),
  }));
  const r = meanOrNull(perRepeat.map((x) => x.r));
  const r2 = meanOrNull(perRepeat.map((x) => x.r2));
  const mae = meanOrNull(perRepeat.map((x) => x.mae)) ?? Number.NaN;

  const regions = input.regions.map((region, j) => {
    let weight = 0;
    for (const row of weightRows) weight += row[j];
    weight /= weightRows.length;
    let same = 0;
    for (const row of weightRows) if (Math.sign(row[j]) === Math.sign(weight)) same++;
    return { region, weight, signConsistency: same / weightRows.length };
  });

  let permutation: PredictionBlock["permutation"] = null;
  if (options.inference === "permutation") {
    const permR = permSums.map((sums) => meanOrNull(sums.map((x) => x.scores().r)));
    const permR2 = permSums.map((sums) => meanOrNull(sums.map((x) => x.scores().r2)));
    permutation = {
      resamples,
      pR: permutationP(permR, r),
      pR2: permutationP(permR2, r2),
    };
  }

  const learningCurve = options.learningCurve
    ? [
        ...FRACTIONS.map((fraction, f) => {
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
          trainingRows: Math.min(...splits.map((s) => s.train.length)),
          r,
          r2,
          rSpread: sdOrNull(perRepeat.map((x) => x.r)),
          r2Spread: sdOrNull(perRepeat.map((x) => x.r2)),
        },
      ]
    : null;

  return {
    folds,
    repeats,
    seed: options.seed,
    lambdaChoice: options.lambda === undefined ? "inner-cv" : "fixed",
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

/** The identity followed by `resamples` seeded permutations (all n! when fewer). */
function drawPermutations(n: number, resamples: number, seed: number): Int32Array[] {
  const walk = createRearranger({ kind: "permutations", n, resamples, rng: createRng(seed) });
  const orders: Int32Array[] = [];
  for (let k = 0; k < walk.total; k++) {
    walk.next();
    orders.push(Int32Array.from(walk.order));
  }
  return orders;
}

/**
 * Learning curve of one split: the pipeline refitted on seeded subsamples of
 * 20/40/60/80 % of the training rows, each predicting the same held-out rows.
 * A fraction too small for the pipeline (or whose subsample makes a region
 * constant) is reported as unavailable rather than failing the model.
 */
function learningCurveFold(
  data: PredictionData,
  y: Float64Array,
  split: Split,
  fitOptions: { standardize: boolean; lambda?: number; lambdaGrid?: readonly number[] },
  rng: ReturnType<typeof createRng>,
  report: (
    f: number,
    rows: number,
    fitted: { observed: Float64Array; predicted: Float64Array } | null,
  ) => void,
): void {
  const minimum = minimumTrainingRows(data.covariates.length, fitOptions.lambda === undefined);
  FRACTIONS.forEach((fraction, f) => {
    const rows = Math.round(fraction * split.train.length);
    const order = Int32Array.from(split.train);
    shuffleInPlace(order, rng);
    if (rows < minimum) {
      report(f, rows, null);
      return;
    }
    const train = order.slice(0, rows).sort();
    try {
      const fold = prepareFold(data, train, split.held, { ...fitOptions, rng });
      report(f, rows, fitFold(fold, y));
    } catch (error) {
      if (error instanceof StatsError && error.code === "stats_precondition") report(f, rows, null);
      else throw error;
    }
  });
}

function checkCancel(options: PredictionOptions): void {
  if (options.shouldCancel?.()) throw new StatsError("the prediction was cancelled", "cancelled");
}
