/**
 * A fit's permutation test as chunks for worker processes (server/worker/):
 * which fits are split, how a chunk number maps to its regions and
 * rearrangement block, the task a thread computes for one chunk, and the
 * stored form of a chunk's counts. Pure (no database); the worker process
 * reads and writes the rows.
 *
 * A fit is split when `runFit` would run the least-squares permutation
 * test (inference "permutation", estimator "ols", one-sample, two-group or
 * association) with "blocks-v1" streams: chunk c is region chunk
 * ⌊c / B⌋ × rearrangement block c mod B, B the number of rearrangement
 * blocks (server/stats/permutation-kernel.ts). The merging party runs
 * `runFit` with the merged chunks (`mergedLinearPermutationTest`); every
 * other fit runs whole on one worker.
 */
import type { FitData, ModelSpec } from "../../contract/spec";
import { inRegion } from "../stats/fit/common";
import { estimateRegionWork } from "../stats/fit/estimate";
import { linearPermutationInput } from "../stats/fit/infer";
import { prepare } from "../stats/fit/prepare";
import type { QrDecomposition } from "../stats/linear-model";
import {
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
import type { PermutationTask } from "./permutation-task";

/** A split fit: its prepared test and the chunk grid. */
export interface ChunkedFit {
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

/** True when `runFit` would run the least-squares permutation test in blocked streams. */
export function isChunked(spec: ModelSpec): boolean {
  return (
    spec.inference === "permutation" &&
    spec.estimator === "ols" &&
    spec.rearrangementStreams === "blocks-v1" &&
    (spec.kind === "one-sample" || spec.kind === "two-group" || spec.kind === "association")
  );
}

/**
 * The chunk grid of a fit, or null when it is not split. Runs the fit's
 * preparation and estimates (no diagnostics): O(regions·n·p²). Throws
 * StatsError as `runFit` does for the same model and data.
 */
export function chunkedFit(spec: ModelSpec, data: FitData): ChunkedFit | null {
  if (!isChunked(spec)) return null;
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
  if (!(Number.isInteger(chunk) && chunk >= 0 && chunk < fit.chunks))
    throw new Error(`fit chunks: no chunk ${chunk} (the fit has ${fit.chunks})`);
  return {
    regionFrom: fit.regionChunks[Math.floor(chunk / fit.blocks)][0],
    block: chunk % fit.blocks,
  };
}

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

/** A chunk's counts as stored (fit_chunks): binary arrays as base64 text. */
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

/** The stored form of chunk `chunk`'s counts. Cost O(size). */
export function encodeChunk(
  fit: ChunkedFit,
  chunk: number,
  counts: RearrangementCounts,
): StoredChunk {
  const place = chunkPlace(fit, chunk);
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

/** A stored chunk back as the merge takes it. Cost O(size). */
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
