/**
 * The fit thread's task (server/jobs/fit-task.ts) with rows "only" — a
 * split permutation test's regions before the test, computed beside its
 * chunks — sends each region's rows as soon as it is diagnosed, so that a
 * biobank-size fit's participant rows never sit in the thread's heap at
 * once; worker processes ask for ranges of ROWS_PART_REGIONS regions. Neither
 * may change a row: every region message is the one the whole fit sends,
 * and the regions' results are those of `regionsBeforeTestByRegion` over all
 * regions (exact enumeration of the engine's own output). Invented, seeded
 * data.
 */
import { MessageChannel, receiveMessageOnPort } from "node:worker_threads";
import { describe, expect, it } from "vitest";
import { type FitData, modelSpecSchema } from "../../../contract/spec";
import { ROWS_PART_REGIONS } from "../../../server/jobs/fit-chunks";
import runFitTask, { type FitTaskMessage } from "../../../server/jobs/fit-task";
import { createRng, normalDraw } from "../../../server/stats/rng";
import { runFit, runFitByRegion } from "../../../server/stats/run-fit";
import { regionsBeforeTest } from "../../support/regions-before-test";

/** 30 participants, 120 regions (three parts of at most 50); region 60 misses three values. */
function makeData(): FitData {
  const rng = createRng(21);
  const participants = Array.from({ length: 30 }, (_, i) => `sub-${i + 1}`);
  const age = participants.map(() => 20 + Math.floor(rng.next() * 40));
  const accuracy = participants.map(() => 0.5 + 0.5 * rng.next());
  const regions = Array.from({ length: 120 }, (_, r) => `region ${r + 1}`);
  const values = regions.map((_, r) =>
    Float64Array.from(participants, (_, i) =>
      r === 60 && i < 3 ? Number.NaN : 0.02 * (r % 5) * accuracy[i] + normalDraw(rng),
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
  resamples: 200,
  correction: "maxt",
  seed: 3,
  rearrangementStreams: "blocks-v1",
});

/** Runs the task and collects the messages it sent, in order. */
function run(rows: "all" | "only", range?: [number, number]) {
  const channel = new MessageChannel();
  const outcome = runFitTask({
    spec,
    data: makeData(),
    port: channel.port2,
    rows,
    fullPriority: true,
    ...(range ? { regionRange: range } : {}),
  });
  const messages: FitTaskMessage[] = [];
  for (let m = receiveMessageOnPort(channel.port1); m; m = receiveMessageOnPort(channel.port1))
    messages.push(m.message as FitTaskMessage);
  channel.port1.close();
  channel.port2.close();
  const regions = messages.filter((m) => m.type === "region");
  return { outcome, messages, regions };
}

describe("the fit thread's regions before the test, in parts", () => {
  it("sends every region's rows as the whole fit does, and the regions before the test", () => {
    expect(ROWS_PART_REGIONS).toBeLessThan(120);
    const whole = run("all");
    const parts = run("only");
    expect(parts.regions).toHaveLength(120);
    expect(parts.regions).toEqual(whole.regions);
    expect(parts.messages.at(-1)).toEqual({ type: "regions-done", count: 120 });
    if (!parts.outcome.ok) throw new Error(parts.outcome.message);
    const { regions } = regionsBeforeTest(spec, makeData());
    expect(JSON.stringify(parts.outcome.regionsBeforeTest)).toBe(JSON.stringify(regions));
  });

  it("a worker process's part: the regions of its range only, at their positions", () => {
    const whole = run("all");
    const part = run("only", [45, 105]);
    expect(part.regions.map((m) => (m.type === "region" ? m.position : -1))).toEqual(
      Array.from({ length: 60 }, (_, k) => 45 + k),
    );
    expect(part.regions).toEqual(whole.regions.slice(45, 105));
    expect(part.messages.at(-1)).toEqual({ type: "regions-done", count: 60 });
  });
});

/**
 * A fit that is not split (robust, bootstrap, weighted, rank…) hands each
 * region's participants' rows on as soon as the region is diagnosed, before
 * the resampling pass, so the fit thread never holds a biobank-size fit's
 * rows at once; the rows and the result are those of `runFit`.
 */
describe("a whole fit's rows, region by region", () => {
  const data = makeData();
  const cases = [
    {
      kind: "association",
      predictor: "accuracy",
      estimator: "huber",
      inference: "bootstrap",
      resamples: 60,
    },
    {
      kind: "association",
      predictor: "accuracy",

      estimator: "rank",
      inference: "permutation",
      resamples: 60,
    },
    { kind: "one-sample", estimator: "bisquare", inference: "parametric" },
  ] as const;
  for (const input of cases)
    it(`${input.kind}, ${input.estimator}, ${input.inference}`, () => {
      const model = modelSpecSchema.parse({
        ...input,
        regions: data.regions.slice(0, 12),
        seed: 9,
      });
      let progress = 0;
      const seen: { position: number; region: string; progress: number; rows: unknown[] }[] = [];
      const summary = runFitByRegion(
        model,
        data,
        {
          onProgress: (f) => {
            progress = f;
          },
        },
        (position, region, rows) => {
          seen.push({ position, region, progress, rows: rows.rows() });
        },
      );
      const whole = runFit(model, data);
      expect(seen.map((s) => s.position)).toEqual(Array.from({ length: 12 }, (_, k) => k));
      expect(seen.map((s) => s.region)).toEqual(whole.regions.map((r) => r.region));
      for (const s of seen) {
        expect(s.rows.length).toBeGreaterThan(0);
        for (const row of s.rows) expect((row as { region: string }).region).toBe(s.region);
      }
      // A permutation test: every region handed on before any rearranging (the estimate stage
      // reports at most a tenth of the fit). The bootstrap: each region handed on before its own
      // resampling, once the regions before it are done, so no region's rows wait for the rest.
      if (model.inference === "permutation")
        expect(Math.max(...seen.map((s) => s.progress))).toBeLessThanOrEqual(0.1);
      if (model.inference === "bootstrap")
        for (const s of seen) expect(s.progress).toBeCloseTo(s.position / 12, 12);
      expect(seen.flatMap((s) => s.rows)).toEqual(whole.participants);
      const { participants: _, ...rest } = whole;
      expect(JSON.stringify(summary)).toBe(JSON.stringify(rest));
    });
});

describe("the bootstrap, region by region", () => {
  const data = makeData();
  it("gives each region the same numbers whatever the other regions of the fit", () => {
    const base = {
      kind: "association",
      predictor: "accuracy",
      estimator: "huber",
      inference: "bootstrap",
      resamples: 200,
      seed: 4,
    } as const;
    const all = runFit(modelSpecSchema.parse({ ...base, regions: data.regions.slice(0, 6) }), data);
    const alone = runFit(modelSpecSchema.parse({ ...base, regions: [data.regions[4]] }), data);
    const pick = ({ pAdjusted: _p, ...r }: (typeof all.regions)[number]) => r;
    expect(pick(alone.regions[0])).toEqual(pick(all.regions[4]));
    expect(all.regions[4].bootstrap).toMatchObject({ method: "bca", resamples: 200 });
  });
});
