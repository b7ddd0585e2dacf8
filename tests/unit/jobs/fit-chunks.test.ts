import { MessageChannel } from "node:worker_threads";
import { describe, expect, it } from "vitest";
import { type FitData, modelSpecSchema } from "../../../contract/spec";
import runChunkTask from "../../../server/jobs/chunk-task";
import {
  type ChunkResult,
  chunkedFit,
  chunkPlace,
  chunkTask,
  chunkTaskOf,
  decodeChunk,
  deserializeSetup,
  encodeChunk,
  encodeSetupChunk,
  type FitChunks,
  mergedChunks,
  mergedOfStored,
  mergeOptions,
  mergeTask,
  partCount,
  type RegionChunkSetup,
  regionChunkSetup,
  rowsMark,
  rowsParts,
  serializeSetup,
  setupChunkTask,
  splitMark,
  transferablesOf,
} from "../../../server/jobs/fit-chunks";
import runPermutationTask from "../../../server/jobs/permutation-task";
import { sliceBlocks } from "../../../server/stats/permutation-kernel";
import { mergedLinearPermutationTest } from "../../../server/stats/permutation";
import { createRng, normalDraw } from "../../../server/stats/rng";
import { type FitSummary, runFit } from "../../../server/stats/run-fit";
import { regionsBeforeTest } from "../../support/regions-before-test";

/** 40 participants, 230 regions (three region chunks); region 7 misses two values. */
function makeData(): FitData {
  const rng = createRng(4);
  const participants = Array.from({ length: 40 }, (_, i) => `sub-${i + 1}`);
  const age = participants.map(() => 20 + Math.floor(rng.next() * 40));
  const accuracy = participants.map(() => 0.5 + 0.5 * rng.next());
  const site = participants.map((_, i) => (i % 3 === 0 ? "north" : "south"));
  const regions = Array.from({ length: 230 }, (_, r) => `region ${r + 1}`);
  const values = regions.map((_, r) =>
    Float64Array.from(participants, (_, i) =>
      r === 7 && i < 2
        ? Number.NaN
        : 0.01 * (r % 9) * accuracy[i] + 0.02 * age[i] + normalDraw(rng),
    ),
  );
  return {
    participants,
    regions,
    values,
    numericColumns: { age, accuracy },
    categoricalColumns: { site },
  };
}

const spec = modelSpecSchema.parse({
  kind: "association",
  predictor: "accuracy",
  covariates: ["age"],
  inference: "permutation",
  resamples: 1200,
  correction: "maxt",
  seed: 9,
  rearrangementStreams: "blocks-v1",
});

describe("a fit's permutation test in chunks", () => {
  const data = makeData();

  it("splits only blocked least-squares permutation fits", () => {
    const old = modelSpecSchema.parse({ ...spec, rearrangementStreams: undefined });
    expect(chunkedFit(old, data)).toBeNull();
    expect(chunkedFit({ ...spec, inference: "bootstrap" }, data)).toBeNull();
    const fit = chunkedFit(spec, data);
    expect(fit?.regionChunks).toEqual([
      [0, 100],
      [100, 200],
      [200, 230],
    ]);
    expect(fit?.blocks).toBe(3); // 1,201 rearrangements: 501 + 500 + 200
    expect(fit?.chunks).toBe(9);
    expect(fit && chunkPlace(fit, 7)).toEqual({ regionFrom: 200, block: 1 });
  });

  it("chunks computed apart, stored and merged give the fit computed in one piece", () => {
    const fit = chunkedFit(spec, data);
    if (!fit) throw new Error("not split");
    const control = new SharedArrayBuffer(8);
    // Computed in reverse order, each through its stored form.
    const stored = Array.from({ length: fit.chunks }, (_, k) => fit.chunks - 1 - k).map((c) =>
      encodeChunk(fit, c, {
        kind: "permutation",
        counts: runPermutationTask(chunkTask(fit, c, control)),
      }),
    );
    const chunks = stored.map(decodeChunk);
    const merged = runFit(spec, data, {
      linearPermutation: (input) => mergedLinearPermutationTest(input, chunks),
    });
    const whole = runFit(spec, data);
    expect(JSON.stringify(merged)).toBe(JSON.stringify(whole));
    expect(whole.regions[0].pAdjusted).toBeGreaterThan(0);
  });

  it("chunks computed from their region chunks' stored setups are the chunks of the plan", () => {
    // What a worker that did not plan the fit computes: each region chunk's setup through its
    // stored form (node:v8), then every chunk it serves; the rows must be the planner's, byte for byte.
    const fit = chunkedFit(spec, data);
    if (!fit) throw new Error("not split");
    const control = new SharedArrayBuffer(8);
    const setups = fit.regionChunks.map((_, r) =>
      deserializeSetup(serializeSetup(regionChunkSetup(fit, r))),
    );
    expect(setups.map((s) => [s.regionChunk, s.chunkFrom, s.chunkTo, s.regionFrom])).toEqual([
      [0, 0, 3, 0],
      [1, 3, 6, 100],
      [2, 6, 9, 200],
    ]);
    for (let c = 0; c < fit.chunks; c++) {
      const setup = setups.find((s) => c >= s.chunkFrom && c < s.chunkTo);
      if (!setup) throw new Error(`no setup for chunk ${c}`);
      const fromSetup = encodeSetupChunk(
        setup,
        c,
        runPermutationTask(setupChunkTask(setup, c, control)),
      );
      const fromPlan = encodeChunk(fit, c, {
        kind: "permutation",
        counts: runPermutationTask(chunkTask(fit, c, control)),
      });
      expect(fromSetup).toEqual(fromPlan);
    }
    expect(() => setupChunkTask(setups[1], 2, control)).toThrow(
      "chunk 2 is not of region chunk 1 (chunks 3–5)",
    );
  });

  it("keeps each region chunk's setup once, in memory threads share, stored and read back alike", async () => {
    const fit = chunkedFit(spec, data);
    if (!fit) throw new Error("not split");
    const made = regionChunkSetup(fit, 1);
    // Made once per plan: every chunk of the region chunk posts the same arrays.
    expect(regionChunkSetup(fit, 1)).toBe(made);
    const arrays = (s: RegionChunkSetup) =>
      s.blocks.flatMap((b) => [
        b.residuals,
        b.residualSquares,
        b.observed,
        b.plan.basis,
        ...(b.members ? [b.members] : []),
        ...(b.plan.groupOrder ? [b.plan.groupOrder] : []),
      ]);
    const read = deserializeSetup(serializeSetup(made));
    for (const s of [made, read])
      for (const a of arrays(s)) expect(a.buffer).toBeInstanceOf(SharedArrayBuffer);
    // The same numbers as the plan's own blocks, and through the stored form.
    const plain = sliceBlocks(fit.setup.blocks, 100, 200);
    expect(arrays(made).map((a) => Array.from(a))).toEqual(
      arrays({ ...made, blocks: plain }).map((a) => Array.from(a)),
    );
    expect(arrays(read).map((a) => Array.from(a))).toEqual(arrays(made).map((a) => Array.from(a)));
    // Posted to another thread, the residuals are not copied: a write there is seen here.
    const { port1, port2 } = new MessageChannel();
    const residuals = made.blocks[0].residuals;
    const seen = new Promise<Float64Array>((resolve) => port2.once("message", resolve));
    port1.postMessage(residuals);
    const posted = await seen;
    port1.close();
    const before = residuals[0];
    posted[0] = before + 1;
    expect(residuals[0]).toBe(before + 1);
    posted[0] = before;
  });

  it("merged chunks move to the fit thread whole: every buffer once, none left behind", () => {
    const fit = chunkedFit(spec, data);
    if (!fit) throw new Error("not split");
    const control = new SharedArrayBuffer(8);
    const results = Array.from({ length: fit.chunks }, (_, c) => ({
      kind: "permutation" as const,
      counts: runPermutationTask(chunkTask(fit, c, control)),
    }));
    const merged = mergedChunks(fit, results);
    const buffers = transferablesOf(merged);
    // Per chunk: counts, maxima and one null array per region of its region chunk (100, 100, 30).
    expect(buffers).toHaveLength(3 * 3 * 2 + 3 * (100 + 100 + 30));
    const moved = structuredClone(merged, { transfer: buffers });
    const first = merged.kind === "permutation" ? merged.chunks[0].counts.counts : null;
    expect(first?.byteLength).toBe(0); // detached here: moved, not copied
    const result = runFit(spec, data, mergeOptions(moved));
    expect(JSON.stringify(result)).toBe(JSON.stringify(runFit(spec, data)));
  });
});

describe("a split permutation test merged into its regions before the test", () => {
  const data = makeData();
  const twoGroup = modelSpecSchema.parse({
    kind: "two-group",
    group: "site",
    levels: ["north", "south"],
    covariates: ["age", "accuracy"],
    inference: "permutation",
    resamples: 1200,
    correction: "maxt",
    seed: 3,
    rearrangementStreams: "blocks-v1",
  });
  const oneSample = modelSpecSchema.parse({
    kind: "one-sample",
    covariates: ["age"],
    inference: "permutation",
    resamples: 700,
    correction: "holm",
    seed: 11,
    rearrangementStreams: "blocks-v1",
  });

  for (const [label, model] of [
    ["association, max-T, a covariate", spec],
    ["two groups, max-T, two covariates", twoGroup],
    ["one sample, Holm, a covariate", oneSample],
  ] as const) {
    it(`${label}: chunks, region parts and split test, stored apart, give the fit computed in one piece`, () => {
      const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec: model, data }));
      if (plan.kind !== "permutation") throw new Error("not a permutation test");
      const control = new SharedArrayBuffer(8);
      // Chunks in reverse order, each through its stored form.
      const order = Array.from({ length: plan.chunks }, (_, k) => plan.chunks - 1 - k);
      const results = order.map((c) =>
        unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control))),
      );
      const stored = order.map((c, k) => encodeChunk(plan, c, results[k]));
      // 230 regions in parts of 50: 0–50, …, 200–230, computed and stored in another order.
      const parts = rowsParts(plan);
      expect(parts.map((p) => [p.chunk, p.from, p.to])).toEqual([
        [plan.chunks, 0, 50],
        [plan.chunks + 1, 50, 100],
        [plan.chunks + 2, 100, 150],
        [plan.chunks + 3, 150, 200],
        [plan.chunks + 4, 200, 230],
      ]);
      expect(partCount(plan)).toBe(plan.chunks + 6);
      const participants = [];
      for (const part of [parts[3], parts[0], parts[4], parts[2], parts[1]]) {
        const before = regionsBeforeTest(model, data, {}, [part.from, part.to]);
        stored.splice(2, 0, rowsMark(part, before.regions));
        participants.push({ from: part.from, rows: before.participants });
      }
      stored.push(splitMark(plan));
      expect(new Set(stored.map((r) => r.chunk)).size).toBe(partCount(plan));
      const merged = mergedOfStored("permutation", stored);
      const task = mergeTask(merged);
      if (!task) throw new Error("no merge task");
      const summary = unwrap<FitSummary>(
        runChunkTask(structuredClone(task, { transfer: transferablesOf(merged) })),
      );
      const { participants: wholeParticipants, ...whole } = runFit(model, data);
      // Every number, note and field in the same order, and the participants' rows of the parts.
      expect(summary).toStrictEqual(whole);
      expect(JSON.stringify(summary)).toBe(JSON.stringify(whole));
      participants.sort((a, b) => a.from - b.from);
      expect(participants.flatMap((p) => p.rows)).toStrictEqual(wholeParticipants);
      // Region 7 misses two participants: its statistic is the test's last (its own block).
      expect(whole.notes.length).toBeGreaterThan(2);
      expect(summary.regions[7].n).toBe(38);
      expect(summary.regions[7].pParametric).not.toBe(summary.regions[7].p);
      // In memory (threads): the plan's split test, the regions before the test in one piece.
      const inMemory = mergedChunks(plan, [...results].reverse());
      const once = regionsBeforeTest(model, data);
      const again = mergeTask(
        inMemory.kind === "permutation" ? { ...inMemory, regions: once.regions } : inMemory,
      );
      if (!again) throw new Error("no merge task");
      expect(unwrap<FitSummary>(runChunkTask(again))).toStrictEqual(whole);
    });
  }

  it("parts stored without their results leave the merge to runFit", () => {
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec, data }));
    if (plan.kind !== "permutation") throw new Error("not a permutation test");
    const control = new SharedArrayBuffer(8);
    const stored = Array.from({ length: plan.chunks }, (_, c) =>
      encodeChunk(plan, c, unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control)))),
    );
    const marks = rowsParts(plan).map((part) => ({
      ...rowsMark(part, regionsBeforeTest(spec, data, {}, [part.from, part.to]).regions),
      counts: "",
    }));
    const withoutResults = mergedOfStored("permutation", [...stored, ...marks, splitMark(plan)]);
    expect(mergeTask(withoutResults)).toBeNull();
    const result = runFit(spec, data, mergeOptions(withoutResults));
    expect(JSON.stringify(result)).toBe(JSON.stringify(runFit(spec, data)));
    expect(mergeTask(mergedOfStored("permutation", stored))).toBeNull(); // no split test, no parts
  });

  it("plans from the regions' designs and refuses a rank-deficient one with runFit's message", () => {
    const age = data.numericColumns.age as number[];
    const twice = {
      ...data,
      numericColumns: { ...data.numericColumns, twice: age.map((a) => 2 * a) },
    };
    const collinear = { ...spec, covariates: ["age", "twice"] };
    const message = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        return (e as Error).message;
      }
      return "no error";
    };
    const fromRunFit = message(() => runFit(collinear, twice));
    expect(fromRunFit).toMatch(/^region 'region 1': the design is rank deficient: column 'twice'/);
    expect(message(() => chunkedFit(collinear, twice))).toBe(fromRunFit);
    expect(message(() => regionsBeforeTest(collinear, twice))).toBe(fromRunFit);
  });

  it("refuses a fit that is not a least-squares permutation test, a missing chunk or region part", () => {
    expect(() =>
      regionsBeforeTest({ ...spec, inference: "bootstrap", correction: "holm" }, data),
    ).toThrow(/only for a least-squares permutation test/);
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec, data }));
    if (plan.kind !== "permutation") throw new Error("not a permutation test");
    const control = new SharedArrayBuffer(8);
    const results = Array.from({ length: plan.chunks }, (_, c) =>
      unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control))),
    );
    const { regions } = regionsBeforeTest(spec, data);
    const merged = mergedChunks(plan, results);
    const chunks = merged.kind === "permutation" ? merged.chunks : [];
    const before = { ...plan.split, regions };
    expect(runChunkTask({ type: "merge", before, chunks: chunks.slice(1) })).toMatchObject({
      ok: false,
      message: /missing region 0 of block 0/,
    });
    expect(
      runChunkTask({ type: "merge", before: { ...before, regions: regions.slice(50) }, chunks }),
    ).toMatchObject({ ok: false, message: /180 regions before its test of 230/ });
  });
});

/** 50 participants, three regions; one trait value and one motion value missing. */
function curveData(): FitData {
  const rng = createRng(21);
  const participants = Array.from({ length: 50 }, (_, i) => `sub-${i + 1}`);
  const trait = participants.map((_, i) => (i === 4 ? null : normalDraw(rng)));
  const age = participants.map(() => 20 + 30 * rng.next());
  const fd = participants.map((_, i) => (i === 9 ? null : 0.6 * rng.next()));
  const regions = ["insula", "amygdala", "precuneus"];
  const values = regions.map(() =>
    Float64Array.from(participants, (_, i) => 0.01 * (age[i] ?? 0) + normalDraw(rng)),
  );
  return {
    participants,
    regions,
    values,
    numericColumns: { trait, age, mean_fd: fd },
    categoricalColumns: {},
  };
}

const curve = modelSpecSchema.parse({
  kind: "specification-curve",
  regions: ["amygdala"],
  predictor: "trait",
  specifications: {
    estimators: ["ols", "huber", "rank"],
    covariateSets: [[], ["age"]],
    exclusionRules: [{ column: "mean_fd", op: ">", value: 0.4, reason: "motion" }],
  },
  inference: "permutation",
  resamples: 60,
  seed: 5,
  rearrangementStreams: "blocks-v1",
});

function unwrap<T>(outcome: { ok: true; value: unknown } | { ok: false; message: string }): T {
  if (!outcome.ok) throw new Error(outcome.message);
  return outcome.value as T;
}

describe("a specification curve's joint test in chunks", () => {
  const data = curveData();

  it("is split into one chunk per null block, each sent only the curve's region", () => {
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec: curve, data }));
    // 60 draws in blocks of 25: 25, 25, 10 (CURVE_BLOCK_DRAWS).
    expect(plan.kind).toBe("curve");
    expect(plan.chunks).toBe(3);
    expect(plan.kind === "curve" && plan.data.regions).toEqual(["amygdala"]);
    const { rearrangementStreams: _, ...oneStream } = curve;
    expect(
      unwrap(runChunkTask({ type: "plan", spec: oneStream as typeof curve, data })),
    ).toBeNull();
  });

  it("chunks computed apart in any order, stored and merged give the curve computed in one piece", () => {
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec: curve, data }));
    const control = new SharedArrayBuffer(8);
    const stored = [2, 0, 1].map((c) =>
      encodeChunk(plan, c, unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control)))),
    );
    expect(stored.map((r) => r.rearrangements)).toEqual([10, 25, 25]);
    const merged = runFit(curve, data, mergeOptions(mergedOfStored("curve", stored)));
    const whole = runFit(curve, data);
    expect(JSON.stringify(merged)).toBe(JSON.stringify(whole));
    // Not all at the floor 1/61: the null draws decide the p-values.
    expect((whole.jointTest as { pMedian: number }).pMedian).toBeGreaterThan(1 / 61);
    // The in-memory merge (threads) gives the same.
    const results = [0, 1, 2].map((c) =>
      unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control))),
    );
    const again = runFit(curve, data, mergeOptions(mergedChunks(plan, results)));
    expect(JSON.stringify(again)).toBe(JSON.stringify(whole));
  });

  it("refuses merged null draws that are not the fit's number", () => {
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec: curve, data }));
    const control = new SharedArrayBuffer(8);
    const first = unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, 0, control)));
    const nulls = first.kind === "curve" ? first.nulls : [];
    expect(() => runFit(curve, data, { curveNulls: () => nulls })).toThrow(
      /25 null draws merged of 60/,
    );
  });
});

describe("a prediction's outer splits in chunks", () => {
  const data = curveData();
  const prediction = modelSpecSchema.parse({
    kind: "prediction",
    predictor: "trait",
    covariates: ["age"],
    folds: 5,
    repeats: 3,
    inference: "permutation",
    resamples: 19,
    seed: 8,
  });

  it("chunks computed apart in any order, stored and merged give the prediction computed in one piece", () => {
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec: prediction, data }));
    // 5 folds × 3 repeats = 15 outer splits, one per chunk (at most PREDICTION_CHUNKS chunks).
    expect(plan.kind).toBe("prediction");
    expect(plan.chunks).toBe(15);
    const control = new SharedArrayBuffer(8);
    const order = Array.from({ length: 15 }, (_, c) => (c * 7) % 15);
    const stored = order.map((c) =>
      encodeChunk(plan, c, unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control)))),
    );
    const merged = runFit(prediction, data, mergeOptions(mergedOfStored("prediction", stored)));
    const whole = runFit(prediction, data);
    expect(JSON.stringify(merged)).toBe(JSON.stringify(whole));
    expect((whole.prediction as { permutation: { resamples: number } }).permutation.resamples).toBe(
      19,
    );
  });

  it("a split missing from the merge is refused", () => {
    const plan = unwrap<FitChunks>(runChunkTask({ type: "plan", spec: prediction, data }));
    const control = new SharedArrayBuffer(8);
    const results = Array.from({ length: 14 }, (_, c) =>
      unwrap<ChunkResult>(runChunkTask(chunkTaskOf(plan, c, control))),
    );
    const partials = results.flatMap((r) => (r.kind === "prediction" ? r.partials : []));
    expect(() => runFit(prediction, data, { predictionPartials: () => partials })).toThrow(
      /split 14 is missing/,
    );
  });
});
