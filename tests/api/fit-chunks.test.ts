/**
 * Split fits in the embedded path (server/jobs/fit-jobs.ts): a blocked
 * max-T Freedman–Lane fit, a specification curve with the joint test and a
 * cross-validated prediction (one chunk per outer split) are
 * computed chunk by chunk on the chunk pool's threads (progress moves in
 * chunk steps up to 90 %, then the merge) and store the numbers of the same
 * model and data computed in one piece by `runFit` (exact enumeration of the
 * engine's own result: the chunks must not change a number). On the seeded
 * demo tables (invented data).
 */
import { availableParallelism } from "node:os";
import { eq } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { specOfRecipe } from "../../contract/recipe";
import { fitRegions, fits } from "../../db/schema";
import { demoPeople } from "../../db/seed";
import type { FitEvent, FitJobs } from "../../server/jobs/fit-jobs";
import { buildFitInputs, FitDataCache, inputsOfFit } from "../../server/services/fit-inputs";
import { runFit } from "../../server/stats/run-fit";
import {
  createTestApp,
  demoCookie,
  demoStudyWithData,
  type TestApp,
  waitForFitStatus,
} from "./helpers";

let t: TestApp;
let cookie: string;
let studyId: string;
const events: FitEvent[] = [];

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  cookie = await demoCookie(t, demoPeople[0].email);
  (t.app.locals.fitJobs as FitJobs).subscribeAll((e) => events.push(e));
});

afterAll(async () => {
  await t?.close();
});

/** Fits `spec` through the app; its stored row once done, and the fractions it reported. */
async function fitThroughApp(name: string, spec: object) {
  const model = await request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", cookie)
    .send({ name, regionSelection: "anatomical-or-prior", spec })
    .expect(201);
  const run = await request(t.url)
    .post(`/api/studies/${studyId}/fits`)
    .set("Cookie", cookie)
    .send({ modelId: model.body.id })
    .expect(202);
  const fitId: string = run.body.id;
  const view = await waitForFitStatus(t, cookie, fitId);
  expect(view.status).toBe("done");
  const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
  const fractions = events
    .filter((e) => e.fitId === fitId && e.type === "progress")
    .map((e) => e.progress.fraction);
  return { row, fractions };
}

/** The same model and data computed in one piece, without its per-participant rows. */
async function inOnePiece(row: typeof fits.$inferSelect) {
  const data = await new FitDataCache(t.db).get(inputsOfFit(row));
  const { participants: _, ...summary } = runFit(specOfRecipe(row.recipe), data);
  return JSON.parse(JSON.stringify(summary));
}

describe("a fit's data kept for its tasks", () => {
  it("lives in shared memory, the numbers built from the stored versions", async () => {
    await fitThroughApp("Accuracy, data in shared memory", {
      kind: "association",
      predictor: "accuracy",
      inference: "parametric",
    });
    const [row] = await t.db.select().from(fits).limit(1);
    const inputs = inputsOfFit(row);
    const cached = await new FitDataCache(t.db).get(inputs);
    const built = (await buildFitInputs(t.db, inputs)).data;
    expect(cached.values.length).toBeGreaterThan(0);
    for (const v of cached.values) expect(v.buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(cached.values.map((v) => Array.from(v))).toEqual(built.values.map((v) => Array.from(v)));
    expect(cached.participants).toEqual(built.participants);
    expect(cached.numericColumns).toEqual(built.numericColumns);
  });
});

describe("split fits on the embedded path's chunk threads", () => {
  it("uses every core for chunks", () => {
    const jobs = t.app.locals.fitJobs as FitJobs;
    expect(jobs.chunkThreads).toBe(availableParallelism());
  });

  it("a max-T Freedman–Lane fit: chunk steps, then the numbers of the fit in one piece", async () => {
    const { row, fractions } = await fitThroughApp("Accuracy, max-T, in chunks", {
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
      inference: "permutation",
      resamples: 2000,
      correction: "maxt",
      seed: 17,
    });
    expect((row.recipe as { rearrangementStreams?: string }).rearrangementStreams).toBe(
      "blocks-v1",
    );
    // 2,001 rearrangements = blocks of 501, 500, 500, 500; one region chunk: four chunks, 90 % / 4 each.
    for (const k of [1, 2, 3, 4]) expect(fractions).toContain(0.9 * (k / 4));
    expect(row.result).toEqual(await inOnePiece(row));
    // Its region rows, computed beside the chunks, are stored once each, in region order.
    const stored = await t.db
      .select({ position: fitRegions.position, region: fitRegions.region })
      .from(fitRegions)
      .where(eq(fitRegions.fitId, row.id))
      .orderBy(fitRegions.position);
    const regions = (row.result as { regions: { region: string }[] }).regions;
    expect(stored).toEqual(regions.map(({ region }, position) => ({ position, region })));
  }, 120_000);

  it("a specification curve's joint test: one chunk per null block, the numbers of the curve in one piece", async () => {
    const { row, fractions } = await fitThroughApp("Accuracy, every reasonable choice, in chunks", {
      kind: "specification-curve",
      predictor: "accuracy",
      regions: ["L_dlpfc"],
      specifications: {
        estimators: ["ols", "huber"],
        covariateSets: [[], ["age"]],
        exclusionRules: [{ column: "mean_fd", op: ">", value: 0.5, reason: "motion" }],
      },
      inference: "permutation",
      resamples: 60,
      seed: 5,
    });
    // 60 null draws in blocks of 25, 25 and 10: three chunks.
    for (const k of [1, 2, 3]) expect(fractions).toContain(0.9 * (k / 3));
    expect(row.result).toEqual(await inOnePiece(row));
  }, 120_000);

  it("a prediction: one chunk per outer split, the numbers of the prediction in one piece", async () => {
    const { row, fractions } = await fitThroughApp("Accuracy predicted, in chunks", {
      kind: "prediction",
      predictor: "accuracy",
      covariates: ["age"],
      folds: 5,
      repeats: 2,
      resamples: 19,
      seed: 4,
    });
    // 5 folds × 2 repeats: ten chunks.
    for (const k of [1, 5, 10]) expect(fractions).toContain(0.9 * (k / 10));
    expect(row.result).toEqual(await inOnePiece(row));
  }, 120_000);
});
