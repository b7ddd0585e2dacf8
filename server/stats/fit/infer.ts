/**
 * Stage 3 of a fit, infer: replaces the estimate stage's parametric p (and,
 * for the bootstrap, interval) by a resampling one when the model asks —
 * permutation (one rearrangement of the participants for all regions,
 * max-T from the same draws) or bootstrap (each region resampled alone,
 * every pass from a fresh generator on the seed) — then adjusts the p-values
 * over regions. Works on the regions' results in place and adds the notes of
 * what it did; hands the finished regions to the result.
 */
import type { ModelSpec, RegionResult } from "../../../contract/spec";
import { bootstrapInterval } from "../bootstrap";
import { StatsError } from "../errors";
import { bootstrapP, bootstrapStatistic } from "../bootstrap-statistic";
import { adjustPValues } from "../corrections";
import { sharedGenericPermutationTest } from "../generic-permutation";
import {
  type LinearPermutationResult,
  type RearrangementChunk,
  type SharedLinearPermutationInput,
  mergeRearrangementChunks,
  prepareSharedLinearPermutation,
  sharedLinearPermutationTest,
} from "../permutation";
import type { RearrangementDraw } from "../permutation-kernel";
import { permutationStatistic } from "../permutation-statistic";
import { extremeThreshold } from "../rearrangements";
import { createRng } from "../rng";
import { FIT_LEVEL, type RunFitOptions, inRegion, rowsKey } from "./common";
import type { RegionWork } from "./estimate";
import { correctionNote, maxTNote, permutationNote, sharedRearrangementNote } from "./notes";
import type { Prepared } from "./prepare";

/** What the least-squares permutation test reads of a region (`regionDesign`). */
type PermutationWork = Pick<RegionWork, "name" | "rows" | "data">;

/** Bins of the permutation null histogram. */
export const NULL_HISTOGRAM_BINS = 40;

/**
 * The correction over regions (`spec.correction`): max-T was applied by the
 * permutation pass and only gets its note; any other sets each region's
 * `pAdjusted` from the regions' p-values (corrections.ts) and adds its note.
 */
export function correctOverRegions(
  regions: RegionResult[],
  correction: Prepared["spec"]["correction"],
  notes: string[],
): void {
  if (correction === "maxt") {
    notes.push(maxTNote());
  } else {
    const adjusted = adjustPValues(
      regions.map((x) => x.p),
      correction,
    );
    regions.forEach((x, k) => {
      x.pAdjusted = adjusted[k];
    });
    notes.push(correctionNote(correction));
  }
}

/** A progress callback mapping [0, 1] of a pass onto [start, start + span] of the fit. */
function scaledProgress(options: RunFitOptions, start: number, span: number) {
  return (f: number) =>
    options.onProgress?.(Math.min(1, start + span * Math.min(1, Math.max(0, f))));
}

/**
 * Permutation inference over the fit's regions. Each region keeps its own
 * participants; all regions share one rearrangement of the participants
 * available in at least one region (N, roster order): one sign vector, or
 * one order σ of which each region keeps its own participants in σ's order
 * (rule and reasoning in rearrangements.ts). So max-T controls the
 * family-wise error over all regions (Westfall & Young 1993; Winkler et
 * al. 2014), and every region's own p follows the same draws.
 *
 * What holds for a region's numbers: given the seed they are deterministic;
 * when every region has the same participants nothing depends on the other
 * regions (the draw runs over exactly those participants, as when the
 * region is fitted alone, two-group label assignments included); an exact
 * p (all rearrangements enumerated) is the same whether the region is
 * fitted alone or with others, provided both runs enumerate (with regions
 * that differ, enumeration needs 2^N or N! ≤ resamples for all N); a Monte
 * Carlo p in a fit whose regions differ in participants depends on N and on
 * which participants are shared, so it is an equally valid draw but not the
 * same number as when the region is fitted alone. Least squares: a region
 * with all N participants sees, draw for draw, what it sees alone (sign
 * flips, Freedman–Lane orders).
 */
export function permutationPass(
  prep: Prepared,
  works: RegionWork[],
  options: RunFitOptions,
  notes: string[],
): void {
  const s = prep.spec;
  const maxT = s.correction === "maxt";
  // The shared participants: available in at least one region, in roster order.
  const { of: position, shared } = sharedPositions(prep, works);
  const membersOf = (rows: readonly number[]) => Int32Array.from(rows, (i) => position[i]);
  const differ = works.some((w) => w.rows.length !== shared);
  const progress = scaledProgress(options, 0.1, 0.9);
  if (s.estimator === "ols") {
    const { input, lists, scheme } = linearPermutationInput(prep, works);
    const res = (options.linearPermutation ?? sharedLinearPermutationTest)({
      ...input,
      onProgress: progress,
      shouldCancel: options.shouldCancel,
    });
    applyLinearPermutation(
      lists.flatMap((list) => list.map((w) => w.result)),
      res,
      scheme,
    );
    notes.push(permutationNote(s.kind, true));
  } else {
    const plans = works.map((w) => permutationStatistic(w.data));
    const res = sharedGenericPermutationTest({
      participants: shared,
      regions: works.map((w, idx) => ({
        members: membersOf(w.rows),
        statistic: plans[idx].statistic,
        slots: plans[idx].slots,
        groupSizes: plans[idx].groupSizes,
        label: w.name,
      })),
      scheme: plans[0].scheme,
      resamples: s.resamples,
      rng: createRng(s.seed),
      onProgress: progress,
      shouldCancel: options.shouldCancel,
    });
    works.forEach((w, idx) => {
      applyPermutation(
        w.result,
        res.p[idx],
        res.observed[idx],
        res.exact,
        res.rearrangements,
        res.nullStatistics[idx],
        plans[idx].name,
      );
    });
    if (maxT) {
      const m = res.rearrangements;
      const maxima = new Float64Array(m);
      for (let k = 0; k < m; k++) {
        let best = 0;
        for (const nulls of res.nullStatistics) best = Math.max(best, Math.abs(nulls[k]));
        maxima[k] = best;
      }
      works.forEach((w, idx) => {
        const threshold = extremeThreshold(res.observed[idx]);
        let count = 0;
        for (let k = 0; k < m; k++) if (maxima[k] >= threshold) count++;
        w.result.pAdjusted = count / m;
      });
    }
    notes.push(permutationNote(s.kind, false));
  }
  if (differ) notes.push(sharedRearrangementNote(s.kind, shared, s.resamples));
}

/**
 * The least-squares permutation test of a fit's regions as
 * `permutationPass` runs it (regions on the same participants form one
 * block: one design, the kernel's batched product), and the regions of each
 * block. Worker processes that compute a fit's chunks build it here too.
 * Cost O(regions·n).
 */
export function linearPermutationInput<W extends PermutationWork>(
  prep: Prepared,
  works: readonly W[],
): {
  input: SharedLinearPermutationInput;
  lists: W[][];
  scheme: "sign-flip" | "freedman-lane";
} {
  const s = prep.spec;
  const position = sharedPositions(prep, works);
  const groups = new Map<string, W[]>();
  for (const w of works) {
    const key = rowsKey(w.rows);
    const list = groups.get(key) ?? [];
    list.push(w);
    groups.set(key, list);
  }
  const lists = [...groups.values()];
  const scheme = s.kind === "one-sample" ? "sign-flip" : "freedman-lane";
  const input: SharedLinearPermutationInput = {
    participants: position.shared,
    blocks: lists.map((list) => {
      const d = list[0].data;
      return {
        design: d.design.x,
        n: d.design.n,
        p: d.design.p,
        tested: d.tested,
        y: list.map((w) => w.data.y),
        members: Int32Array.from(list[0].rows, (i) => position.of[i]),
        label: list[0].name,
      };
    }),
    scheme,
    resamples: s.resamples,
    rng: createRng(s.seed),
    streams: s.rearrangementStreams,
    maxT: s.correction === "maxt",
    keepNull: true,
  };
  return { input, lists, scheme };
}

/**
 * Puts a least-squares permutation test's p-values (and max-T adjusted
 * p-values) on the regions' results, `tested[k]` the region of the test's
 * k-th statistic (blocks in order, as `linearPermutationInput` lists them).
 */
function applyLinearPermutation(
  tested: readonly RegionResult[],
  res: LinearPermutationResult,
  scheme: "sign-flip" | "freedman-lane",
): void {
  tested.forEach((result, k) => {
    const nulls = res.nullStatistics?.[k] ?? new Float32Array(0);
    applyPermutation(
      result,
      res.p[k],
      res.observed[k],
      res.exact,
      res.rearrangements,
      nulls,
      scheme === "sign-flip" ? "sign flipping" : "Freedman–Lane",
    );
    if (res.pMaxT) result.pAdjusted = res.pMaxT[k];
  });
}

/**
 * What a split least-squares permutation test's merge needs besides its
 * chunks, computed before the test (beside the chunks): the test's
 * observed statistics and draw (`prepareSharedLinearPermutation`, the
 * same as the chunks' plan), the region of each statistic, the scheme, and
 * the shared participants for the note. Structured-clone-able.
 */
export interface LinearTestBasis {
  observed: Float64Array;
  draw: RearrangementDraw;
  /** `order[k]`: the position among the fit's regions of the test's k-th statistic */
  order: number[];
  scheme: "sign-flip" | "freedman-lane";
  shared: number;
  differ: boolean;
}

/**
 * A fit's least-squares permutation test prepared once (`linearPermutationInput`,
 * `prepareSharedLinearPermutation`) and its basis (see `LinearTestBasis`).
 * Cost as `prepareSharedLinearPermutation`.
 */
export function linearTestBasis(
  prep: Prepared,
  works: readonly PermutationWork[],
): {
  basis: LinearTestBasis;
  input: SharedLinearPermutationInput;
  setup: ReturnType<typeof prepareSharedLinearPermutation>;
} {
  const { input, lists, scheme } = linearPermutationInput(prep, works);
  const setup = prepareSharedLinearPermutation(input);
  const at = new Map(works.map((w, idx) => [w, idx]));
  const { shared } = sharedPositions(prep, works);
  const basis: LinearTestBasis = {
    observed: setup.observed,
    draw: setup.draw,
    order: lists.flatMap((list) => list.map((w) => at.get(w) as number)),
    scheme,
    shared,
    differ: works.some((w) => w.rows.length !== shared),
  };
  return { basis, input, setup };
}

/**
 * `permutationPass` of a least-squares fit whose test was split into
 * chunks: the chunks merged exactly (`mergeRearrangementChunks`: counts
 * add, each rearrangement's maximum is the largest of its region slices')
 * with the basis computed before the test, then the same p-values, null
 * histograms and notes as `permutationPass` puts on `regions` (the
 * results before the test, in the fit's region order). Cost O(regions ×
 * rearrangements).
 */
export function mergedPermutationPass(
  spec: Prepared["spec"],
  regions: readonly RegionResult[],
  basis: LinearTestBasis,
  chunks: readonly RearrangementChunk[],
  notes: string[],
): void {
  if (spec.rearrangementStreams !== "blocks-v1")
    throw new StatsError("linearPermutationTest merges chunks of blocked streams only");
  const res = mergeRearrangementChunks(basis.observed, basis.draw, chunks, {
    maxT: spec.correction === "maxt",
    keepNull: true,
  });
  applyLinearPermutation(
    basis.order.map((idx) => regions[idx]),
    res,
    basis.scheme,
  );
  notes.push(permutationNote(spec.kind, true));
  if (basis.differ) notes.push(sharedRearrangementNote(spec.kind, basis.shared, spec.resamples));
}

/** The shared participants (available in at least one region, in roster order) and each one's position among them. */
function sharedPositions(
  prep: Prepared,
  works: readonly PermutationWork[],
): { of: Int32Array; shared: number } {
  const of = new Int32Array(prep.data.participants.length).fill(-1);
  for (const w of works) for (const i of w.rows) of[i] = 0;
  let shared = 0;
  for (let i = 0; i < of.length; i++) if (of[i] === 0) of[i] = shared++;
  return { of, shared };
}

/** Puts a region's permutation p, its scheme and its null histogram on the region's result (the parametric p kept as `pParametric`). */
function applyPermutation(
  res: RegionResult,
  p: number,
  observed: number,
  exact: boolean,
  rearrangements: number,
  nulls: ArrayLike<number>,
  scheme: string,
): void {
  res.pParametric = res.p;
  res.p = p;
  res.pAdjusted = p;
  res.permutation = { scheme, exact, rearrangements, observed };
  res.nullHistogram = nullHistogram(nulls, observed);
}

/** The bootstrap's interval method for the fit's estimator: BCa, percentile for the skipped and bend correlations. */
export function bootstrapMethod(s: ModelSpec): "bca" | "percentile" {
  return s.estimator === "skipped" || s.estimator === "bend" ? "percentile" : "bca";
}

/**
 * Bootstrap inference of one region: participants resampled with
 * replacement from a fresh generator on the seed (bootstrap.ts), so each
 * region's numbers are the same whatever the regions before it and
 * whenever it runs; a BCa interval (percentile for the skipped and bend
 * correlations) and the bootstrap p replace the parametric ones, which are
 * kept as `pParametric`, `ciLowParametric`, `ciHighParametric`. The fit's
 * note is `bootstrapNote(bootstrapMethod(spec))`.
 */
export function bootstrapRegion(prep: Prepared, w: RegionWork): void {
  const s = prep.spec;
  const method = bootstrapMethod(s);
  const res = inRegion(w.name, () =>
    bootstrapInterval({
      n: w.data.y.length,
      statistic: bootstrapStatistic(w.data),
      resamples: s.resamples,
      rng: createRng(s.seed),
      level: FIT_LEVEL,
      method,
    }),
  );
  const r = w.result;
  r.pParametric = r.p;
  r.ciLowParametric = r.ciLow;
  r.ciHighParametric = r.ciHigh;
  r.se = res.se;
  r.ciLow = res.ciLow;
  r.ciHigh = res.ciHigh;
  r.p = bootstrapP(res.distribution);
  r.pAdjusted = r.p;
  r.statistic = null;
  r.df = null;
  if (
    s.kind === "association" &&
    (s.estimator === "rank" || s.estimator === "skipped" || s.estimator === "bend")
  ) {
    r.rCiLow = res.ciLow;
    r.rCiHigh = res.ciHigh;
  }
  r.bootstrap = {
    method,
    resamples: s.resamples,
    kept: res.distribution.length,
    discarded: res.discarded,
  };
}

/** 40-bin histogram of a null distribution; ±Infinity fall in the end bins. */
function nullHistogram(values: ArrayLike<number>, observed: number, bins = NULL_HISTOGRAM_BINS) {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < values.length; k++) {
    const v = values[k];
    if (Number.isFinite(v)) {
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  if (!(lo < hi)) {
    const c = Number.isFinite(lo) ? lo : 0;
    lo = c - 0.5;
    hi = c + 0.5;
  }
  const width = (hi - lo) / bins;
  const edges: number[] = [];
  for (let b = 0; b <= bins; b++) edges.push(b === bins ? hi : lo + b * width);
  const counts = new Array<number>(bins).fill(0);
  for (let k = 0; k < values.length; k++) {
    const v = values[k];
    let b = v === Infinity ? bins - 1 : v === -Infinity ? 0 : Math.floor((v - lo) / width);
    if (b >= bins) b = bins - 1;
    if (b < 0) b = 0;
    counts[b]++;
  }
  return { edges, counts, observed };
}
