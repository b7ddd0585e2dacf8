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
 */
import { spawn } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { Agent, request } from "node:http";
import { createServer } from "node:net";
import os from "node:os";
import { join } from "node:path";
import { createRng } from "../../server/stats/rng";

const PARTICIPANTS = 500;
const REGIONS = 400;
const RESAMPLES = 10_000;
const READERS = 20;
/** Seconds of each reading phase while the fit runs: readers without pause, then readers pausing PAUSE_MS between requests. */
const READ_SECONDS = 5;
const PAUSE_MS = 250;
const PREVIEWS = 30;

function makeFiles(): { brain: string; sheet: string } {
  const rng = createRng(7070);
  const header = ["participant_id", ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(3, "0")}`)];
  const lines = [header.join(",")];
  const sheet = ["participant_id\tage\taccuracy"];
  for (let i = 0; i < PARTICIPANTS; i++) {
    const id = `sub-${String(i + 1).padStart(4, "0")}`;
    const accuracy = 0.5 + rng.next() / 2;
    const cells = [id];
    for (let r = 0; r < REGIONS; r++) cells.push((0.3 * (r % 5 === 0 ? accuracy : 0) + rng.next() * 2 - 1).toFixed(5));
    lines.push(cells.join(","));
    sheet.push([id, String(18 + Math.floor(rng.next() * 50)), accuracy.toFixed(3)].join("\t"));
  }
  return { brain: `${lines.join("\n")}\n`, sheet: `${sheet.join("\n")}\n` };
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.listen(0, "127.0.0.1", () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
    s.on("error", reject);
  });
}

function percentile(sorted: readonly number[], q: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))];
}

function summary(label: string, times: number[]): string {
  const s = [...times].sort((a, b) => a - b);
  return `${label.padEnd(34)} n = ${String(s.length).padStart(5)}   p50 ${percentile(s, 0.5).toFixed(1).padStart(6)} ms   p95 ${percentile(s, 0.95).toFixed(1).padStart(6)} ms   max ${s[s.length - 1].toFixed(1).padStart(7)} ms`;
}

export default async function fitsLoad(): Promise<void> {
  const dataDir = mkdtempSync(join(os.tmpdir(), "covarion-bench-"));
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  // BENCH_PROF=<directory>: the server writes a CPU profile of its run there (open it in a Chromium developer tools window).
  const profile = process.env.BENCH_PROF ? ["--cpu-prof", `--cpu-prof-dir=${process.env.BENCH_PROF}`] : [];
  const child = spawn(process.execPath, [...profile, "--import", "tsx", "server/index.ts"], {
    env: { ...process.env, NODE_ENV: "development", DATA_DIR: dataDir, PORT: String(port), HOST: "127.0.0.1", PUBLIC_URL: base },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let log = "";
  const keep = (d: unknown) => {
    log += String(d);
  };
  child.stdout.on("data", keep);
  child.stderr.on("data", keep);
  const agent = new Agent({ keepAlive: true, maxSockets: READERS + 2 });
  let cookie = "";

  let reconnects = 0;

  /**
   * One request. A GET whose kept-alive connection was closed by the server
   * just as it was reused (ECONNRESET) is sent again once on a new
   * connection, as browsers do; `reconnects` counts those.
   */
  async function call(method: string, path: string, body?: unknown): Promise<{ status: number; json: unknown; ms: number }> {
    try {
      return await callOnce(method, path, body);
    } catch (error) {
      if (method !== "GET" || (error as NodeJS.ErrnoException).code !== "ECONNRESET") throw error;
      reconnects++;
      return callOnce(method, path, body);
    }
  }

  async function callOnce(method: string, path: string, body?: unknown): Promise<{ status: number; json: unknown; ms: number }> {
    const t0 = performance.now();
    return new Promise((resolve, reject) => {
      const payload = body === undefined ? undefined : JSON.stringify(body);
      const req = request(
        `${base}${path}`,
        { method, agent, headers: { Cookie: cookie, ...(payload ? { "Content-Type": "application/json" } : {}) } },
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
      req.on("error", (error: NodeJS.ErrnoException) => reject(Object.assign(new Error(`${method} ${path}: ${error.message}`), { code: error.code })));
      if (payload) req.write(payload);
      req.end();
    });
  }

  async function must(method: string, path: string, body?: unknown): Promise<Record<string, unknown>> {
    const res = await call(method, path, body);
    if (res.status >= 300) throw new Error(`${method} ${path} answered ${res.status}: ${JSON.stringify(res.json).slice(0, 300)}`);
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

  async function upload(studyId: string, kind: string, fileName: string, text: string): Promise<void> {
    const form = new FormData();
    form.set("kind", kind);
    form.set("file", new Blob([text]), fileName);
    const res = await fetch(`${base}/api/studies/${studyId}/datasets`, { method: "POST", body: form, headers: { Cookie: cookie } });
    const preview = (await res.json()) as { id: string };
    if (res.status !== 201) throw new Error(`upload ${fileName} answered ${res.status}: ${JSON.stringify(preview).slice(0, 300)}`);
    await must("POST", `/api/studies/${studyId}/datasets/${preview.id}/confirm`, {});
  }

  try {
    const started = performance.now();
    for (;;) {
      if (child.exitCode !== null) throw new Error(`the server stopped:\n${log}`);
      try {
        if ((await call("GET", "/api/health")).status === 200) break;
      } catch {
        // not listening yet
      }
      if (performance.now() - started > 120_000) throw new Error(`the server did not start:\n${log}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    const signIn = await fetch(`${base}/api/dev/demo-sign-in`, {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ email: "analyst@demo.covarion.test" }),
    });
    cookie = String(signIn.headers.get("set-cookie")).split(";")[0];
    const study = await must("POST", "/api/studies", { name: "Load benchmark" });
    const studyId = study.id as string;
    const files = makeFiles();
    const t0 = performance.now();
    await upload(studyId, "brain", "bench_brain-table.csv", files.brain);
    await upload(studyId, "participants", "bench_participants.tsv", files.sheet);
    console.log(`uploaded ${PARTICIPANTS} participants × ${REGIONS} regions in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
    const model = await must("POST", `/api/studies/${studyId}/models`, {
      name: "Load",
      regionSelection: "independent-data",
      spec: { kind: "association", predictor: "accuracy", covariates: ["age"], inference: "permutation", resamples: RESAMPLES, correction: "bh" },
    });
    // Baseline: the same readers with no fit running.
    const idle = await readFor(3, () => `/api/studies/${studyId}/fits`);
    console.log(`machine: ${os.cpus().length} cores, load (1-minute average) ${os.loadavg()[0].toFixed(1)}`);
    console.log(`no fit running, ${READERS} readers for 3 s:`);
    console.log(summary("  GET /api/studies/:studyId/fits", idle.first));
    console.log(summary("  GET /api/studies", idle.second));
    const fit = await must("POST", `/api/studies/${studyId}/fits`, { modelId: model.id });
    const fitId = fit.id as string;
    const fitStart = performance.now();
    for (;;) {
      const now = await must("GET", `/api/fits/${fitId}`);
      if (now.status === "running") break;
      if (now.status !== "queued") throw new Error(`the fit is ${now.status}: ${JSON.stringify(now.error)}`);
      await new Promise((r) => setTimeout(r, 50));
    }
    console.log(`fit: ${REGIONS} regions × ${PARTICIPANTS} participants, ${RESAMPLES.toLocaleString("en")} rearrangements (Freedman–Lane), running`);
    const running = (last: unknown) => last !== null && (last as { status: string }).status !== "running";
    const phases = [
      { label: `${READERS} readers, no pause, ${READ_SECONDS} s`, pause: 0 },
      { label: `${READERS} readers pausing ${PAUSE_MS} ms between requests (a screen polling), ${READ_SECONDS} s`, pause: PAUSE_MS },
    ];
    for (const phase of phases) {
      const loaded = await readFor(READ_SECONDS, () => `/api/fits/${fitId}`, running, phase.pause);
      const last = loaded.last as { status: string; progress: { fraction: number } } | null;
      console.log(`${phase.label}:`);
      console.log(summary("  GET /api/fits/:fitId", loaded.first));
      console.log(summary("  GET /api/studies", loaded.second));
      console.log(summary("  both (target p95 ≤ 100 ms)", [...loaded.first, ...loaded.second]));
      console.log(
        `  errors: ${loaded.errors}; connections reopened: ${reconnects}; the fit was ${last?.status ?? "?"} at ${((last?.progress.fraction ?? 0) * 100).toFixed(0)} % at the end of this phase`,
      );
      if (last && last.status !== "running") break;
    }
    for (;;) {
      const now = await must("GET", `/api/fits/${fitId}`);
      if (now.status === "done") break;
      if (now.status !== "running" && now.status !== "queued") throw new Error(`the fit is ${now.status}: ${JSON.stringify(now.error)}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    console.log(`fit done in ${((performance.now() - fitStart) / 1000).toFixed(1)} s (worker threads: one per core less one, at least one)`);

    await must("POST", `/api/studies/${studyId}/set-asides`, { participant: "sub-0007", region: "region_001", reason: "Benchmark: set aside before the analysis" });
    const previewTimes: number[] = [];
    let n = 0;
    for (let k = 0; k < PREVIEWS; k++) {
      const r = await call("POST", `/api/fits/${fitId}/regions/region_001/preview`, {});
      if (r.status !== 200) throw new Error(`preview answered ${r.status}: ${JSON.stringify(r.json).slice(0, 300)}`);
      n = (r.json as { preview: { n: number } }).preview.n;
      previewTimes.push(r.ms);
    }
    console.log(`first preview (data already built by the fit): ${previewTimes[0].toFixed(1)} ms`);
    console.log(summary(`preview, N = ${n} (target ≤ 100 ms)`, previewTimes));
  } catch (error) {
    console.log(`server (exit code ${child.exitCode}, signal ${child.signalCode}) output:\n${log.split("\n").slice(-30).join("\n")}`);
    throw error;
  } finally {
    agent.destroy();
    child.kill("SIGTERM");
    await new Promise<void>((resolve) => {
      if (child.exitCode !== null) resolve();
      else child.once("exit", () => resolve());
    });
    rmSync(dataDir, { recursive: true, force: true });
  }
}
