/**
 * The fit orchestrator: turns a model (ModelSpec) and the joined numbers
 * (FitData) into a FitResult, region by region.
 *
 * Pure and deterministic: randomness comes only from `createRng(spec.seed)`,
 * and every permutation or bootstrap pass starts a fresh generator from that
 * seed; the permutation pass draws one rearrangement for all regions (a
 * bootstrap resamples each region alone), and the same inputs give
 * byte-identical JSON. Regions keep
 * the order of `spec.regions` (or of the brain table); participants keep the
 * order of the roster.
 *
 * Participants: those set aside (for every region, or for one region) are
 * left out; then, per region, anyone with a missing value in the contrast,
 * the predictor, the group (or a group outside the two levels) or any
 * covariate is dropped (listwise deletion), and `n` reports who is left.
 * With weights "first-level-se", a participant who has a contrast value but
 * no standard error (missing or not > 0) is refused with a StatsError naming
 * the participant and the region, never dropped.
 *
 * Kinds and estimators:
 * - one-sample: ols (t test; numeric covariates are mean-centred and the
 *   intercept is the adjusted mean), rank (Wilcoxon signed-rank), huber or
 *   bisquare (robust location by M-estimation).
 * - two-group: ols (Student t, or ANCOVA with covariates), welch (no
 *   covariates), rank (Mann–Whitney; no covariates), huber or bisquare.
 * - association: ols, huber, bisquare (slope of the predictor with
 *   covariates; with `group` the group dummy is a covariate, with
 *   `interaction` the tested term is predictor × group); rank (Spearman, or
 *   partial Spearman on ranks with covariates); skipped and bend
 *   (correlations without covariates).
 * - reliability: intraclass correlations across sessions; the estimate is
 *   ICC(2,1), all six forms are reported.
 * - prediction: the trait predicted from all chosen regions together by
 *   cross-validated ridge regression (fit/prediction.ts); one `prediction`
 *   block instead of per-region rows.
 * - specification-curve: one region and one question fitted under every
 *   combination of estimators, covariate sets and exclusion rules, each an
 *   ordinary fit (fit/specification-curve.ts); `specifications`, `summary`
 *   and, with permutation, the joint test instead of per-region rows.
 * - weights "first-level-se": weighted meta-regression with τ² for one-sample,
 *   two-group and association fits with estimator ols.
 *
 * Inference: "parametric"; "permutation" (Freedman–Lane or sign flipping
 * for least squares, a generic rearrangement test for other estimators,
 * which refuses covariates); "bootstrap" (participants resampled with
 * replacement; BCa interval, percentile for skipped and bend correlations).
 * Correction over regions: none, Bonferroni, Holm, Benjamini–Hochberg, or
 * max-T (permutation only). Regions may differ in participants: every
 * region is fitted on its own, and permutation inference draws one
 * rearrangement of all participants for all regions (see permutationPass).
 *
 * Diagnostics (fits other than reliability): for every participant of every
 * region, the least-squares diagnostics of the region's design (see
 * diagnostics.ts), with flags; a sensitivity refit without the participants
 * flagged `outlier` or `influence`; the leave-one-out range of the estimate
 * (least squares, exact deletion formula).
 *
 * Throws StatsError naming the field or the region for unknown regions or
 * columns, a group level that is absent, estimators that do not fit the
 * kind, too few participants, and every method precondition. A cancelled fit
 * throws StatsError with code "cancelled".
 *
 * The stages, each in its own file under fit/: prepare.ts (the model and
 * the data checked, each region's participants), estimate.ts (each region's
 * design and estimate), diagnose.ts (participants' diagnostics, leave-one-out,
 * sensitivity), infer.ts (permutation, bootstrap, correction over regions),
 * notes.ts (the plain-words notes); reliability.ts runs a reliability fit.
 */
import type { FitData, FitResult, ModelSpec, ParticipantDiagnostics } from "../../contract/spec";
import type { Kind } from "./region-data";
import type { QrDecomposition } from "./linear-model";
import { FIT_LEVEL, type RunFitOptions, assertFinite, cancelled, inRegion } from "./fit/common";
import { diagnoseRegion } from "./fit/diagnose";
import { type RegionWork, estimateRegionWork } from "./fit/estimate";
import { bootstrapPass, correctOverRegions, permutationPass } from "./fit/infer";
import { diagnosticNotes, weightingNotes } from "./fit/notes";
import { ruleExclusionsOf } from "./fit/model-rules";
import { prepare } from "./fit/prepare";
import { runPrediction } from "./fit/prediction";
import { runReliability } from "./fit/reliability";
import { runSpecificationCurve } from "./fit/specification-curve";

export { FIT_LEVEL, type RunFitOptions } from "./fit/common";
export { NULL_HISTOGRAM_BINS } from "./fit/infer";
export { fitPreconditionProblems } from "./fit/prepare";

/**
 * Runs a fit. Cost: per region O(n·p²) for least squares and diagnostics
 * (plus O(iterations·n·p²) for M-estimation, O(n²) for the skipped
 * correlation), times (resamples + 1) with permutation or bootstrap inference.
 */
export function runFit(spec: ModelSpec, data: FitData, options: RunFitOptions = {}): FitResult {
  const { onProgress, shouldCancel } = options;
  const prep = prepare(spec, data);
  const s = prep.spec;
  if (s.kind === "reliability") return runReliability(prep, options);
  if (s.kind === "prediction") return runPrediction(prep, options);
  if (s.kind === "specification-curve") return runSpecificationCurve(prep, options);
  const kind = s.kind as Kind;
  const regionCount = prep.regionIndex.length;
  const heavy = s.inference !== "parametric";
  const progress = (done: number) => onProgress?.(Math.min(1, done));
  const notes: string[] = [];
  const works: RegionWork[] = [];
  const participants: ParticipantDiagnostics[] = [];
  const qrCache = new Map<string, QrDecomposition>();
  // Estimate and diagnose, region by region.
  prep.regionIndex.forEach((r, idx) => {
    if (shouldCancel?.()) cancelled();
    inRegion(data.regions[r], () => {
      const work = estimateRegionWork(prep, r, qrCache);
      if (work.qr) participants.push(...diagnoseRegion(prep, work));
      works.push(work);
    });
    progress(heavy ? (0.1 * (idx + 1)) / regionCount : (idx + 1) / regionCount);
  });
  // Infer: resampling, then the correction over regions.
  if (s.inference === "permutation") permutationPass(prep, works, options, notes);
  if (s.inference === "bootstrap") bootstrapPass(prep, works, options, notes);
  const regions = works.map((w) => w.result);
  correctOverRegions(regions, s.correction, notes);
  // Notes of the weights and the diagnostics.
  if (s.weights === "first-level-se") notes.push(...weightingNotes(s));
  notes.push(...diagnosticNotes());
  const result: FitResult = {
    regions,
    participants,
    notes,
    kind,
    estimator: s.estimator,
    inference: s.inference,
    correction: s.correction,
    seed: s.seed,
    level: FIT_LEVEL,
    ...ruleExclusionsOf(prep),
  };
  assertFinite(result, "result");
  progress(1);
  return result;
}
