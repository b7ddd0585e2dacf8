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
import type {
  FitData,
  FitResult,
  ModelSpec,
  ParticipantDiagnostics,
  RegionResult,
} from "../../contract/spec";
import { StatsError } from "./errors";
import type { Kind } from "./region-data";
import type { QrDecomposition } from "./linear-model";
import type { RearrangementChunk } from "./permutation";
import { FIT_LEVEL, type RunFitOptions, assertFinite, cancelled, inRegion } from "./fit/common";
import { diagnoseRegion } from "./fit/diagnose";
import { type ParticipantRows, assertFiniteRows, objectRows } from "./fit/participant-rows";
import { type RegionWork, estimateRegionWork, regionDesign } from "./fit/estimate";
import {
  type LinearTestBasis,
  bootstrapMethod,
  bootstrapRegion,
  correctOverRegions,
  linearTestBasis,
  mergedPermutationPass,
  permutationPass,
} from "./fit/infer";
import { bootstrapNote, diagnosticNotes, weightingNotes } from "./fit/notes";
import { ruleExclusionsOf } from "./fit/model-rules";
import { type Prepared, prepare } from "./fit/prepare";
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
  const { participants, sink } = gathering();
  const { regions, ...rest } = runFitByRegion(spec, data, options, sink);
  return { regions, participants, ...rest };
}

/**
 * Receives a fit's participants' rows one region at a time, in the order of
 * the result's regions (`position` is the index there); a region without
 * diagnostics gets none.
 */
export type RegionRowsSink = (position: number, region: string, rows: ParticipantRows) => void;

/** A sink that gathers every region's rows, in order, into `participants`. */
function gathering(): { participants: ParticipantDiagnostics[]; sink: RegionRowsSink } {
  const participants: ParticipantDiagnostics[] = [];
  return {
    participants,
    sink: (_position, _region, rows) => {
      for (let i = 0; i < rows.n; i++) participants.push(rows.row(i));
    },
  };
}

/**
 * `runFit`, with the participants' rows handed to `sink` region by region as
 * they are computed (before the test) instead of gathered into the result,
 * so a fit of many participants × many regions never holds all its rows at
 * once. The same numbers as `runFit`; the result has no `participants`.
 */
export function runFitByRegion(
  spec: ModelSpec,
  data: FitData,
  options: RunFitOptions,
  sink: RegionRowsSink,
): FitSummary {
  const { onProgress } = options;
  const prep = prepare(spec, data);
  const s = prep.spec;
  const whole = runWithoutDiagnostics(prep, options);
  if (whole) {
    const { participants, ...rest } = whole;
    rest.regions.forEach((region, k) => {
      sink(
        k,
        region.region,
        objectRows(
          region.region,
          participants.filter((d) => d.region === region.region),
        ),
      );
    });
    return rest;
  }
  const notes: string[] = [];
  // Infer: resampling, then the correction over regions. A permutation test rearranges every
  // region at once, so it keeps the regions' designs and values; the bootstrap resamples each
  // region on its own, right after it is diagnosed, so a bootstrap fit, like a parametric one,
  // keeps only the results (at 20,000 participants × 400 regions the designs and values would
  // take ~0.8 GB).
  const permutation = s.inference === "permutation";
  const { works, results } = estimateAndDiagnose(prep, options, sink, {
    keepWorks: permutation,
    perRegion: s.inference === "bootstrap" ? (work) => bootstrapRegion(prep, work) : undefined,
  });
  if (permutation) permutationPass(prep, works, options, notes);
  if (s.inference === "bootstrap") notes.push(bootstrapNote(bootstrapMethod(s)));
  const result = summaryOf(s, results, notes, ruleExclusionsOf(prep));
  assertFinite(result, "result");
  onProgress?.(1);
  return result;
}

/** A fit of a kind without participants' diagnostics (its `participants` empty), run whole; null for the other kinds. */
function runWithoutDiagnostics(prep: Prepared, options: RunFitOptions): FitResult | null {
  switch (prep.spec.kind) {
    case "reliability":
      return runReliability(prep, options);
    case "prediction":
      return runPrediction(prep, options);
    case "specification-curve":
      return runSpecificationCurve(prep, options);
    default:
      return null;
  }
}

/** A fit's result without its participants' rows (what a fit stores besides its region rows). */
export type FitSummary = Omit<FitResult, "participants" | "regions" | "notes"> & {
  regions: RegionResult[];
  notes: string[];
};

/**
 * Stages 2 and 4 (estimate, diagnose), region by region: the regions'
 * results, and their work (design, values, decomposition) when `keepWorks`
 * (else none: at 20,000 participants a region's work is ~2 MB); each
 * region's participants' rows go to `sink` as soon as they are computed
 * (none without `sink`); then `perRegion` (inference of that region alone)
 * runs on the region's work. Progress: each region's share of the whole,
 * or of its first tenth when the regions are tested together afterwards.
 */
function estimateAndDiagnose(
  prep: Prepared,
  options: RunFitOptions,
  sink: RegionRowsSink | undefined,
  { keepWorks, perRegion }: { keepWorks: boolean; perRegion?: (work: RegionWork) => void },
): { works: RegionWork[]; results: RegionResult[] } {
  const { onProgress, shouldCancel } = options;
  const { data } = prep;
  const regionCount = prep.regionIndex.length;
  const works: RegionWork[] = [];
  const results: RegionResult[] = [];
  const qrCache = new Map<string, QrDecomposition>();
  prep.regionIndex.forEach((r, idx) => {
    if (shouldCancel?.()) cancelled();
    inRegion(data.regions[r], () => {
      const work = estimateRegionWork(prep, r, qrCache);
      const rows = work.qr && sink ? diagnoseRegion(prep, work) : objectRows(work.name, []);
      // Diagnosed: the region's least-squares fit (two arrays of n) is let go before its work is kept.
      work.leastSquares = null;
      if (keepWorks) works.push(work);
      results.push(work.result);
      if (sink) {
        assertFiniteRows(rows, `result.participants of region '${work.name}'`);
        sink(idx, work.result.region, rows);
      }
      perRegion?.(work);
    });
    onProgress?.(
      Math.min(1, keepWorks ? (0.1 * (idx + 1)) / regionCount : (idx + 1) / regionCount),
    );
  });
  return { works, results };
}

/**
 * The result without its participants' rows, from the regions after the
 * infer stage: the correction over regions, the notes of the weights and
 * the diagnostics, and the model's fields.
 */
function summaryOf(
  s: ModelSpec,
  regions: RegionResult[],
  notes: string[],
  ruleExclusions: ReturnType<typeof ruleExclusionsOf>,
): FitSummary {
  correctOverRegions(regions, s.correction, notes);
  if (s.weights === "first-level-se") notes.push(...weightingNotes(s));
  notes.push(...diagnosticNotes());
  return {
    regions,
    notes,
    kind: s.kind as Kind,
    estimator: s.estimator,
    inference: s.inference,
    correction: s.correction,
    seed: s.seed,
    level: FIT_LEVEL,
    ...ruleExclusions,
  };
}

/**
 * The test of a fit whose least-squares permutation test is split into
 * chunks (server/jobs/fit-chunks.ts), as its plan prepares it: the model
 * as the fit reads it (defaults filled in), the test's basis, the
 * participants the model's rules left out. Structured-clone-able.
 */
export interface SplitTest {
  spec: ModelSpec;
  test: LinearTestBasis;
  ruleExclusions: ReturnType<typeof ruleExclusionsOf>;
}

/**
 * Such a fit before its test: its split test and every region's result as
 * `runFit` has it before the test (estimate and diagnostics), in the fit's
 * region order. `finishSplitFit` needs nothing else besides the chunks.
 */
export interface FitBeforeTest extends SplitTest {
  regions: RegionResult[];
}

/**
 * The split test of a least-squares permutation fit (one-sample,
 * two-group or association with estimator "ols"), with the test's input
 * and setup that chunks are computed from. Throws StatsError as `runFit`
 * does for the same model and data when the test cannot be set up (a
 * region whose estimate or diagnostics fail otherwise fails the regions
 * before the test). Cost: each region's design, O(regions·n·p), and the
 * test's observed statistics.
 */
export function prepareSplitTest(
  spec: ModelSpec,
  data: FitData,
): { split: SplitTest } & Omit<ReturnType<typeof linearTestBasis>, "basis"> {
  const prep = prepare(spec, data);
  checkSplit(prep.spec);
  // The test reads each region's design and values, not its estimate.
  const works = prep.regionIndex.map((r) => inRegion(data.regions[r], () => regionDesign(prep, r)));
  let tested: ReturnType<typeof linearTestBasis>;
  try {
    tested = linearTestBasis(prep, works);
  } catch (e) {
    // A test that cannot be set up fails with runFit's message when the estimate stage fails first.
    if (e instanceof StatsError) estimateAndDiagnose(prep, {}, undefined, { keepWorks: false });
    throw e;
  }
  const { basis, input, setup } = tested;
  return {
    split: { spec: prep.spec, test: basis, ruleExclusions: ruleExclusionsOf(prep) },
    input,
    setup,
  };
}

/**
 * The stages of `runFit` before the test of a least-squares permutation
 * fit, for the regions at positions from … to − 1 of the fit's regions
 * (default all): their results before the test, and each region's
 * participants' rows handed to `sink` as soon as the region is diagnosed
 * (`position` counts from the range's start) — the same whatever the
 * range. Only the regions' results are kept, whatever the number of
 * participants and regions. Throws StatsError as `runFit` does for the
 * same model and data. Cost: per region O(n·p²).
 */
export function regionsBeforeTestByRegion(
  spec: ModelSpec,
  data: FitData,
  options: RunFitOptions,
  range: readonly [number, number] | undefined,
  sink: RegionRowsSink,
): RegionResult[] {
  const prep = prepare(spec, data);
  checkSplit(prep.spec);
  if (range) prep.regionIndex = prep.regionIndex.slice(range[0], range[1]);
  return estimateAndDiagnose(prep, options, sink, { keepWorks: false }).results;
}

/**
 * The result of a split least-squares permutation fit without its
 * participants' rows (which `regionsBeforeTestByRegion` gave), from the fit
 * before its test and its merged chunks: what `runFit` gives, number for
 * number. Cost O(regions × rearrangements): the merge, the p-values and
 * null histograms, the correction over regions. Consumes `before` (its
 * region results become the result's).
 */
export function finishSplitFit(
  before: FitBeforeTest,
  chunks: readonly RearrangementChunk[],
): FitSummary {
  const s = before.spec;
  if (before.regions.length !== before.test.observed.length)
    throw new StatsError(
      `a split fit has ${before.regions.length} regions before its test of ${before.test.observed.length}`,
    );
  const notes: string[] = [];
  mergedPermutationPass(s, before.regions, before.test, chunks, notes);
  const summary = summaryOf(s, before.regions, notes, before.ruleExclusions);
  assertFinite(summary, "result");
  return summary;
}

function checkSplit(s: ModelSpec): void {
  if (s.inference !== "permutation" || s.estimator !== "ols" || !isLinearKind(s.kind))
    throw new StatsError(
      "a fit is split before its test only for a least-squares permutation test",
    );
}

function isLinearKind(kind: ModelSpec["kind"]): boolean {
  return kind === "one-sample" || kind === "two-group" || kind === "association";
}
