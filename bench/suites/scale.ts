/**
 * Scale: one max-T Freedman–Lane fit on a PostgreSQL server, computed by
 * the embedded path (its chunks on one thread per core, its regions before
 * the test on the fit thread beside them, merged on a chunk thread), by one
 * worker process and
 * by two (`npm run worker`, the job queue), with the same numbers.
 *
 * The issue's size is 20,000 participants × 400 regions × 5 regressors ×
 * 10,000 rearrangements (≈ 800 GFLOP in the kernel's product); this suite
 * runs it scaled down by SCALE_FACTOR in participants (default 10: 2,000
 * participants, 80 GFLOP — the three runs fit in a few minutes of a shared
 * 2-core machine) and projects the full size from the measured per-chunk
 * cost (a chunk's work grows with the participants; its fixed costs do
 * not). `SCALE_FACTOR=1 npm run bench -- scale` runs the full size.
 *
 * Printed: wall time of each run; the kernel's time per chunk on one
 * thread (timed inside a bench thread after a chunk of warm-up, as chunks
 * run on threads in the embedded path and the workers), and with two
 * chunks at a time on two threads
 * (each core's throughput when both compute, as with two workers here);
 * per-worker throughput against them (and, with as many workers as cores,
 * the whole fit's speed against the embedded path's on the same cores,
 * which does the same work besides the chunks); the time
 * not spent computing (wall − chunks × chunk time ÷ workers, the chunk
 * time on one thread for one worker and two at a time for two: each
 * core's speed when both compute) and its parts
 * — before the first chunk is stored (queue, planning) less one chunk's
 * kernel time, between chunks (queue, slicing, storage) and after the last
 * part (the merge, storing the result); when the last part of the regions
 * before the test (estimates, diagnostics, region rows: parts of 50
 * regions on the workers' fit threads, beside the chunks) was stored, and
 * the time per chunk and worker after that, when the workers compute only
 * chunks; the projected wall time on 10 and 50 workers;
 * and, in the same run right after the kernel and on the same thread, a
 * plain register-blocked reference loop of a chunk's multiply–adds (its
 * 100 regions, two regions × five regressors per pass) with the kernel's
 * share of its speed; the regions before the test's own computing on a fit
 * thread (a part of 50 regions timed after a part of warm-up; storing not
 * included), and the time not computing less that computing spread over
 * the workers — what is left is the queue, storage and the merge.
 *
 * Needs Debian's postgresql (a throw-away server is started, as the tests
 * do). Data are invented by a seeded generator.
 */
import { type ChildProcess, spawn } from "node:child_process";
import os from "node:os";
import { join } from "node:path";
import { count, eq } from "drizzle-orm";
import { Piscina } from "piscina";
import { openServerDatabase } from "../../db/client";
import { migrateDatabase } from "../../db/migrate";
import { fitChunks, fits, memberships, models, studies, users } from "../../db/schema";
import {
  ROWS_PART_REGIONS,
  chunkedFit,
  chunkTask,
  chunkTaskOf,
} from "../../server/jobs/fit-chunks";
import { workerPool } from "../../server/jobs/worker-pool";
import { DEFAULT_UPLOAD_LIMITS } from "../../server/jobs/intake-file";
import { REGION_BLOCK } from "../../server/stats/permutation-kernel";
import { confirmUpload, previewUpload } from "../../server/services/datasets";
import { buildFitInputs, inputsOfFit } from "../../server/services/fit-inputs";
import { createFitJobs } from "../../server/services/fit-store";
import { createFit } from "../../server/services/fits";
import { PreviewStore } from "../../server/services/preview-store";
import { createRng, normalDraw } from "../../server/stats/rng";
import { queueDispatch } from "../../server/worker/fit-dispatch";
import { MessageChannel } from "node:worker_threads";
import type { FitTask, FitTaskOutcome } from "../../server/jobs/fit-task";
import { startPostgresServer } from "../../tests/support/postgres-server";
import { cpuAccount, cpuSnapshot } from "../cpu-account";
import type { KernelTask } from "../kernel-task";
import { specOfRecipe } from "../../contract/recipe";
import { modelSpecSchema } from "../../contract/spec";

const FACTOR = Number(process.env.SCALE_FACTOR ?? 10);
const FULL_N = 20_000;
const N = Math.round(FULL_N / FACTOR);
const REGIONS = 400;
const P = 5; // intercept, accuracy, age, mean_fd, and the tested group
const RESAMPLES = 10_000;
const root = join(import.meta.dirname, "..", "..");

function makeFiles(): { brain: Uint8Array; sheet: Uint8Array } {
  const rng = createRng(2026);
  const lines = [
    [
      "participant_id",
      ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(3, "0")}`),
    ].join(","),
  ];
  const sheet = ["participant_id\tage\taccuracy\tmean_fd\tsite"];
  for (let i = 0; i < N; i++) {
    const id = `sub-${String(i + 1).padStart(5, "0")}`;
    const accuracy = 0.5 + rng.next() / 2;
    const cells = [id];
    for (let r = 0; r < REGIONS; r++)
      cells.push((0.2 * (r % 7 === 0 ? accuracy : 0) + normalDraw(rng)).toFixed(5));
    lines.push(cells.join(","));
    sheet.push(
      [
        id,
        String(18 + rng.int(60)),
        accuracy.toFixed(4),
        (0.05 + rng.next() / 5).toFixed(4),
        rng.next() < 0.5 ? "north" : "south",
      ].join("\t"),
    );
  }
  const enc = new TextEncoder();
  return { brain: enc.encode(`${lines.join("\n")}\n`), sheet: enc.encode(`${sheet.join("\n")}\n`) };
}

/** A worker process; `ready` resolves once it says it takes jobs. */
function startWorker(databaseUrl: string): {
  child: ChildProcess;
  exited: Promise<unknown>;
  ready: Promise<void>;
} {
  // BENCH_PROF=<directory>: each worker process writes CPU profiles of its threads there.
  const profile = process.env.BENCH_PROF
    ? ["--cpu-prof", `--cpu-prof-dir=${process.env.BENCH_PROF}`]
    : [];
  const child = spawn(process.execPath, [...profile, "--import", "tsx", "server/worker/index.ts"], {
    cwd: root,
    env: { NODE_ENV: "production", PATH: process.env.PATH, DATABASE_URL: databaseUrl },
    stdio: ["ignore", "pipe", "pipe"],
  });
  child.stderr?.on("data", (c: Buffer) => process.stderr.write(c));
  const exited = new Promise((resolve) => child.once("exit", resolve));
  const ready = new Promise<void>((resolve, reject) => {
    let out = "";
    child.stdout?.on("data", (c: Buffer) => {
      out += c.toString();
      if (out.includes("is taking fit jobs")) resolve();
    });
    void exited.then(() => reject(new Error("a worker process ended before it took jobs")));
  });
  ready.catch(() => {});
  return { child, exited, ready };
}

export default async function scaleBench(): Promise<void> {
  const gflop = (2 * N * P * REGIONS * (RESAMPLES + 1)) / 1e9;
  console.log(
    `max-T Freedman–Lane: ${N.toLocaleString("en")} participants (the issue's ${FULL_N.toLocaleString("en")} ÷ ${FACTOR}) × ${REGIONS} regions × ${P} regressors × ${RESAMPLES.toLocaleString("en")} rearrangements ≈ ${gflop.toFixed(0)} GFLOP`,
  );
  console.log(`machine load (1-minute average) at start: ${os.loadavg()[0].toFixed(1)}`);
  const server = await startPostgresServer();
  const databaseUrl = await server.createDatabase("covarion_scale");
  const database = await openServerDatabase(databaseUrl);
  const workers: ReturnType<typeof startWorker>[] = [];
  try {
    await migrateDatabase(database.db);
    const db = database.db;
    const [user] = await db
      .insert(users)
      .values({ email: "bench@lab.example", name: "Bench" })
      .returning();
    const actor = { id: user.id, name: user.name, email: user.email };
    const [study] = await db
      .insert(studies)
      .values({ name: "Scale bench", createdBy: user.id })
      .returning();
    await db.insert(memberships).values({ studyId: study.id, userId: user.id, role: "owner" });
    const { brain, sheet } = makeFiles();
    const store = new PreviewStore();
    const t0 = performance.now();
    for (const [kind, fileName, bytes] of [
      ["brain", "brain.csv", brain],
      ["participants", "participants.tsv", sheet],
    ] as const) {
      const preview = await previewUpload(store, {
        studyId: study.id,
        kind,
        fileName,
        upload: { bytes },
        byteSize: bytes.byteLength,
        // The full size's brain table is 65 MB: over the default limit, as a deployment would raise it (MAX_UPLOAD_MB).
        limits: {
          ...DEFAULT_UPLOAD_LIMITS,
          maxBytes: Math.max(DEFAULT_UPLOAD_LIMITS.maxBytes, 2 * bytes.byteLength),
        },
        options: {},
        uploader: actor,
        now: new Date(),
      });
      await confirmUpload(db, store, {
        studyId: study.id,
        datasetId: preview.id,
        actor,
        confirmation: {},
        now: new Date(),
      });
    }
    console.log(
      `data: brain table ${(brain.byteLength / 1e6).toFixed(0)} MB uploaded and confirmed in ${((performance.now() - t0) / 1000).toFixed(1)} s`,
    );
    const spec = modelSpecSchema.parse({
      kind: "two-group",
      group: "site",
      levels: ["north", "south"],
      covariates: ["age", "accuracy", "mean_fd"],
      inference: "permutation",
      resamples: RESAMPLES,
      correction: "maxt",
      seed: 5,
    });
    const [model] = await db
      .insert(models)
      .values({
        studyId: study.id,
        name: "Scale",
        spec,
        regionSelection: "anatomical-or-prior",
        createdBy: user.id,
        updatedBy: user.id,
      })
      .returning();

    // A small fit of the first regions, through the queue before each measured run: a deployed worker has its threads loaded.
    const [warmUp] = await db
      .insert(models)
      .values({
        studyId: study.id,
        name: "Warm-up",
        spec: modelSpecSchema.parse({
          ...spec,
          regions: ["region_001", "region_002", "region_003", "region_004"],
          resamples: 4000,
        }),
        regionSelection: "anatomical-or-prior",
        createdBy: user.id,
        updatedBy: user.id,
      })
      .returning();

    async function runFitVia(
      label: string,
      jobs: ReturnType<typeof createFitJobs>,
      modelId = model.id,
      workerPids: readonly number[] = [],
    ) {
      const cpuBefore = cpuSnapshot(workerPids);
      const start = performance.now();
      const startedAt = Date.now();
      const view = await createFit(db, jobs, actor, study, modelId, new Date(), "bench");
      for (;;) {
        const [row] = await db
          .select({ status: fits.status, error: fits.error })
          .from(fits)
          .where(eq(fits.id, view.id));
        if (row.status === "done") break;
        if (row.status === "failed" || row.status === "cancelled")
          throw new Error(`${label}: fit ${row.status}: ${row.error}`);
        await new Promise((r) => setTimeout(r, 100));
      }
      const wall = (performance.now() - start) / 1000;
      const cpu = cpuAccount(cpuBefore, cpuSnapshot(workerPids));
      const [row] = await db.select().from(fits).where(eq(fits.id, view.id));
      return { id: view.id, wall, startedAt, result: JSON.stringify(row.result), cpu };
    }

    const embeddedJobs = createFitJobs(db, { threads: 1 });
    const embedded = await runFitVia("embedded", embeddedJobs);
    await embeddedJobs.close();
    console.log(
      `embedded path (plan and chunks on ${embeddedJobs.chunkThreads} chunk threads, regions before the test on the fit thread beside them, merge on a chunk thread): ${embedded.wall.toFixed(1)} s`,
    );
    if (embedded.cpu) console.log(`  ${embedded.cpu} (the embedded path runs in this process)`);

    // The kernel's cost per chunk, on one thread (the same chunks the workers compute), timed in
    // the thread after a chunk of warm-up, as the embedded path and the workers run chunks.
    const [fitRow] = await db.select().from(fits).where(eq(fits.id, embedded.id));
    const { data } = await buildFitInputs(db, inputsOfFit(fitRow));
    const plan = chunkedFit(specOfRecipe(fitRow.recipe), data);
    if (!plan) throw new Error("the fit is not split");
    const control = new SharedArrayBuffer(8);
    const sample = [0, 1, plan.blocks, plan.chunks - 1];
    const kernelThread = new Piscina({
      filename: new URL("../kernel-task.ts", import.meta.url).href,
      execArgv: ["--import", "tsx"],
      minThreads: 1,
      maxThreads: 1,
    });
    const onKernelThread = (task: KernelTask) => kernelThread.run(task) as Promise<number>;
    const chunkSeconds = await onKernelThread({
      type: "chunks",
      warmUp: chunkTask(plan, sample[0], control),
      tasks: sample.map((c) => chunkTask(plan, c, control)),
    });
    const computeSeconds = chunkSeconds * plan.chunks;
    console.log(
      `chunks: ${plan.chunks} (${plan.regionChunks.length} region chunks × ${plan.blocks} rearrangement blocks); kernel ${(chunkSeconds * 1000).toFixed(0)} ms per chunk on one thread (timed in the thread, after a chunk of warm-up; ${(gflop / computeSeconds).toFixed(2)} GFLOP/s), ${computeSeconds.toFixed(1)} s for all`,
    );
    // Reference loop: a chunk's multiply–adds (its region chunk's regions against five columns),
    // register-blocked, on one thread, timed right after the kernel so that both meet the same machine.
    const refGflops = await onKernelThread({ type: "reference", n: N, regions: REGION_BLOCK });
    await kernelThread.destroy();
    console.log(
      `reference loop (a chunk's ${REGION_BLOCK} regions × ${N.toLocaleString("en")} participants, two regions × five regressors per pass, one thread): ${refGflops.toFixed(2)} GFLOP/s; the kernel's chunks reach ${((100 * gflop) / computeSeconds / refGflops).toFixed(0)} % of it (target ≥ 85 %)`,
    );
    // The regions before the test as a worker's fit thread computes them beside the chunks
    // (estimates, diagnostics, plots, the rows' stored text; storing them is not included): a
    // part of ROWS_PART_REGIONS regions timed on a fit thread after one part of warm-up.
    const fitThread = workerPool("fit-task.ts", { minThreads: 1, maxThreads: 1 });
    const rowsPart = async (from: number, to: number) => {
      const channel = new MessageChannel();
      channel.port1.on("message", () => {});
      const start = performance.now();
      const task: FitTask = {
        spec: specOfRecipe(fitRow.recipe),
        data,
        port: channel.port2,
        rows: "only",
        regionRange: [from, to],
        fullPriority: true,
      };
      const outcome = (await fitThread.run(task, {
        transferList: [channel.port2],
      })) as FitTaskOutcome;
      const seconds = (performance.now() - start) / 1000;
      channel.port1.close();
      if (!outcome.ok)
        throw new Error(`a part of the regions before the test failed: ${outcome.message}`);
      return seconds;
    };
    const partCountOfRegions = Math.ceil(REGIONS / ROWS_PART_REGIONS);
    await rowsPart(0, ROWS_PART_REGIONS);
    const rowsSeconds =
      (await rowsPart(ROWS_PART_REGIONS, 2 * ROWS_PART_REGIONS)) * partCountOfRegions;
    await fitThread.destroy();
    console.log(
      `the regions before the test (estimates, diagnostics, plots, their rows' text; storing not included): ${((1000 * rowsSeconds) / REGIONS).toFixed(0)} ms per region on a fit thread, ${rowsSeconds.toFixed(1)} s for all ${REGIONS}`,
    );
    // The same chunks two at a time on two threads (the chunk threads' own module, normal priority):
    // the kernel's per-core throughput when both cores compute, as two workers on this machine do.
    const pair = workerPool("chunk-task.ts", { minThreads: 2, maxThreads: 2 });
    const onThread = (c: number) =>
      pair.run({ ...chunkTaskOf(plan, c, control), fullPriority: true }) as Promise<{
        ok: boolean;
      }>;
    await Promise.all([onThread(0), onThread(1)]);
    const p0 = performance.now();
    const pairs = [sample.slice(0, 2), sample.slice(2, 4)];
    for (const two of pairs) {
      const outcomes = await Promise.all(two.map(onThread));
      if (!outcomes.every((o) => o.ok)) throw new Error("a chunk failed on the thread pair");
    }
    const chunkSecondsBoth = (performance.now() - p0) / 1000 / pairs.length;
    await pair.destroy();
    console.log(
      `the same chunks two at a time on two threads: ${(chunkSecondsBoth * 1000).toFixed(0)} ms per chunk and core (${(gflop / (chunkSecondsBoth * plan.chunks)).toFixed(2)} GFLOP/s per core, ${((100 * chunkSeconds) / chunkSecondsBoth).toFixed(0)} % of one thread alone)`,
    );

    const results: {
      workers: number;
      wall: number;
      same: boolean;
      beforeFirst: number;
      mergeSeconds: number;
      beforeTestAt: number;
      firstChunks: number[];
      /** Seconds per chunk and worker once the regions before the test were stored (only chunks left), and how many such chunks. */
      tailChunk: number | null;
      tailCount: number;
      /** Where the machine's CPU time went during the run (cpu-account.ts). */
      cpu: string | null;
    }[] = [];
    for (const count of [1, 2]) {
      while (workers.length < count) workers.push(startWorker(databaseUrl));
      await Promise.all(workers.map((w) => w.ready));
      const jobs = createFitJobs(db, { dispatch: queueDispatch(db) });
      await runFitVia(`warm-up on ${count} worker(s)`, jobs, warmUp.id);
      const pids = workers.map((w) => w.child.pid).filter((pid) => pid !== undefined);
      const run = await runFitVia(`${count} worker(s)`, jobs, model.id, pids);
      await jobs.close();
      const parts = await db
        .select({ at: fitChunks.computedAt, block: fitChunks.block, worker: fitChunks.workerId })
        .from(fitChunks)
        .where(eq(fitChunks.fitId, run.id))
        .orderBy(fitChunks.computedAt);
      const [fitDone] = await db
        .select({ finishedAt: fits.finishedAt })
        .from(fits)
        .where(eq(fits.id, run.id));
      const seconds = (at: Date | undefined) => ((at?.getTime() ?? 0) - run.startedAt) / 1000;
      const firstChunk = parts.find((p) => p.block >= 0)?.at;
      // Each worker's first chunk: a worker that did not plan the fit reads its region chunk's stored setup first.
      const firstOf = new Map<string, Date>();
      for (const p of parts)
        if (p.block >= 0 && !firstOf.has(p.worker)) firstOf.set(p.worker, p.at);
      // Chunks stored after the last part of the regions before the test: the workers compute only chunks then.
      const lastRows = parts.findLast((p) => p.block === -1)?.at.getTime() ?? 0;
      const tail = parts.filter((p) => p.block >= 0 && p.at.getTime() > lastRows);
      const tailChunk =
        tail.length >= 2
          ? ((tail[tail.length - 1].at.getTime() - tail[0].at.getTime()) /
              1000 /
              (tail.length - 1)) *
            count
          : null;
      results.push({
        cpu: run.cpu,
        tailChunk,
        tailCount: tail.length,
        workers: count,
        wall: run.wall,
        same: run.result === embedded.result,
        beforeFirst: seconds(firstChunk) - (count >= 2 ? chunkSecondsBoth : chunkSeconds),
        mergeSeconds: seconds(fitDone.finishedAt ?? undefined) - seconds(parts.at(-1)?.at),
        beforeTestAt: seconds(parts.findLast((p) => p.block === -1)?.at),
        firstChunks: [...firstOf.values()].map((at) => seconds(at)),
      });
    }
    const [{ stored }] = await db
      .select({ stored: count() })
      .from(fitChunks)
      .innerJoin(fits, eq(fits.id, fitChunks.fitId))
      .where(eq(fits.modelId, model.id));
    for (const r of results) {
      const perWorker = gflop / (r.wall * r.workers);
      const kernel = gflop / computeSeconds;
      // With as many workers as cores, each core's kernel is the two-thread figure, and so is
      // the time the chunks take when no time is lost.
      const perCoreChunk = r.workers >= 2 ? chunkSecondsBoth : chunkSeconds;
      const kernelPerCore = gflop / (perCoreChunk * plan.chunks);
      const overhead = r.wall - (perCoreChunk * plan.chunks) / r.workers;
      const between = overhead - r.beforeFirst - r.mergeSeconds;
      // Less the regions before the test's own computing, spread over the workers: what is left is queue, storage and merge.
      const besides = overhead - rowsSeconds / r.workers;
      console.log(
        `${r.workers} worker process(es): ${r.wall.toFixed(1)} s · per worker ${perWorker.toFixed(2)} GFLOP/s = ${((100 * perWorker) / kernel).toFixed(0)} % of the kernel on one thread${r.workers >= 2 ? `, ${((100 * perWorker) / kernelPerCore).toFixed(0)} % of its per-core throughput with both cores computing; the whole fit at ${((100 * embedded.wall) / r.wall).toFixed(0)} % of the embedded path's speed on the same ${embeddedJobs.chunkThreads} cores` : ""} · not computing ${overhead.toFixed(1)} s (${((100 * overhead) / r.wall).toFixed(1)} % of the run: before the first chunk ${r.beforeFirst.toFixed(1)} s, between chunks ${between.toFixed(1)} s = ${((1000 * between * r.workers) / plan.chunks).toFixed(0)} ms per chunk and worker, after the last part — merge and storing the result — ${r.mergeSeconds.toFixed(2)} s; less the regions before the test's own computing, ${(rowsSeconds / r.workers).toFixed(1)} s per worker: ${besides.toFixed(1)} s = ${((100 * besides) / r.wall).toFixed(1)} % for the queue, storing and the merge) · the regions before the test stored by ${r.beforeTestAt.toFixed(1)} s${r.tailChunk === null ? "" : ` · after them, ${r.tailCount} chunks at ${(1000 * r.tailChunk).toFixed(0)} ms per chunk and worker (${((100 * perCoreChunk) / r.tailChunk).toFixed(0)} % of the kernel's ${r.workers >= 2 ? "two-at-a-time" : "one-thread"} time)`} · each worker's first chunk stored at ${r.firstChunks.map((x) => `${x.toFixed(1)} s`).join(", ")} · same numbers as the embedded path: ${r.same ? "yes" : "NO"}`,
      );
    }
    for (const r of results) if (r.cpu) console.log(`  ${r.workers} worker process(es): ${r.cpu}`);
    console.log(`chunk rows stored: ${stored} (each chunk of each run once)`);

    // Projection to the issue's size: a chunk's kernel time grows with the participants, and so does the part beside the chunks.
    const fullChunk = chunkSeconds * FACTOR;
    const first = results[0];
    const fixed = Math.max(0, first.wall - computeSeconds - first.mergeSeconds) / plan.chunks;
    const rowsParts = Math.ceil(REGIONS / ROWS_PART_REGIONS);
    for (const w of [10, 50]) {
      const chunks = Math.ceil(plan.chunks / w) * (fullChunk + fixed);
      // The 1-worker run computed every part on one fit thread, beside its chunks.
      const beside = (first.beforeTestAt * FACTOR * Math.ceil(rowsParts / w)) / rowsParts;
      const wall = Math.max(chunks, beside) + first.mergeSeconds;
      console.log(
        `projected at ${FULL_N.toLocaleString("en")} participants on ${w} workers: ${wall.toFixed(0)} s (${plan.chunks} chunks of ${fullChunk.toFixed(1)} s + ${(fixed * 1000).toFixed(0)} ms each besides: ${chunks.toFixed(0)} s; the regions before the test, ${rowsParts} parts beside them, ≤ ${beside.toFixed(0)} s from this run's ×${FACTOR}; the merge ${first.mergeSeconds.toFixed(1)} s after)`,
      );
    }
  } finally {
    for (const w of workers) w.child.kill("SIGTERM");
    await Promise.all(workers.map((w) => w.exited));
    await database.close();
    await server.stop();
  }
}
