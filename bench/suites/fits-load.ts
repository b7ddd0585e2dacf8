/**
 * Speed under load: the real server (a child process on 127.0.0.1 with a
 * fresh data directory, demo mode) runs a 10,000-rearrangement permutation
 * fit of 400 regions × 500 participants (association with a covariate,
 * Freedman–Lane), uploaded through the API from a seeded generator. While
 * it runs, 20 concurrent readers (keep-alive HTTP) alternate
 * GET /api/fits/:fitId and GET /api/studies for a bounded time — first
 * without any pause (the harshest load: latency is then 20 ÷ the server's
 * throughput), then pausing 250 ms between requests as a screen polling
 * the fit would; the suite prints p50/p95/max latency per route, with the
 * same readers on an idle server first for comparison. Target: p95 ≤ 100 ms.
 * The readers run in this process on the same machine, and the fit's
 * worker thread takes one of its cores: on a 2-core machine the server's
 * request thread shares the other core with the readers (the worker thread
 * runs at a lower priority, server/jobs/thread-priority.ts).
 *
 * Then the one-region preview round trip (POST
 * /api/fits/:fitId/regions/:region/preview, N = 500, one participant set
 * aside): target ≤ 100 ms.
 *
 * Then reads of the finished fit's view while a second 10,000-rearrangement
 * fit of the same size runs: 20 readers without pause asking for
 * GET /api/fits/:fitId with `Accept-Encoding: gzip` as browsers do (the
 * kept, pre-compressed body, services/fit-view-body.ts), then the same
 * readers revalidating with If-None-Match (304). Target: ≥ 500 requests/s
 * and p95 ≤ 100 ms. The readers count the bytes but do not decode them
 * (decoding 20 answers at once would take the readers' share of the core
 * the server needs); one answer is decoded first to check it, and the
 * sizes of the first view (the fit view, its first region's detail and the
 * first page of that region's participants, compressed) are printed. Beside
 * the rates, the CPU time the server's request thread spent per answer
 * (Linux, from /proc): unlike latency it hardly depends on what else the
 * machine runs, so it tells the rate the request thread could keep with a
 * core of its own.
 */
import { Agent, request } from "node:http";
import os from "node:os";
import { gunzipSync } from "node:zlib";
import { createRng } from "../../server/stats/rng";
import {
  latencySummary,
  mainThreadCpuMs,
  startBenchServer,
  uploadDataset,
} from "../server-process";

const PARTICIPANTS = 500;
const REGIONS = 400;
const RESAMPLES = 10_000;
const READERS = 20;
/** Seconds of each reading phase while the fit runs: readers without pause, then readers pausing PAUSE_MS between requests. */
const READ_SECONDS = 5;
const PAUSE_MS = 250;
const PREVIEWS = 30;
/** Seconds of each phase reading the finished fit while the second fit runs. */
const DONE_READ_SECONDS = 4;

function makeFiles(): { brain: string; sheet: string } {
  const rng = createRng(7070);
  const header = [
    "participant_id",
    ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(3, "0")}`),
  ];
  const lines = [header.join(",")];
  const sheet = ["participant_id\tage\taccuracy"];
  for (let i = 0; i < PARTICIPANTS; i++) {
    const id = `sub-${String(i + 1).padStart(4, "0")}`;
    const accuracy = 0.5 + rng.next() / 2;
    const cells = [id];
    for (let r = 0; r < REGIONS; r++)
      cells.push((0.3 * (r % 5 === 0 ? accuracy : 0) + rng.next() * 2 - 1).toFixed(5));
    lines.push(cells.join(","));
    sheet.push([id, String(18 + Math.floor(rng.next() * 50)), accuracy.toFixed(3)].join("\t"));
  }
  return { brain: `${lines.join("\n")}\n`, sheet: `${sheet.join("\n")}\n` };
}

export default async function fitsLoad(): Promise<void> {
  const server = await startBenchServer();
  const { base, cookie, child } = server;
  const agent = new Agent({ keepAlive: true, maxSockets: READERS + 2 });

  let reconnects = 0;

  /**
   * One request. A GET whose kept-alive connection was closed by the server
   * just as it was reused (ECONNRESET) is sent again once on a new
   * connection, as browsers do; `reconnects` counts those.
   */
  async function call(
    method: string,
    path: string,
    body?: unknown,
  ): Promise<{ status: number; json: unknown; ms: number }> {
    try {
      return await callOnce(method, path, body);
    } catch (error) {
      if (method !== "GET" || (error as NodeJS.ErrnoException).code !== "ECONNRESET") throw error;
      reconnects++;
      return callOnce(method, path, body);
    }
  }

  async function callOnce(
    method: string,
    path: string,
    body?: unknown,
  ): Promise<{ status: number; json: unknown; ms: number }> {
    const t0 = performance.now();
    return new Promise((resolve, reject) => {
      const payload = body === undefined ? undefined : JSON.stringify(body);
      const req = request(
        `${base}${path}`,
        {
          method,
          agent,
          headers: { Cookie: cookie, ...(payload ? { "Content-Type": "application/json" } : {}) },
        },
        (res) => {
          const chunks: Buffer[] = [];
          res.on("data", (c: Buffer) => chunks.push(c));
          res.on("end", () => {
            const text = Buffer.concat(chunks).toString("utf8");
            let json: unknown = null;
            try {
              json = text ? JSON.parse(text) : null;
            } catch {
              json = text;
            }
            resolve({ status: res.statusCode ?? 0, json, ms: performance.now() - t0 });
          });
        },
      );
      req.on("error", (error: NodeJS.ErrnoException) =>
        reject(
          Object.assign(new Error(`${method} ${path}: ${error.message}`), { code: error.code }),
        ),
      );
      if (payload) req.write(payload);
      req.end();
    });
  }

  /** A GET whose answer is counted, not decoded: status, time, bytes as sent, headers. */
  function getRaw(
    path: string,
    headers: Record<string, string>,
  ): Promise<{ status: number; ms: number; bytes: Buffer; headers: Record<string, unknown> }> {
    const t0 = performance.now();
    return new Promise((resolve, reject) => {
      const req = request(
        `${base}${path}`,
        { agent, headers: { Cookie: cookie, ...headers } },
        (res) => {
          const chunks: Buffer[] = [];
          res.on("data", (c: Buffer) => chunks.push(c));
          res.on("end", () =>
            resolve({
              status: res.statusCode ?? 0,
              ms: performance.now() - t0,
              bytes: Buffer.concat(chunks),
              headers: res.headers,
            }),
          );
        },
      );
      req.on("error", (error: NodeJS.ErrnoException) => {
        if (error.code === "ECONNRESET") {
          reconnects++;
          getRaw(path, headers).then(resolve, reject);
        } else reject(error);
      });
      req.end();
    });
  }

  /** READERS concurrent readers of one path without pause, for `seconds` or until `stop()`: latencies, answers per second, statuses, bytes. */
  async function hammer(
    seconds: number,
    path: string,
    headers: Record<string, string>,
    stop: () => boolean,
  ) {
    const times: number[] = [];
    const statuses = new Map<number, number>();
    let bytes = 0;
    const cpuBefore = mainThreadCpuMs(child.pid);
    const start = performance.now();
    const until = start + seconds * 1000;
    await Promise.all(
      Array.from({ length: READERS }, async () => {
        while (performance.now() < until && !stop()) {
          const r = await getRaw(path, headers);
          times.push(r.ms);
          bytes += r.bytes.length;
          statuses.set(r.status, (statuses.get(r.status) ?? 0) + 1);
        }
      }),
    );
    const elapsed = (performance.now() - start) / 1000;
    const cpuAfter = mainThreadCpuMs(child.pid);
    const cpuPerAnswer =
      cpuBefore === null || cpuAfter === null ? null : (cpuAfter - cpuBefore) / times.length;
    return { times, perSecond: times.length / elapsed, elapsed, statuses, bytes, cpuPerAnswer };
  }

  async function must(
    method: string,
    path: string,
    body?: unknown,
  ): Promise<Record<string, unknown>> {
    const res = await call(method, path, body);
    if (res.status >= 300)
      throw new Error(
        `${method} ${path} answered ${res.status}: ${JSON.stringify(res.json).slice(0, 300)}`,
      );
    return res.json as Record<string, unknown>;
  }

  /** READERS concurrent readers alternating `first()` and GET /api/studies for `seconds` (or until `stop()`). */
  async function readFor(
    seconds: number,
    first: () => string,
    stop: (last: unknown) => boolean = () => false,
    pauseMs = 0,
  ): Promise<{ first: number[]; second: number[]; errors: number; last: unknown }> {
    const out = { first: [] as number[], second: [] as number[], errors: 0, last: null as unknown };
    const until = performance.now() + seconds * 1000;
    await Promise.all(
      Array.from({ length: READERS }, async (_, k) => {
        let turn = k % 2;
        while (performance.now() < until && !stop(out.last)) {
          const r = await call("GET", turn === 0 ? first() : "/api/studies");
          if (r.status !== 200) out.errors++;
          (turn === 0 ? out.first : out.second).push(r.ms);
          if (turn === 0) out.last = r.json;
          turn = 1 - turn;
          if (pauseMs > 0) await new Promise((resolve) => setTimeout(resolve, pauseMs));
        }
      }),
    );
    return out;
  }

  try {
    const study = await must("POST", "/api/studies", { name: "Load benchmark" });
    const studyId = study.id as string;
    const files = makeFiles();
    const t0 = performance.now();
    await uploadDataset(server, studyId, "brain", "bench_brain-table.csv", files.brain);
    await uploadDataset(server, studyId, "participants", "bench_participants.tsv", files.sheet);
    console.log(
      `uploaded ${PARTICIPANTS} participants × ${REGIONS} regions in ${((performance.now() - t0) / 1000).toFixed(1)} s`,
    );
    const model = await must("POST", `/api/studies/${studyId}/models`, {
      name: "Load",
      regionSelection: "independent-data",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "permutation",
        resamples: RESAMPLES,
        correction: "bh",
      },
    });
    // Baseline: the same readers with no fit running.
    const idle = await readFor(3, () => `/api/studies/${studyId}/fits`);
    console.log(
      `machine: ${os.cpus().length} cores, load (1-minute average) ${os.loadavg()[0].toFixed(1)}`,
    );
    console.log(`no fit running, ${READERS} readers for 3 s:`);
    console.log(latencySummary("  GET /api/studies/:studyId/fits", idle.first));
    console.log(latencySummary("  GET /api/studies", idle.second));
    const fit = await must("POST", `/api/studies/${studyId}/fits`, { modelId: model.id });
    const fitId = fit.id as string;
    const fitStart = performance.now();
    for (;;) {
      const now = await must("GET", `/api/fits/${fitId}`);
      if (now.status === "running") break;
      if (now.status !== "queued")
        throw new Error(`the fit is ${now.status}: ${JSON.stringify(now.error)}`);
      await new Promise((r) => setTimeout(r, 50));
    }
    console.log(
      `fit: ${REGIONS} regions × ${PARTICIPANTS} participants, ${RESAMPLES.toLocaleString("en")} rearrangements (Freedman–Lane), running`,
    );
    const running = (last: unknown) =>
      last !== null && (last as { status: string }).status !== "running";
    const phases = [
      { label: `${READERS} readers, no pause, ${READ_SECONDS} s`, pause: 0 },
      {
        label: `${READERS} readers pausing ${PAUSE_MS} ms between requests (a screen polling), ${READ_SECONDS} s`,
        pause: PAUSE_MS,
      },
    ];
    for (const phase of phases) {
      const loaded = await readFor(READ_SECONDS, () => `/api/fits/${fitId}`, running, phase.pause);
      const last = loaded.last as { status: string; progress: { fraction: number } } | null;
      console.log(`${phase.label}:`);
      console.log(latencySummary("  GET /api/fits/:fitId", loaded.first));
      console.log(latencySummary("  GET /api/studies", loaded.second));
      console.log(
        latencySummary("  both (target p95 ≤ 100 ms)", [...loaded.first, ...loaded.second]),
      );
      console.log(
        `  errors: ${loaded.errors}; connections reopened: ${reconnects}; the fit was ${last?.status ?? "?"} at ${((last?.progress.fraction ?? 0) * 100).toFixed(0)} % at the end of this phase`,
      );
      if (last && last.status !== "running") break;
    }
    for (;;) {
      const now = await must("GET", `/api/fits/${fitId}`);
      if (now.status === "done") break;
      if (now.status !== "running" && now.status !== "queued")
        throw new Error(`the fit is ${now.status}: ${JSON.stringify(now.error)}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    console.log(
      `fit done in ${((performance.now() - fitStart) / 1000).toFixed(1)} s (worker threads: one per core less one, at least one)`,
    );

    await must("POST", `/api/studies/${studyId}/set-asides`, {
      participant: "sub-0007",
      region: "region_001",
      reason: "Benchmark: set aside before the analysis",
    });
    const previewTimes: number[] = [];
    let n = 0;
    for (let k = 0; k < PREVIEWS; k++) {
      const r = await call("POST", `/api/fits/${fitId}/regions/region_001/preview`, {});
      if (r.status !== 200)
        throw new Error(`preview answered ${r.status}: ${JSON.stringify(r.json).slice(0, 300)}`);
      n = (r.json as { preview: { n: number } }).preview.n;
      previewTimes.push(r.ms);
    }
    console.log(`first preview (data already built by the fit): ${previewTimes[0].toFixed(1)} ms`);
    console.log(latencySummary(`preview, N = ${n} (target ≤ 100 ms)`, previewTimes));

    // The finished fit's view, read while a second fit of the same size runs.
    const gzip = { "Accept-Encoding": "gzip" };
    const view = await getRaw(`/api/fits/${fitId}`, gzip);
    if (view.status !== 200 || view.headers["content-encoding"] !== "gzip")
      throw new Error(
        `the fit view answered ${view.status} (${String(view.headers["content-encoding"])})`,
      );
    const shown = JSON.parse(gunzipSync(view.bytes).toString("utf8")) as {
      result: { regions: { region: string }[] };
    };
    const plain = await getRaw(`/api/fits/${fitId}`, {});
    const region = shown.result.regions[0].region;
    const detail = await getRaw(`/api/fits/${fitId}/regions/${region}`, gzip);
    const page = await getRaw(`/api/fits/${fitId}/regions/${region}/participants?limit=50`, gzip);
    const kB = (b: number) => `${(b / 1000).toFixed(1)} kB`;
    console.log(
      `first view, compressed: fit view ${kB(view.bytes.length)} (${kB(plain.bytes.length)} as plain JSON), first region's detail ${kB(detail.bytes.length)}, first page of 50 participants ${kB(page.bytes.length)}; together ${kB(view.bytes.length + detail.bytes.length + page.bytes.length)} (target < 100 kB)`,
    );
    const second = await must("POST", `/api/studies/${studyId}/fits`, { modelId: model.id });
    const secondId = second.id as string;
    let secondRunning = true;
    let secondFraction = 0;
    for (;;) {
      const now = await must("GET", `/api/fits/${secondId}`);
      if (now.status === "running") break;
      if (now.status !== "queued") throw new Error(`the second fit is ${now.status}`);
      await new Promise((r) => setTimeout(r, 50));
    }
    // A watcher (not counted) notes when the second fit stops running.
    const watcher = (async () => {
      while (secondRunning) {
        const now = await must("GET", `/api/fits/${secondId}`);
        secondFraction = (now.progress as { fraction: number }).fraction;
        if (now.status !== "running") secondRunning = false;
        else await new Promise((r) => setTimeout(r, 500));
      }
    })();
    console.log(
      `second fit (${RESAMPLES.toLocaleString("en")} rearrangements) running; machine load (1-minute average) ${os.loadavg()[0].toFixed(1)}; ${READERS} readers of the finished fit's view, no pause:`,
    );
    const etag = String(view.headers.etag);
    for (const phase of [
      { label: `  full answers (gzip, ${kB(view.bytes.length)} each)`, headers: gzip },
      {
        label: "  revalidations (If-None-Match → 304)",
        headers: { ...gzip, "If-None-Match": etag },
      },
    ]) {
      const loaded = await hammer(
        DONE_READ_SECONDS,
        `/api/fits/${fitId}`,
        phase.headers,
        () => !secondRunning,
      );
      console.log(latencySummary(phase.label, loaded.times));
      const statuses = [...loaded.statuses]
        .map(([status, count]) => `${count} × ${status}`)
        .join(", ");
      const cpu =
        loaded.cpuPerAnswer === null
          ? ""
          : `; server request thread ${loaded.cpuPerAnswer.toFixed(2)} ms of CPU per answer (≈ ${(1000 / loaded.cpuPerAnswer).toFixed(0)} answers/s on a core of its own)`;
      console.log(
        `    ${loaded.perSecond.toFixed(0)} requests/s over ${loaded.elapsed.toFixed(1)} s (target ≥ 500 requests/s, p95 ≤ 100 ms); ${statuses}; ${(loaded.bytes / loaded.elapsed / 1e6).toFixed(1)} MB/s${cpu}; the second fit was ${secondRunning ? "running" : "no longer running"} at ${(secondFraction * 100).toFixed(0)} %`,
      );
      if (!secondRunning) break;
    }
    secondRunning = false;
    await watcher;
  } catch (error) {
    console.log(
      `server (exit code ${child.exitCode}, signal ${child.signalCode}) output:\n${server.log().split("\n").slice(-30).join("\n")}`,
    );
    throw error;
  } finally {
    agent.destroy();
    await server.stop();
  }
}
