/**
 * A fit as chunks for threads (server/jobs/fit-jobs.ts) and worker
 * processes (server/worker/): which fits are split, what a chunk number
 * means, the task a thread computes for one chunk (chunk-task.ts), the
 * stored form of a chunk's result, and how the merging party hands the
 * merged chunks to `runFit`. Pure (no database); the worker process reads
 * and writes the rows.
 *
 * Two kinds of split fit, both with "blocks-v1" streams:
 * - "permutation": the least-squares permutation test (inference
 *   "permutation", estimator "ols", one-sample, two-group or association).
 *   Chunk c is region chunk ⌊c / B⌋ × rearrangement block c mod B, B the
 *   number of rearrangement blocks (server/stats/permutation-kernel.ts);
 *   merged by `finishSplitFit` (`mergeTask`) from the fit before its test,
 *   which is computed beside the chunks (`runFitBeforeTest`: estimates,
 *   diagnostics, the test's observed statistics), so that after the last
 *   chunk only the counts are added; without it, by `runFit` with
 *   `mergedLinearPermutationTest` (RunFitOptions.linearPermutation).
 * - "curve": the joint test of a specification curve. Chunk c is null
 *   block c (`curveNullBlock`, CURVE_BLOCK_DRAWS draws from its own
 *   stream); merged by concatenating blocks in order (RunFitOptions.curveNulls).
 *
 * - "prediction": the outer splits of a cross-validated prediction (any
 *   prediction fit; its random draws are all made by `planPrediction`, so
 *   splits are independent whatever the streams). Chunk c is splits
 *   c·k … c·k + k − 1 (k = ⌈splits / PREDICTION_CHUNKS⌉) computed by
 *   `predictionSplit`; merged by `mergePrediction`
 *   (RunFitOptions.predictionPartials).
 *
 * Every other fit runs whole on one thread. Whatever the number of threads
 * or workers and the order chunks finish in, the merged fit is the fit
 * computed in one piece, number for number.
 */
import { deserialize, serialize } from "node:v8";
import type { FitData, ModelSpec } from "../../contract/spec";
import { type RunFitOptions, inRegion } from "../stats/fit/common";
import { estimateRegionWork } from "../stats/fit/estimate";
import { linearPermutationInput } from "../stats/fit/infer";
import { prepare } from "../stats/fit/prepare";
import { predictionModel } from "../stats/fit/prediction";
import { CURVE_BLOCK_DRAWS } from "../stats/fit/specification-curve";
import type { QrDecomposition } from "../stats/linear-model";
import type { FitBeforeTest } from "../stats/run-fit";
import {
  mergedLinearPermutationTest,
  prepareSharedLinearPermutation,
  type RearrangementChunk,
  type SharedLinearPermutationSetup,
} from "../stats/permutation";
import {
  type RearrangementCounts,
  rearrangementBlocks,
  rearrangementsOf,
  regionChunks,
  sliceBlocks,
} from "../stats/permutation-kernel";
import {
  type PredictionInput,
  type PredictionPartial,
  type PredictionPlan,
  planPrediction,
  predictionSplitCount,
} from "../stats/prediction/cross-validate";
import type { CurveStatistics } from "../stats/specification-curve/joint";
import type { ChunkTask } from "./chunk-task";
import type { PermutationTask } from "./permutation-task";

/** A fit whose permutation test is split: its prepared test and the chunk grid. */
export interface ChunkedFit {
  kind: "permutation";
  setup: SharedLinearPermutationSetup;
  seed: number;
  maxT: boolean;
  keepNull: boolean;
  regionChunks: [number, number][];
  /** rearrangement blocks B */
  blocks: number;
  /** region chunks × B */
  chunks: number;
}

/** A specification curve whose joint test is split: one chunk per null block. */
export interface ChunkedCurve {
  kind: "curve";
  spec: ModelSpec;
  /** the fit's data cut to the curve's one region (what each chunk's thread is sent) */
  data: FitData;
  chunks: number;
}

/** Most chunks a prediction is cut into (a few outer splits each beyond that). */
export const PREDICTION_CHUNKS = 100;

/** A prediction split by its outer splits: `perChunk` splits per chunk. */
export interface ChunkedPrediction {
  kind: "prediction";
  plan: PredictionPlan;
  input: PredictionInput;
  splits: number;
  perChunk: number;
  chunks: number;
}

/** A split fit of any kind. */
export type FitChunks = ChunkedFit | ChunkedCurve | ChunkedPrediction;

/** How a fit is split, or null when it runs whole. From the model alone. */
export function chunkKind(spec: ModelSpec): FitChunks["kind"] | null {
  if (spec.kind === "prediction") return "prediction";
  if (spec.inference !== "permutation" || spec.rearrangementStreams !== "blocks-v1") return null;
  if (spec.kind === "specification-curve") return "curve";
  if (
    spec.estimator === "ols" &&
    (spec.kind === "one-sample" || spec.kind === "two-group" || spec.kind === "association")
  )
    return "permutation";
  return null;
}

/** True when `runFit` would run the least-squares permutation test in blocked streams. */
export function isChunked(spec: ModelSpec): boolean {
  return chunkKind(spec) === "permutation";
}

/**
 * The chunks of a fit, or null when it is not split. A permutation test
 * runs the fit's preparation and estimates (no diagnostics),
 * O(regions·n·p²), and throws StatsError as `runFit` does for the same
 * model and data; a curve only counts its null blocks.
 */
export function fitChunks(spec: ModelSpec, data: FitData): FitChunks | null {
  const kind = chunkKind(spec);
  if (kind === "permutation") return chunkedFit(spec, data);
  if (kind === "prediction") {
    const { input, options } = predictionModel(prepare(spec, data));
    const plan = planPrediction(input, options);
    const splits = predictionSplitCount(plan);
    const perChunk = Math.max(1, Math.ceil(splits / PREDICTION_CHUNKS));
    return { kind, plan, input, splits, perChunk, chunks: Math.ceil(splits / perChunk) };
  }
  if (kind === "curve")
    return {
      kind,
      spec,
      data: curveData(spec, data),
      chunks: Math.ceil(spec.resamples / CURVE_BLOCK_DRAWS),
    };
  return null;
}

/** The data of a curve's one region (the curve reads no other); the whole data when the model names no single region it has. */
function curveData(spec: ModelSpec, data: FitData): FitData {
  const r = spec.regions?.length === 1 ? data.regions.indexOf(spec.regions[0]) : -1;
  if (r < 0) return data;
  return {
    participants: data.participants,
    regions: [data.regions[r]],
    values: [data.values[r]],
    ...(data.standardErrors ? { standardErrors: [data.standardErrors[r]] } : {}),
    numericColumns: data.numericColumns,
    categoricalColumns: data.categoricalColumns,
  };
}

/**
 * The chunk grid of a fit, or null when it is not split. Runs the fit's
 * preparation and estimates (no diagnostics): O(regions·n·p²). Throws
 * StatsError as `runFit` does for the same model and data.
 */
export function chunkedFit(spec: ModelSpec, data: FitData): ChunkedFit | null {
  if (chunkKind(spec) !== "permutation") return null;
  const prep = prepare(spec, data);
  const qrCache = new Map<string, QrDecomposition>();
  const works = prep.regionIndex.map((r) =>
    inRegion(data.regions[r], () => estimateRegionWork(prep, r, qrCache)),
  );
  const { input } = linearPermutationInput(prep, works);
  const setup = prepareSharedLinearPermutation(input);
  const chunksOfRegions = regionChunks(setup.observed.length);
  const blocks = rearrangementBlocks(rearrangementsOf(setup.draw)).length;
  return {
    kind: "permutation",
    setup,
    seed: spec.seed,
    maxT: input.maxT === true,
    keepNull: input.keepNull === true,
    regionChunks: chunksOfRegions,
    blocks,
    chunks: chunksOfRegions.length * blocks,
  };
}

/** Where chunk `chunk` lies: its first region and its rearrangement block. */
export function chunkPlace(fit: ChunkedFit, chunk: number): { regionFrom: number; block: number } {
  checkChunk(fit, chunk);
  return {
    regionFrom: fit.regionChunks[Math.floor(chunk / fit.blocks)][0],
    block: chunk % fit.blocks,
  };
}

/** Throws unless `chunk` is a chunk of the fit. */
function checkChunk(fit: FitChunks, chunk: number): void {
  if (!(Number.isInteger(chunk) && chunk >= 0 && chunk < fit.chunks))
    throw new Error(`fit chunks: no chunk ${chunk} (the fit has ${fit.chunks})`);
}

/** The thread task (chunk-task.ts) computing chunk `chunk` of either kind; `control` as a permutation task reads it (slot 0: cancel). */
export function chunkTaskOf(fit: FitChunks, chunk: number, control: SharedArrayBuffer): ChunkTask {
  checkChunk(fit, chunk);
  if (fit.kind === "permutation")
    return { type: "permutation", task: chunkTask(fit, chunk, control) };
  if (fit.kind === "prediction") {
    const from = chunk * fit.perChunk;
    return {
      type: "prediction",
      plan: fit.plan,
      input: fit.input,
      from,
      to: Math.min(fit.splits, from + fit.perChunk),
      control,
    };
  }
  return { type: "curve", spec: fit.spec, data: fit.data, block: chunk };
}

/** What a chunk's thread gives back, by kind. */
export type ChunkResult =
  | { kind: "permutation"; counts: RearrangementCounts }
  | { kind: "curve"; nulls: CurveStatistics[] }
  | { kind: "prediction"; partials: PredictionPartial[] };

/** The thread task (permutation-task.ts) computing chunk `chunk`; `control` as that task reads it. */
export function chunkTask(
  fit: ChunkedFit,
  chunk: number,
  control: SharedArrayBuffer,
): PermutationTask {
  const [from, to] = fit.regionChunks[Math.floor(chunk / fit.blocks)];
  return {
    draw: fit.setup.draw,
    blocks: sliceBlocks(fit.setup.blocks, from, to),
    seed: fit.seed,
    block: chunkPlace(fit, chunk).block,
    maxT: fit.maxT,
    keepNull: fit.keepNull,
    control,
    worker: 0,
  };
}

/**
 * A chunk's result as stored (fit_chunks): binary arrays as base64 text. A
 * curve's null block keeps its draws' statistics in `counts` (median,
 * direction, share significant in the dominant direction, Stouffer's Z per
 * draw), `block` its block and `rearrangements` its number of draws; a
 * prediction chunk keeps its splits' partials in `counts` (the structured
 * clone serialization, node:v8, exact for numbers and typed arrays),
 * `block` its chunk and `rearrangements` its number of splits.
 */
export interface StoredChunk {
  chunk: number;
  regionFrom: number;
  block: number;
  counts: string;
  maxAbs: string | null;
  nulls: string | null;
  exact: boolean;
  rearrangements: number;
}

function base64Of(a: Float64Array | Float32Array): string {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString("base64");
}

function float64Of(text: string): Float64Array {
  const bytes = Buffer.from(text, "base64");
  return new Float64Array(
    bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength),
  );
}

function float32Of(text: string): Float32Array {
  const bytes = Buffer.from(text, "base64");
  return new Float32Array(
    bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength),
  );
}

/** The stored form of chunk `chunk`'s result. Cost O(size). */
export function encodeChunk(fit: FitChunks, chunk: number, result: ChunkResult): StoredChunk {
  checkChunk(fit, chunk);
  if (result.kind !== fit.kind)
    throw new Error(`fit chunks: a ${result.kind} result for a ${fit.kind} fit`);
  if (result.kind === "prediction")
    return {
      chunk,
      regionFrom: 0,
      block: chunk,
      counts: serialize(result.partials).toString("base64"),
      maxAbs: null,
      nulls: null,
      exact: false,
      rearrangements: result.partials.length,
    };
  if (result.kind === "curve") {
    const all = new Float64Array(4 * result.nulls.length);
    for (let d = 0; d < result.nulls.length; d++) {
      const x = result.nulls[d];
      all.set([x.median, x.direction, x.shareDominant, x.stoufferZ], 4 * d);
    }

    return {
      chunk,
      regionFrom: 0,
      block: chunk,
      counts: base64Of(all),
      maxAbs: null,
      nulls: null,
      exact: false,
      rearrangements: result.nulls.length,
    };
  }
  const counts = result.counts;
  const place = chunkPlace(fit as ChunkedFit, chunk);
  let nulls: string | null = null;
  if (counts.nulls) {
    const width = counts.rearrangements;
    const all = new Float32Array(counts.nulls.length * width);
    for (let r = 0; r < counts.nulls.length; r++) all.set(counts.nulls[r], r * width);
    nulls = base64Of(all);
  }
  return {
    chunk,
    ...place,
    counts: base64Of(counts.counts),
    maxAbs: counts.maxAbs ? base64Of(counts.maxAbs) : null,
    nulls,
    exact: counts.exact,
    rearrangements: counts.rearrangements,
  };
}

/** A stored permutation chunk back as the merge takes it. Cost O(size). */
export function decodeChunk(row: StoredChunk): RearrangementChunk {
  const counts = float64Of(row.counts);
  let nulls: Float32Array[] | null = null;
  if (row.nulls !== null) {
    const all = float32Of(row.nulls);
    const width = row.rearrangements;
    nulls = Array.from({ length: counts.length }, (_, r) => all.slice(r * width, (r + 1) * width));
  }
  return {
    regionFrom: row.regionFrom,
    block: row.block,
    counts: {
      counts,
      maxAbs: row.maxAbs === null ? null : float64Of(row.maxAbs),
      nulls,
      exact: row.exact,
      rearrangements: row.rearrangements,
    },
  };
}

/** A stored curve chunk back as its null block's statistics. Cost O(size). */
function decodeCurveChunk(row: StoredChunk): CurveStatistics[] {
  const all = float64Of(row.counts);
  return Array.from({ length: row.rearrangements }, (_, d) => ({
    median: all[4 * d],
    direction: all[4 * d + 1] > 0 ? 1 : -1,
    shareDominant: all[4 * d + 2],
    stoufferZ: all[4 * d + 3],
  }));
}

/**
 * Every chunk of a split fit, as the merging party hands them to its thread
 * (structured-clone-able): to `runFit`, or, for a permutation test with
 * `before` (the fit before its test, computed beside the chunks), to
 * `finishSplitFit` (`mergeTask`).
 */
export type MergedChunks =
  | { kind: "permutation"; chunks: RearrangementChunk[]; before?: FitBeforeTest }
  | { kind: "curve"; nulls: CurveStatistics[] }
  | { kind: "prediction"; partials: PredictionPartial[] };

/** The merged chunks of a fit of kind `kind` from its results, chunk c at place c. */
export function mergedChunks(fit: FitChunks, results: readonly ChunkResult[]): MergedChunks {
  if (results.length !== fit.chunks)
    throw new Error(`fit chunks: ${results.length} results for ${fit.chunks} chunks`);
  if (fit.kind === "curve")
    return {
      kind: "curve",
      nulls: results.flatMap((r) => (r.kind === "curve" ? r.nulls : [])),
    };
  if (fit.kind === "prediction")
    return {
      kind: "prediction",
      partials: results.flatMap((r) => (r.kind === "prediction" ? r.partials : [])),
    };
  return {
    kind: "permutation",
    chunks: results.map((r, c) => {
      if (r.kind !== "permutation")
        throw new Error("fit chunks: a curve result for a permutation fit");
      return { ...chunkPlace(fit, c), counts: r.counts };
    }),
  };
}

/**
 * Worker processes store the region rows of a split permutation test
 * (per-participant diagnostics and plots, which do not depend on the test)
 * while its chunks are computed, with the rest of the fit before its test
 * (`runFitBeforeTest`: each region's estimate and diagnostics, the test's
 * observed statistics), so the merge only adds counts and stores the
 * summary: the fit then has one more part than chunks, recorded like a
 * chunk (number `fit.chunks`, block −1, the fit before its test in
 * `counts`) once its rows are stored.
 */
export function hasRowsPart(fit: FitChunks): boolean {
  return fit.kind === "permutation";
}

/** Parts of a fit a worker process waits for before the merge: its chunks, and its region rows where stored apart. */
export function partCount(fit: FitChunks): number {
  return fit.chunks + (hasRowsPart(fit) ? 1 : 0);
}

/**
 * The stored mark of a fit's region rows (see `hasRowsPart`), with the fit
 * before its test in `counts` (the structured clone serialization,
 * node:v8, exact for numbers and typed arrays). Cost O(regions).
 */
export function rowsMark(fit: FitChunks, before: FitBeforeTest): StoredChunk {
  return {
    chunk: fit.chunks,
    regionFrom: 0,
    block: -1,
    counts: serialize(before).toString("base64"),
    maxAbs: null,
    nulls: null,
    exact: false,
    rearrangements: 0,
  };
}

/**
 * The merged chunks of a fit of kind `kind` from its stored rows (any
 * order), with the fit before its test from the rows mark when it holds
 * one (a mark stored without it, by an earlier version, is left out).
 */
export function mergedOfStored(
  kind: FitChunks["kind"],
  rows: readonly StoredChunk[],
): MergedChunks {
  const sorted = rows.filter((r) => r.block >= 0).sort((a, b) => a.chunk - b.chunk);
  if (kind === "curve") return { kind, nulls: sorted.flatMap(decodeCurveChunk) };
  if (kind === "prediction")
    return {
      kind,
      partials: sorted.flatMap(
        (row) => deserialize(Buffer.from(row.counts, "base64")) as PredictionPartial[],
      ),
    };
  const mark = rows.find((r) => r.block < 0 && r.counts !== "");
  return {
    kind,
    chunks: sorted.map(decodeChunk),
    ...(mark ? { before: deserialize(Buffer.from(mark.counts, "base64")) as FitBeforeTest } : {}),
  };
}

/**
 * The merge of a split permutation test whose fit before its test is at
 * hand, as a chunk thread runs it (chunk-task.ts), or null when the merge
 * needs `runFit` (the fit's data) instead (`mergeOptions`).
 */
export function mergeTask(merged: MergedChunks): ChunkTask | null {
  if (merged.kind !== "permutation" || !merged.before) return null;
  return { type: "merge", before: merged.before, chunks: merged.chunks };
}

/**
 * The buffers of merged chunks, to move them to the fit thread instead of
 * copying them (a max-T test's null statistics are regions × rearrangements
 * floats: 16 MB at 400 × 10,000). The caller must not read them afterwards.
 */
export function transferablesOf(merged: MergedChunks): ArrayBuffer[] {
  const buffers = new Set<ArrayBuffer>();
  const add = (a: Float64Array | Float32Array | null) => {
    if (a && a.buffer instanceof ArrayBuffer) buffers.add(a.buffer);
  };
  if (merged.kind === "permutation")
    for (const { counts } of merged.chunks) {
      add(counts.counts);
      add(counts.maxAbs);
      for (const n of counts.nulls ?? []) add(n);
    }
  return [...buffers];
}

/** The `runFit` options that answer a split fit's test from its merged chunks. */
export function mergeOptions(
  merged: MergedChunks,
): Pick<RunFitOptions, "linearPermutation" | "curveNulls" | "predictionPartials"> {
  if (merged.kind === "curve") {
    const nulls = merged.nulls;
    return { curveNulls: () => nulls };
  }
  if (merged.kind === "prediction") {
    const partials = merged.partials;
    return { predictionPartials: () => partials };
  }
  const chunks = merged.chunks;
  return { linearPermutation: (input) => mergedLinearPermutationTest(input, chunks) };
}
