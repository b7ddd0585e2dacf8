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
 *   merged by `finishSplitFit` (`mergeTask`) from the split test its plan
 *   prepares (`prepareSplitTest`: the test's observed statistics) and the
 *   regions before the test, computed beside the chunks
 *   (`regionsBeforeTestByRegion`: estimates, diagnostics; see `rowsParts`), so
 *   that after the last chunk only the counts are added; without them, by
 *   `runFit` with `mergedLinearPermutationTest` (RunFitOptions.linearPermutation).
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
import type { RunFitOptions } from "../stats/fit/common";
import { prepare } from "../stats/fit/prepare";
import { predictionModel } from "../stats/fit/prediction";
import { CURVE_BLOCK_DRAWS } from "../stats/fit/specification-curve";
import { type SplitTest, prepareSplitTest } from "../stats/run-fit";
import type { RegionResult } from "../../contract/spec";
import {
  mergedLinearPermutationTest,
  type RearrangementChunk,
  type SharedLinearPermutationSetup,
} from "../stats/permutation";
import {
  type LinearPermutationPlan,
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
  /** what the merge needs of the test besides the chunks and the regions before it */
  split: SplitTest;
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
  const { split, input, setup } = prepareSplitTest(spec, data);
  const chunksOfRegions = regionChunks(setup.observed.length);
  const blocks = rearrangementBlocks(rearrangementsOf(setup.draw)).length;
  return {
    kind: "permutation",
    split,
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
  checkChunk(fit, chunk);
  return setupChunkTask(regionChunkSetup(fit, Math.floor(chunk / fit.blocks)), chunk, control);
}

/**
 * Everything the chunks of one region chunk of a split permutation test
 * need — its regions' blocks, the draw, the seed and the test's options —
 * and nothing of the rest of the fit. The worker that plans a fit stores
 * one per region chunk (`serializeSetup`), so that other workers compute
 * chunks without loading the data or planning again. Structured-cloneable.
 */
export interface RegionChunkSetup {
  regionChunk: number;
  /** the chunks it serves: chunkFrom … chunkTo − 1 (its region chunk × every rearrangement block) */
  chunkFrom: number;
  chunkTo: number;
  /** first region of its region chunk */
  regionFrom: number;
  draw: PermutationTask["draw"];
  blocks: PermutationTask["blocks"];
  seed: number;
  maxT: boolean;
  keepNull: boolean;
}

/**
 * Region chunk `regionChunk`'s setup, made once per plan: its arrays live
 * in memory the threads share, so that posting a chunk's task to a thread
 * copies none of its residuals (at 20,000 participants, 16 MB per chunk,
 * copied on the posting thread and again on the receiving one). Cost the
 * first time O(its regions·n) (its residuals sliced, then copied into
 * shared memory), then O(1).
 */
export function regionChunkSetup(fit: ChunkedFit, regionChunk: number): RegionChunkSetup {
  const range = fit.regionChunks[regionChunk];
  if (!range)
    throw new Error(
      `fit chunks: no region chunk ${regionChunk} (the fit has ${fit.regionChunks.length})`,
    );
  let made = setupsMade.get(fit);
  if (!made) {
    made = [];
    setupsMade.set(fit, made);
  }
  const known = made[regionChunk];
  if (known) return known;
  const [from, to] = range;
  const setup = inSharedMemory({
    regionChunk,
    chunkFrom: regionChunk * fit.blocks,
    chunkTo: (regionChunk + 1) * fit.blocks,
    regionFrom: from,
    draw: fit.setup.draw,
    blocks: sliceBlocks(fit.setup.blocks, from, to),
    seed: fit.seed,
    maxT: fit.maxT,
    keepNull: fit.keepNull,
  });
  made[regionChunk] = setup;
  return setup;
}

/** The region-chunk setups made of each plan (`regionChunkSetup`). */
const setupsMade = new WeakMap<ChunkedFit, RegionChunkSetup[]>();

/** `a` copied into memory the threads share (`a` itself when it is there already). Cost O(its length). */
function sharedCopy<T extends Float64Array | Int32Array>(a: T): T {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const Typed = a.constructor as new (buffer: SharedArrayBuffer) => T;
  const copy = new Typed(new SharedArrayBuffer(a.byteLength));
  copy.set(a);
  return copy;
}

/** A setup whose arrays live in shared memory (each block's plan copied once). Cost O(its size). */
function inSharedMemory(setup: RegionChunkSetup): RegionChunkSetup {
  const plans = new Map<LinearPermutationPlan, LinearPermutationPlan>();
  const planOf = (plan: LinearPermutationPlan) => {
    let shared = plans.get(plan);
    if (!shared) {
      shared = {
        ...plan,
        basis: sharedCopy(plan.basis),
        groupOrder: plan.groupOrder && sharedCopy(plan.groupOrder),
      };
      plans.set(plan, shared);
    }
    return shared;
  };
  return {
    ...setup,
    blocks: setup.blocks.map((b) => ({
      plan: planOf(b.plan),
      members: b.members && sharedCopy(b.members),
      residuals: sharedCopy(b.residuals),
      residualSquares: sharedCopy(b.residualSquares),
      observed: sharedCopy(b.observed),
    })),
  };
}

/** Throws unless `chunk` is one of the chunks `setup` serves. */
function checkSetupChunk(setup: RegionChunkSetup, chunk: number): void {
  if (!(Number.isInteger(chunk) && chunk >= setup.chunkFrom && chunk < setup.chunkTo))
    throw new Error(
      `fit chunks: chunk ${chunk} is not of region chunk ${setup.regionChunk} (chunks ${setup.chunkFrom}–${setup.chunkTo - 1})`,
    );
}

/** The thread task computing chunk `chunk` from its region chunk's setup. */
export function setupChunkTask(
  setup: RegionChunkSetup,
  chunk: number,
  control: SharedArrayBuffer,
): PermutationTask {
  checkSetupChunk(setup, chunk);
  return {
    draw: setup.draw,
    blocks: setup.blocks,
    seed: setup.seed,
    block: chunk - setup.chunkFrom,
    maxT: setup.maxT,
    keepNull: setup.keepNull,
    control,
    worker: 0,
  };
}

/** The stored form of a setup (node:v8 serialization: exact for numbers and typed arrays). */
export function serializeSetup(setup: RegionChunkSetup): Buffer {
  return serialize(setup);
}

/** A stored setup back, its arrays in shared memory (as `regionChunkSetup` makes them). */
export function deserializeSetup(bytes: Uint8Array): RegionChunkSetup {
  return inSharedMemory(deserialize(bytes) as RegionChunkSetup);
}

/** The stored form of chunk `chunk`'s counts, computed from its region chunk's setup. Cost O(size). */
export function encodeSetupChunk(
  setup: RegionChunkSetup,
  chunk: number,
  counts: RearrangementCounts,
): StoredChunk {
  checkSetupChunk(setup, chunk);
  return permutationChunkRow(
    chunk,
    { regionFrom: setup.regionFrom, block: chunk - setup.chunkFrom },
    counts,
  );
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
  return permutationChunkRow(chunk, chunkPlace(fit as ChunkedFit, chunk), result.counts);
}

/** The stored row of a permutation chunk at `place`. Cost O(size). */
function permutationChunkRow(
  chunk: number,
  place: { regionFrom: number; block: number },
  counts: RearrangementCounts,
): StoredChunk {
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
 * (structured-clone-able): to `runFit`, or, for a permutation test whose
 * split test and regions before the test are at hand (computed beside the
 * chunks), to `finishSplitFit` (`mergeTask`).
 */
export type MergedChunks =
  | {
      kind: "permutation";
      chunks: RearrangementChunk[];
      split?: SplitTest;
      /** every region's result before the test, in the fit's region order */
      regions?: RegionResult[];
    }
  | { kind: "curve"; nulls: CurveStatistics[] }
  | { kind: "prediction"; partials: PredictionPartial[] };

/** The merged chunks of a fit of kind `kind` from its results, chunk c at place c (a permutation test with its split test). */
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
    split: fit.split,
    chunks: results.map((r, c) => {
      if (r.kind !== "permutation")
        throw new Error("fit chunks: a curve result for a permutation fit");
      return { ...chunkPlace(fit, c), counts: r.counts };
    }),
  };
}

/** Regions per part of a split permutation test's regions before the test. */
export const ROWS_PART_REGIONS = 50;

/** One part of a split permutation test's regions before the test: regions from … to − 1, stored as chunk `chunk`. */
export interface RowsPart {
  chunk: number;
  from: number;
  to: number;
}

/**
 * Worker processes compute a split permutation test's regions before the
 * test — each region's estimate and diagnostics, its participants' rows
 * and plots, none of which depend on the test (`regionsBeforeTestByRegion`) —
 * in parts of ROWS_PART_REGIONS regions beside its chunks, any worker any
 * part, each stored like a chunk (numbers `fit.chunks` …, block −1, from
 * its first region, the regions' results in `counts`) once its rows are
 * stored; the planner stores the split test (block −2, after them). The
 * merge then only adds counts and stores the summary. None for other fits.
 */
export function rowsParts(fit: FitChunks): RowsPart[] {
  if (fit.kind !== "permutation") return [];
  const regions = fit.setup.observed.length;
  const parts: RowsPart[] = [];
  for (let from = 0; from < regions; from += ROWS_PART_REGIONS)
    parts.push({
      chunk: fit.chunks + parts.length,
      from,
      to: Math.min(regions, from + ROWS_PART_REGIONS),
    });
  return parts;
}

/** Parts of a fit a worker process waits for before the merge: its chunks, and a permutation test's regions before the test and split test. */
export function partCount(fit: FitChunks): number {
  const rows = rowsParts(fit).length;
  return fit.chunks + rows + (rows > 0 ? 1 : 0);
}

/** The structured clone serialization (node:v8, exact for numbers and typed arrays) as text. */
function serialized(value: unknown): string {
  return serialize(value).toString("base64");
}

function deserialized<T>(text: string): T {
  return deserialize(Buffer.from(text, "base64")) as T;
}

/** The stored mark of a part of regions before the test (see `rowsParts`), with their results. Cost O(regions of the part). */
export function rowsMark(part: RowsPart, regions: readonly RegionResult[]): StoredChunk {
  if (regions.length !== part.to - part.from)
    throw new Error(`fit chunks: ${regions.length} regions for part ${part.from}–${part.to}`);
  return {
    chunk: part.chunk,
    regionFrom: part.from,
    block: -1,
    counts: serialized(regions),
    maxAbs: null,
    nulls: null,
    exact: false,
    rearrangements: 0,
  };
}

/** The stored split test of a permutation test (see `rowsParts`). */
export function splitMark(fit: ChunkedFit): StoredChunk {
  return {
    chunk: partCount(fit) - 1,
    regionFrom: 0,
    block: -2,
    counts: serialized(fit.split),
    maxAbs: null,
    nulls: null,
    exact: false,
    rearrangements: 0,
  };
}

/**
 * The merged chunks of a fit of kind `kind` from its stored rows (any
 * order); for a permutation test, with its split test and regions before
 * the test when every part is stored with them (else the merge runs `runFit`).
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
      partials: sorted.flatMap((row) => deserialized<PredictionPartial[]>(row.counts)),
    };
  const chunks = sorted.map(decodeChunk);
  const splitRow = rows.find((r) => r.block === -2);
  const parts = rows.filter((r) => r.block === -1).sort((a, b) => a.regionFrom - b.regionFrom);
  if (!splitRow || parts.length === 0 || parts.some((r) => r.counts === ""))
    return { kind, chunks };
  const split = deserialized<SplitTest>(splitRow.counts);
  const regions = parts.flatMap((r) => deserialized<RegionResult[]>(r.counts));
  return { kind, chunks, split, regions };
}

/**
 * The merge of a split permutation test whose split test and regions
 * before the test are at hand, as a chunk thread runs it (chunk-task.ts),
 * or null when the merge needs `runFit` (the fit's data) instead (`mergeOptions`).
 */
export function mergeTask(merged: MergedChunks): ChunkTask | null {
  if (merged.kind !== "permutation" || !merged.split || !merged.regions) return null;
  return {
    type: "merge",
    before: { ...merged.split, regions: merged.regions },
    chunks: merged.chunks,
  };
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
