import { describe, expect, it } from "vitest";
import { type FitData, modelSpecSchema } from "../../../contract/spec";
import {
  chunkedFit,
  chunkPlace,
  chunkTask,
  decodeChunk,
  encodeChunk,
} from "../../../server/jobs/fit-chunks";
import runPermutationTask from "../../../server/jobs/permutation-task";
import { mergedLinearPermutationTest } from "../../../server/stats/permutation";
import { createRng, normalDraw } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";

/** 40 participants, 230 regions (three region chunks); region 7 misses two values. */
function makeData(): FitData {
  const rng = createRng(4);
  const participants = Array.from({ length: 40 }, (_, i) => `sub-${i + 1}`);
  const age = participants.map(() => 20 + Math.floor(rng.next() * 40));
  const accuracy = participants.map(() => 0.5 + 0.5 * rng.next());
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
    categoricalColumns: {},
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
      encodeChunk(fit, c, runPermutationTask(chunkTask(fit, c, control))),
    );
    const chunks = stored.map(decodeChunk);
    const merged = runFit(spec, data, {
      linearPermutation: (input) => mergedLinearPermutationTest(input, chunks),
    });
    const whole = runFit(spec, data);
    expect(JSON.stringify(merged)).toBe(JSON.stringify(whole));
    expect(whole.regions[0].pAdjusted).toBeGreaterThan(0);
  });
});
