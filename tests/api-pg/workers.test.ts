/**
 * Worker processes (`npm run worker`: children running server/worker/
 * index.ts with only DATABASE_URL and the queue's timing) on the test
 * PostgreSQL server: a max-T Freedman–Lane fit computed by one worker, by
 * two, by three (each computing some of its chunks), and by workers of which
 * one is killed with SIGKILL mid-fit, gives the
 * numbers, region rows included, of the same recipe computed by the
 * embedded path (the app's own worker threads); each chunk is stored once;
 * the live workers are listed for an Owner; a specification curve's joint
 * test, split into null blocks, and a prediction, split into its outer
 * splits, give the embedded numbers on two workers;
 * a cancelled fit stops getting chunks; a fit whose chunk fails on every
 * try ends failed; a worker whose heartbeat stops has its jobs handed back
 * long before their lease, but a live worker's long job is not; a whole fit
 * computed twice at once keeps its rows; a job lost on its last try fails
 * its fit; the worker's settings are checked.
 */
import { type ChildProcess, spawn } from "node:child_process";
import { join } from "node:path";
import { and, asc, count, eq, lt, sql } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { driverOf } from "../../db/client";
import { demoPeople } from "../../db/seed";
import { fitChunkSetups, fitChunks, fitRegions, fitRuns, fits, workers } from "../../db/schema";
import { FitStore, insertQueuedFit, markFitCancelled } from "../../server/services/fit-store";
import { CHUNK_QUEUE, FIT_QUEUE, lastTryFailure, startQueue } from "../../server/worker/queue";
import { queueDispatch } from "../../server/worker/fit-dispatch";
import {
  type TestApp,
  createTestApp,
  demoCookie,
  demoStudyWithData,
  waitForFitStatus,
} from "../api/helpers";

const root = join(import.meta.dirname, "..", "..");

interface Worker {
  child: ChildProcess;
  output: () => string;
  exited: Promise<number | null>;
}

let t: TestApp;
let cookie: string;
let databaseUrl: string;
let referenceFitId: string;
const running: Worker[] = [];
const dispatch = () => queueDispatch(t.db);

/** A worker process with only the database's address and `settings` in its environment. */
function spawnWorker(settings: Record<string, string>): Worker {
  let out = "";
  const child = spawn(process.execPath, ["--import", "tsx", "server/worker/index.ts"], {
    cwd: root,
    env: { NODE_ENV: "production", PATH: process.env.PATH, DATABASE_URL: databaseUrl, ...settings },
    stdio: ["ignore", "pipe", "pipe"],
  });
  const collect = (c: Buffer) => {
    out += c.toString();
  };
  child.stdout?.on("data", collect);
  child.stderr?.on("data", collect);
  const exited = new Promise<number | null>((resolve) => child.once("exit", resolve));
  return { child, output: () => out, exited };
}

/** A running worker process; `lease` is its jobs' lease in seconds (short by default, so an expired job comes back soon). */
function startWorker(lease = 4): Worker {
  // The queue's timing short: a heartbeat every second, maintenance every second.
  const worker = spawnWorker({
    WORKER_LEASE_SECONDS: String(lease),
    WORKER_HEARTBEAT_SECONDS: "1",
    WORKER_MAINTENANCE_SECONDS: "1",
  });
  running.push(worker);
  return worker;
}

async function stopWorkers(): Promise<void> {
  for (const w of running.splice(0)) {
    if (w.child.exitCode === null && w.child.signalCode === null) w.child.kill("SIGTERM");
    await w.exited;
  }
}

async function waitFor(what: string, check: () => Promise<boolean>, timeoutMs = 120_000) {
  const start = Date.now();
  while (!(await check())) {
    if (Date.now() - start > timeoutMs) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** A new queued fit with the recipe and data of fit `of` (default: the reference fit), sent to the job queue. */
async function queueCopyOfReference(
  options: { send?: boolean; of?: string } = {},
): Promise<string> {
  const [ref] = await t.db
    .select()
    .from(fits)
    .where(eq(fits.id, options.of ?? referenceFitId));
  const fit = await insertQueuedFit(t.db, {
    studyId: ref.studyId,
    modelId: ref.modelId,
    brainVersionId: ref.brainVersionId,
    sheetVersionId: ref.sheetVersionId,
    recipe: ref.recipe,
    createdBy: ref.createdBy,
    createdAt: new Date(),
    refitOf: null,
  });
  if (options.send === false) return fit.id;
  const queue = dispatch();
  try {
    await queue.enqueue(fit.id);
  } finally {
    await queue.close();
  }
  return fit.id;
}

/** Rows a fit has in `table`: its stored chunks, or its region-chunk setups (the planner's; removed when the fit ends). */
async function storedRows(
  table: typeof fitChunks | typeof fitChunkSetups,
  fitId: string,
): Promise<number> {
  const [{ stored }] = await t.db
    .select({ stored: count() })
    .from(table)
    .where(eq(table.fitId, fitId));
  return stored;
}

const storedChunks = (fitId: string) => storedRows(fitChunks, fitId);
const storedSetups = (fitId: string) => storedRows(fitChunkSetups, fitId);

/** The worker id a worker process printed when it began taking jobs. */
function workerIdOf(worker: Worker): string {
  const id = /Covarion worker (\S+) on /.exec(worker.output())?.[1];
  if (!id) throw new Error("the worker has not said it takes jobs");
  return id;
}

/**
 * Kills `victim` with SIGKILL at a moment it holds a job of fit `fitId`
 * that is still in progress: it is frozen (SIGSTOP) whenever its heartbeat
 * lists jobs, and killed only if one of them is still active in the queue
 * with its chunk not stored (a frozen process cannot finish it); otherwise
 * it runs on and is tried again. Returns those jobs (their ids and
 * chunks): the fit cannot finish unless they are handed back or retried.
 */
async function killHoldingAJob(
  victim: Worker,
  fitId: string,
): Promise<{ id: string; chunk: number }[]> {
  const id = workerIdOf(victim);
  for (;;) {
    const [row] = await t.db.select({ jobs: workers.jobs }).from(workers).where(eq(workers.id, id));
    if (!row || row.jobs.length === 0) {
      const [fit] = await t.db.select({ status: fits.status }).from(fits).where(eq(fits.id, fitId));
      if (fit.status !== "queued" && fit.status !== "running")
        throw new Error("the fit ended before the worker was caught holding a job");
      await new Promise((r) => setTimeout(r, 5));
      continue;
    }
    victim.child.kill("SIGSTOP");
    const active = (await t.db.execute(sql`
      select id::text as id, (data->>'chunk')::int as chunk from pgboss.job
      where id::text in (select jsonb_array_elements(jobs)->>'id' from workers where id = ${id})
        and state = 'active' and data->>'fitId' = ${fitId} and data ? 'chunk'
        and not exists (select 1 from fit_chunks c
                        where c.fit_id = ${fitId} and c.chunk = (data->>'chunk')::int)`)) as unknown as {
      rows: { id: string; chunk: number }[];
    };
    if (active.rows.length > 0) {
      victim.child.kill("SIGKILL");
      expect(await victim.exited).toBeNull();
      return active.rows;
    }
    victim.child.kill("SIGCONT");
    await new Promise((r) => setTimeout(r, 5));
  }
}

/** Waits until every running worker process says it takes jobs. */
async function workersTakingJobs(): Promise<void> {
  await waitFor("the workers taking jobs", async () =>
    running.every((w) => w.output().includes("is taking fit jobs.")),
  );
}

/**
 * A whole fit (a Huber bootstrap of accuracy with age, which is not split)
 * on the reference fit's study, started on the embedded path (the app's
 * own threads); its id. Its run time grows with `resamples`.
 */
async function robustBootstrapFit(name: string, resamples: number, seed: number): Promise<string> {
  const [ref] = await t.db.select().from(fits).where(eq(fits.id, referenceFitId));
  const model = await request(t.url)
    .post(`/api/studies/${ref.studyId}/models`)
    .set("Cookie", cookie)
    .send({
      name,
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        estimator: "huber",
        inference: "bootstrap",
        resamples,
        seed,
      },
    })
    .expect(201);
  const fit = await request(t.url)
    .post(`/api/studies/${ref.studyId}/fits`)
    .set("Cookie", cookie)
    .send({ modelId: model.body.id })
    .expect(202);
  return fit.body.id;
}

async function finished(fitId: string) {
  await waitFor(`fit ${fitId} to finish`, async () => {
    const [row] = await t.db.select({ status: fits.status }).from(fits).where(eq(fits.id, fitId));
    return row.status !== "queued" && row.status !== "running";
  });
  const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
  const regions = await t.db
    .select({
      position: fitRegions.position,
      participants: fitRegions.participants,
      plot: fitRegions.plot,
    })
    .from(fitRegions)
    .where(eq(fitRegions.fitId, fitId))
    .orderBy(asc(fitRegions.position));
  return { status: row.status, error: row.error, result: row.result, regions };
}

beforeAll(async () => {
  t = await createTestApp();
  const driver = driverOf(t.db);
  if (driver.kind !== "server") throw new Error("tests/api-pg run on a PostgreSQL server only");
  databaseUrl = String(driver.pool.options.connectionString);
  const studyId = await demoStudyWithData(t);
  cookie = await demoCookie(t, demoPeople[0].email);
  const model = await request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", cookie)
    .send({
      name: "Accuracy, max-T, on workers",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "permutation",
        resamples: 30_000,
        correction: "maxt",
        seed: 11,
      },
    })
    .expect(201);
  const fit = await request(t.url)
    .post(`/api/studies/${studyId}/fits`)
    .set("Cookie", cookie)
    .send({ modelId: model.body.id })
    .expect(202);
  referenceFitId = fit.body.id;
  // The embedded path: the app's own worker threads, the same blocks.
  await waitForFitStatus(t, cookie, referenceFitId, ["done"]);
}, 180_000);

afterAll(async () => {
  await stopWorkers();
  await t?.close();
});

describe("fits on worker processes", () => {
  it("one worker gives the embedded path's numbers; chunks are stored once", async () => {
    const reference = await finished(referenceFitId);
    expect(reference.status).toBe("done");
    startWorker();
    const fitId = await queueCopyOfReference();
    const one = await finished(fitId);
    expect(one.status).toBe("done");
    expect(one.result).toEqual(reference.result);
    expect(one.regions).toEqual(reference.regions);
    const [plan] = await t.db.select().from(fitRuns).where(eq(fitRuns.fitId, fitId));
    // 30,001 rearrangements in blocks of 500 (the first with the identity): 60 blocks × one region
    // chunk; the regions before the test, computed while they were (one part: under 50 regions);
    // the split test the plan stored: 62 parts.
    expect(plan.chunks).toBe(62);
    expect(plan.mergedAt).not.toBeNull();
    expect(await storedChunks(fitId)).toBe(62);
    const marks = await t.db
      .select({ block: fitChunks.block, chunk: fitChunks.chunk })
      .from(fitChunks)
      .where(and(eq(fitChunks.fitId, fitId), lt(fitChunks.block, 0)))
      .orderBy(fitChunks.chunk);
    expect(marks).toEqual([
      { block: -1, chunk: 60 },
      { block: -2, chunk: 61 },
    ]);
    // The region chunk's setup, stored for other workers, went with the merge.
    expect(await storedSetups(fitId)).toBe(0);
  }, 180_000);

  it("two workers give the same numbers and are listed for an Owner", async () => {
    startWorker();
    await waitFor("two live workers", async () => {
      const res = await request(t.url).get("/api/system/workers").set("Cookie", cookie).expect(200);
      return res.body.workers.length === 2;
    });
    const listed = await request(t.url)
      .get("/api/system/workers")
      .set("Cookie", cookie)
      .expect(200);
    expect(listed.body.workers[0]).toMatchObject({
      host: expect.any(String),
      chunksLastMinute: expect.any(Number),
    });
    const reference = await finished(referenceFitId);
    const fitId = await queueCopyOfReference();
    const two = await finished(fitId);
    expect(two.status).toBe("done");
    expect(two.result).toEqual(reference.result);
    expect(two.regions).toEqual(reference.regions);
  }, 180_000);

  it("three workers give the same numbers, each computing chunks of the fit", async () => {
    startWorker();
    await waitFor("three live workers", async () => {
      const res = await request(t.url).get("/api/system/workers").set("Cookie", cookie).expect(200);
      return res.body.workers.length === 3;
    });
    // Listed once its heartbeat is written; taking jobs once it says so.
    await workersTakingJobs();
    const reference = await finished(referenceFitId);
    const fitId = await queueCopyOfReference();
    const three = await finished(fitId);
    expect(three.status).toBe("done");
    expect(three.result).toEqual(reference.result);
    expect(three.regions).toEqual(reference.regions);
    // Each of the three took part: 62 chunks, each worker holding two at a time.
    const computedBy = await t.db
      .selectDistinct({ workerId: fitChunks.workerId })
      .from(fitChunks)
      .where(eq(fitChunks.fitId, fitId));
    expect(computedBy).toHaveLength(3);
    expect(await storedChunks(fitId)).toBe(62);
  }, 180_000);

  it("a specification curve's null blocks on two workers give the embedded path's numbers", async () => {
    const studyId = await demoStudyWithData(t);
    const model = await request(t.url)
      .post(`/api/studies/${studyId}/models`)
      .set("Cookie", cookie)
      .send({
        name: "Accuracy under every reasonable choice, on workers",
        regionSelection: "anatomical-or-prior",
        spec: {
          kind: "specification-curve",
          predictor: "accuracy",
          regions: ["L_dlpfc"],
          specifications: {
            estimators: ["ols", "huber"],
            covariateSets: [[], ["age"]],
            exclusionRules: [{ column: "mean_fd", op: ">", value: 0.5, reason: "motion" }],
          },
          inference: "permutation",
          resamples: 110,
          seed: 3,
        },
      })
      .expect(201);
    const embedded = await request(t.url)
      .post(`/api/studies/${studyId}/fits`)
      .set("Cookie", cookie)
      .send({ modelId: model.body.id })
      .expect(202);
    await waitForFitStatus(t, cookie, embedded.body.id, ["done"]);
    const reference = await finished(embedded.body.id);
    const fitId = await queueCopyOfReference({ of: embedded.body.id });
    const onWorkers = await finished(fitId);
    expect(onWorkers.status).toBe("done");
    expect(onWorkers.result).toEqual(reference.result);
    // 110 null draws in blocks of 25: five chunks, each stored once.
    const [plan] = await t.db.select().from(fitRuns).where(eq(fitRuns.fitId, fitId));
    expect(plan.chunks).toBe(5);
    expect(await storedChunks(fitId)).toBe(5);
  }, 180_000);

  it("a prediction's outer splits on two workers give the embedded path's numbers", async () => {
    const studyId = await demoStudyWithData(t);
    const model = await request(t.url)
      .post(`/api/studies/${studyId}/models`)
      .set("Cookie", cookie)
      .send({
        name: "Accuracy predicted, on workers",
        regionSelection: "anatomical-or-prior",
        spec: {
          kind: "prediction",
          predictor: "accuracy",
          covariates: ["age"],
          folds: 4,
          repeats: 2,
          resamples: 19,
          seed: 6,
        },
      })
      .expect(201);
    const embedded = await request(t.url)
      .post(`/api/studies/${studyId}/fits`)
      .set("Cookie", cookie)
      .send({ modelId: model.body.id })
      .expect(202);
    await waitForFitStatus(t, cookie, embedded.body.id, ["done"]);
    const reference = await finished(embedded.body.id);
    const fitId = await queueCopyOfReference({ of: embedded.body.id });
    const onWorkers = await finished(fitId);
    expect(onWorkers.status).toBe("done");
    expect(onWorkers.result).toEqual(reference.result);
    // 4 folds × 2 repeats: eight chunks, each stored once.
    expect(await storedChunks(fitId)).toBe(8);
  }, 180_000);

  it("a worker killed with SIGKILL mid-fit: the fit still finishes with the same numbers", async () => {
    const reference = await finished(referenceFitId);
    const [victim] = running;
    const fitId = await queueCopyOfReference();
    expect(await killHoldingAJob(victim, fitId)).not.toEqual([]);
    const survived = await finished(fitId);
    expect(survived.status).toBe("done");
    expect(survived.result).toEqual(reference.result);
    expect(survived.regions).toEqual(reference.regions);
  }, 180_000);

  it("a cancelled fit gets no more chunks and no result", async () => {
    const fitId = await queueCopyOfReference();
    await waitFor("the first chunks", async () => (await storedChunks(fitId)) >= 2);
    // One region chunk (under 100 regions): one setup, stored by the planner before the chunks were sent.
    expect(await storedSetups(fitId)).toBe(1);
    const [ref] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    expect(await markFitCancelled(t.db, fitId, ref.createdBy, new Date())).toBe(true);
    // A chunk in hand when the cancel lands may still be stored; after that none.
    await new Promise((r) => setTimeout(r, 2500));
    const after = await storedChunks(fitId);
    await new Promise((r) => setTimeout(r, 3000));
    expect(await storedChunks(fitId)).toBe(after);
    expect(after).toBeLessThan(60);
    const view = await finished(fitId);
    expect(view.status).toBe("cancelled");
    expect(view.result).toBeNull();
    expect(view.regions).toEqual([]);
    await waitFor("the cancelled fit's setup to go", async () => (await storedSetups(fitId)) === 0);
  }, 120_000);

  it("a fit whose chunk fails on every try ends failed with the error", async () => {
    const fitId = await queueCopyOfReference({ send: false });
    expect(await new FitStore(t.db).markRunning(fitId, new Date())).toBe(true);
    const boss = await startQueue(t.db, { supervise: false });
    try {
      // A chunk the fit does not have: every try fails (the default three retries, then the last).
      await boss.send(CHUNK_QUEUE, { fitId, chunk: 9999 });
    } finally {
      await boss.stop({ graceful: false, close: false });
    }
    const view = await finished(fitId);
    expect(view.status).toBe("failed");
    expect(view.error).toBe(
      "The fit stopped because of an internal error on the server. It has been logged.",
    );
  }, 120_000);

  it("a job taken by a worker that died holding it is retried after its lease", async () => {
    await stopWorkers();
    const reference = await finished(referenceFitId);
    const fitId = await queueCopyOfReference();
    // A worker takes the fit's job and dies before finishing it: nothing completes the job.
    const boss = await startQueue(t.db, { supervise: false });
    try {
      const taken = await boss.fetch(FIT_QUEUE);
      expect(taken.map((j) => (j.data as { fitId: string }).fitId)).toEqual([fitId]);
    } finally {
      await boss.stop({ graceful: false, close: false });
    }
    const started = Date.now();
    startWorker();
    const view = await finished(fitId);
    // Not before the 4-second lease ran out.
    expect(Date.now() - started).toBeGreaterThanOrEqual(3000);
    expect(view.status).toBe("done");
    expect(view.result).toEqual(reference.result);
  }, 120_000);
});

describe("workers that stop", () => {
  it("a worker whose heartbeat stopped while it held a job: another hands the job back long before its lease", async () => {
    await stopWorkers();
    const reference = await finished(referenceFitId);
    const fitId = await queueCopyOfReference({ send: false });
    let heldId = "";
    const boss = await startQueue(t.db, { supervise: false });
    try {
      // A 10-minute lease: only the heartbeat can bring the job back in time.
      // First in line (jobs of earlier tests may wait in the queue).
      await boss.send(FIT_QUEUE, { fitId }, { expireInSeconds: 600, priority: 100 });
      // A stand-in worker takes the fit's job, writes that it holds it, and stops beating: its heartbeat is an hour old.
      const [taken] = await boss.fetch(FIT_QUEUE);
      expect((taken.data as { fitId: string }).fitId).toBe(fitId);
      heldId = taken.id;
      await t.db.insert(workers).values({
        id: "stand-in",
        host: "stand-in-host",
        pid: 1,
        startedAt: new Date(),
        seenAt: sql`now() - interval '1 hour'`,
        jobs: [{ queue: FIT_QUEUE, id: taken.id }],
      });
    } finally {
      await boss.stop({ graceful: false, close: false });
    }
    const started = Date.now();
    // Workers whose jobs have a 10-minute lease, started after the job was taken.
    startWorker(600);
    const view = await finished(fitId);
    expect(view.status).toBe("done");
    expect(view.result).toEqual(reference.result);
    expect(view.regions).toEqual(reference.regions);
    // Handed back on the live worker's next heartbeat (every 5 s), not after the 600-second lease.
    expect(Date.now() - started).toBeLessThan(60_000);
    expect(running[0].output()).toContain(
      "worker stand-in on stand-in-host (process 1) stopped beating.",
    );
    expect(running[0].output()).toContain(
      `fit job ${heldId}, held by worker stand-in on stand-in-host (process 1), goes back to the queue.`,
    );
    // The stopped worker is no longer listed.
    const listed = await request(t.url)
      .get("/api/system/workers")
      .set("Cookie", cookie)
      .expect(200);
    expect(listed.body.workers.map((w: { host: string }) => w.host)).not.toContain("stand-in-host");
    const [{ left }] = await t.db
      .select({ left: count() })
      .from(workers)
      .where(eq(workers.id, "stand-in"));
    expect(left).toBe(0);
  }, 120_000);

  it("a worker killed with SIGKILL mid-fit, with a 10-minute lease: its chunks come back within a minute and the numbers are the same", async () => {
    const reference = await finished(referenceFitId);
    startWorker(600);
    await workersTakingJobs();
    const [survivor, victim] = running;
    const victimId = workerIdOf(victim);
    const fitId = await queueCopyOfReference();
    const held = await killHoldingAJob(victim, fitId);
    const killed = Date.now();
    // The victim held chunks not yet stored, which only it could finish — until handed back.
    const [{ stored }] = await t.db
      .select({ stored: count() })
      .from(fitChunks)
      .where(and(eq(fitChunks.fitId, fitId), eq(fitChunks.chunk, held[0].chunk)));
    expect(stored).toBe(0);
    const view = await finished(fitId);
    expect(view.status).toBe("done");
    expect(view.result).toEqual(reference.result);
    expect(view.regions).toEqual(reference.regions);
    // The heartbeat counts as stopped after 30 s and is looked at every 5 s: far inside the lease.
    expect(Date.now() - killed).toBeLessThan(90_000);
    expect(survivor.output()).toContain(`worker ${victimId} on `);
    for (const job of held)
      expect(survivor.output()).toMatch(
        new RegExp(`(fit-chunk|fit-rows) job ${job.id}, held by .*, goes back to the queue\\.`),
      );
  }, 180_000);

  it("a job lost on its last try fails its fit with the reason", async () => {
    await stopWorkers();
    const fitId = await queueCopyOfReference({ send: false });
    expect(await new FitStore(t.db).markRunning(fitId, new Date())).toBe(true);
    const boss = await startQueue(t.db, { supervise: false });
    try {
      // One try only, with a 2-second lease; a stand-in worker takes it and never finishes it
      // (and writes no heartbeat): the lease runs out on the last try.
      // (first in line: jobs of earlier tests may wait in the queue).
      await boss.send(
        CHUNK_QUEUE,
        { fitId, chunk: 0 },
        { retryLimit: 0, expireInSeconds: 2, priority: 100 },
      );
      const [taken] = await boss.fetch(CHUNK_QUEUE);
      expect((taken.data as { fitId: string }).fitId).toBe(fitId);
    } finally {
      await boss.stop({ graceful: false, close: false });
    }
    // A worker started after it: its queue maintenance finds the lease run out.
    startWorker();
    const view = await finished(fitId);
    expect(view.status).toBe("failed");
    // The lease ran out (the queue's maintenance found it): the worker counts as lost.
    expect(view.error).toBe(
      lastTryFailure({ value: { message: "job failed by timeout in active state" } }, 1).fitMessage,
    );
    expect(view.error).toContain("not finished in 1 try,");
  }, 120_000);

  it("a live worker's job that runs past the heartbeat window is not handed back: it is listed in hand", async () => {
    await stopWorkers();
    startWorker(600);
    await workersTakingJobs();
    // Longer than WORKER_ALIVE_SECONDS (30 s): the embedded path and the same recipe on the worker, side by side.
    const embedded = await robustBootstrapFit(
      "Accuracy, robust, bootstrap, on a worker",
      80_000,
      5,
    );
    const fitId = await queueCopyOfReference({ of: embedded });
    const started = Date.now();
    const view = await finished(fitId);
    expect(Date.now() - started).toBeGreaterThan(35_000);
    expect(view.status).toBe("done");
    await waitForFitStatus(t, cookie, embedded, ["done"]);
    expect(view.result).toEqual((await finished(embedded)).result);
    // Taken once and never handed back.
    const job = (await t.db.execute(sql`
      select retry_count, state from pgboss.job
      where name = ${FIT_QUEUE} and data->>'fitId' = ${fitId}`)) as unknown as {
      rows: { retry_count: number; state: string }[];
    };
    expect(job.rows).toEqual([{ retry_count: 0, state: "completed" }]);
    expect(running[0].output()).not.toContain("goes back to the queue");
  }, 240_000);

  it("a whole fit computed twice at once (its job handed on while its worker was cut off) keeps every row of the first to finish", async () => {
    await stopWorkers();
    startWorker(600);
    startWorker(600);
    await workersTakingJobs();
    const embedded = await robustBootstrapFit(
      "Accuracy, robust, bootstrap, computed twice",
      20_000,
      9,
    );
    await waitForFitStatus(t, cookie, embedded, ["done"]);
    const reference = await finished(embedded);
    // The first computation: one worker takes the fit's job.
    const fitId = await queueCopyOfReference({ of: embedded });
    await waitFor("the fit to run", async () => {
      const [row] = await t.db.select({ status: fits.status }).from(fits).where(eq(fits.id, fitId));
      return row.status === "running";
    });
    // The second: the same job again as a retry (as if handed on from a worker cut off from the
    // database), due in a second, which the other worker takes and computes beside the first.
    const boss = await startQueue(t.db, { supervise: false });
    let againId: string | null;
    try {
      againId = await boss.send(FIT_QUEUE, { fitId }, { startAfter: 2 });
    } finally {
      await boss.stop({ graceful: false, close: false });
    }
    await t.db.execute(sql`update pgboss.job set retry_count = 1 where id = ${againId}::uuid`);
    const view = await finished(fitId);
    expect(view.status).toBe("done");
    // Both computations have ended: the second found the fit done and kept its rows.
    await waitFor("the second computation to end", async () => {
      const job = (await t.db.execute(
        sql`select state, retry_count from pgboss.job where id = ${againId}::uuid`,
      )) as unknown as { rows: { state: string; retry_count: number }[] };
      return job.rows[0]?.state === "completed";
    });
    // It ran beside the first: taken before the fit was done, ended after.
    const [{ finishedAt }] = await t.db
      .select({ finishedAt: fits.finishedAt })
      .from(fits)
      .where(eq(fits.id, fitId));
    const again = (await t.db.execute(
      sql`select started_on, completed_on from pgboss.job where id = ${againId}::uuid`,
    )) as unknown as { rows: { started_on: Date; completed_on: Date }[] };
    expect(new Date(again.rows[0].started_on).getTime()).toBeLessThan(
      (finishedAt as Date).getTime(),
    );
    expect(new Date(again.rows[0].completed_on).getTime()).toBeGreaterThan(
      (finishedAt as Date).getTime(),
    );
    const after = await finished(fitId);
    expect(after.result).toEqual(reference.result);
    expect(after.regions).toEqual(reference.regions);
  }, 240_000);
});

describe("a worker's settings", () => {
  it("a heartbeat longer than 10 s is refused, naming the setting", async () => {
    const worker = spawnWorker({ WORKER_HEARTBEAT_SECONDS: "30" });
    expect(await worker.exited).toBe(2);
    expect(worker.output()).toContain(
      "Covarion worker cannot start: WORKER_HEARTBEAT_SECONDS: must be at most 10: a worker silent for 30 s counts as stopped",
    );
  }, 60_000);
});
