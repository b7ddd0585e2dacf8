/**
 * Benchmark helpers: the real server as a child process on 127.0.0.1 with a
 * fresh data directory (demo mode), a demo person's session, and a latency
 * summary line (p50/p95/max). Not a suite (bench/index.ts runs only the
 * files in bench/suites/).
 */
import { type ChildProcess, spawn } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { createServer } from "node:net";
import os from "node:os";
import { join } from "node:path";

export interface BenchServer {
  base: string;
  /** Cookie header of the signed-in demo person. */
  cookie: string;
  child: ChildProcess;
  /** The server's output so far. */
  log(): string;
  stop(): Promise<void>;
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

/**
 * Starts the server, waits until it answers, and signs in the demo person
 * `email`. BENCH_PROF=<directory> makes the server write a CPU profile of
 * its run there (open it in a Chromium developer tools window).
 */
export async function startBenchServer(email = "analyst@demo.covarion.test"): Promise<BenchServer> {
  const profile = process.env.BENCH_PROF
    ? ["--cpu-prof", `--cpu-prof-dir=${process.env.BENCH_PROF}`]
    : [];
  const dataDir = mkdtempSync(join(os.tmpdir(), "covarion-bench-"));
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, [...profile, "--import", "tsx", "server/index.ts"], {
    env: {
      ...process.env,
      NODE_ENV: "development",
      DATA_DIR: dataDir,
      PORT: String(port),
      HOST: "127.0.0.1",
      PUBLIC_URL: base,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  const keep = (d: unknown) => {
    output += String(d);
  };
  child.stdout?.on("data", keep);
  child.stderr?.on("data", keep);
  const stop = async () => {
    child.kill("SIGTERM");
    await new Promise<void>((resolve) => {
      if (child.exitCode !== null || child.signalCode !== null) resolve();
      else child.once("exit", () => resolve());
    });
    rmSync(dataDir, { recursive: true, force: true });
  };
  try {
    const started = performance.now();
    for (;;) {
      if (child.exitCode !== null) throw new Error(`the server stopped:\n${output}`);
      try {
        if ((await fetch(`${base}/api/health`)).ok) break;
      } catch {
        // not listening yet
      }
      if (performance.now() - started > 120_000)
        throw new Error(`the server did not start:\n${output}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    const signIn = await fetch(`${base}/api/dev/demo-sign-in`, {
      method: "POST",
      headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ email }),
    });
    if (signIn.status !== 200) throw new Error(`demo sign-in answered ${signIn.status}`);
    const cookie = String(signIn.headers.get("set-cookie")).split(";")[0];
    return { base, cookie, child, log: () => output, stop };
  } catch (error) {
    await stop();
    throw error;
  }
}

function percentile(sorted: readonly number[], q: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))];
}

/** One line: count, p50, p95 and max of `times` (ms). */
export function latencySummary(label: string, times: readonly number[]): string {
  const s = [...times].sort((a, b) => a - b);
  return `${label.padEnd(44)} n = ${String(s.length).padStart(5)}   p50 ${percentile(s, 0.5).toFixed(1).padStart(6)} ms   p95 ${percentile(s, 0.95).toFixed(1).padStart(6)} ms   max ${(s[s.length - 1] ?? Number.NaN).toFixed(1).padStart(7)} ms`;
}

/** Time between probes of GET /api/health while work runs. */
const PROBE_MS = 100;

/** Times GET /api/health every PROBE_MS until `work` settles; returns the latencies (ms). */
export async function healthDuring(base: string, work: Promise<unknown>): Promise<number[]> {
  const times: number[] = [];
  const inFlight: Promise<void>[] = [];
  let done = false;
  void work.finally(() => {
    done = true;
  });
  while (!done) {
    const t0 = performance.now();
    inFlight.push(
      fetch(`${base}/api/health`).then(async (res) => {
        await res.arrayBuffer();
        times.push(performance.now() - t0);
      }),
    );
    await new Promise((r) => setTimeout(r, PROBE_MS));
  }
  await Promise.all(inFlight);
  return times;
}

/** CPU milliseconds (user + system) a process's main thread has used, or null where /proc cannot tell. */
export function mainThreadCpuMs(pid: number | undefined): number | null {
  if (pid === undefined) return null;
  try {
    const fields = readFileSync(`/proc/${pid}/task/${pid}/stat`, "utf8").split(") ")[1].split(" ");
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100; // utime and stime, in clock ticks of 1/100 s
  } catch {
    return null;
  }
}

/** A JSON request as the signed-in person; throws on any status from 300 up. */
export async function mustJson(
  server: Pick<BenchServer, "base" | "cookie">,
  method: string,
  path: string,
  body?: unknown,
): Promise<Record<string, unknown>> {
  const res = await fetch(`${server.base}${path}`, {
    method,
    headers: {
      Cookie: server.cookie,
      ...(body === undefined ? {} : { "Content-Type": "application/json" }),
    },
    body: body === undefined ? undefined : JSON.stringify(body),
  });
  const text = await res.text();
  if (res.status >= 300)
    throw new Error(`${method} ${path} answered ${res.status}: ${text.slice(0, 300)}`);
  return (text ? JSON.parse(text) : null) as Record<string, unknown>;
}

/** Uploads a table to a study and confirms it. */
export async function uploadDataset(
  server: Pick<BenchServer, "base" | "cookie">,
  studyId: string,
  kind: "brain" | "participants",
  fileName: string,
  text: string,
): Promise<void> {
  const form = new FormData();
  form.set("kind", kind);
  form.set("file", new Blob([text]), fileName);
  const res = await fetch(`${server.base}/api/studies/${studyId}/datasets`, {
    method: "POST",
    body: form,
    headers: { Cookie: server.cookie },
  });
  const preview = (await res.json()) as { id: string };
  if (res.status !== 201)
    throw new Error(
      `upload ${fileName} answered ${res.status}: ${JSON.stringify(preview).slice(0, 300)}`,
    );
  await mustJson(server, "POST", `/api/studies/${studyId}/datasets/${preview.id}/confirm`, {});
}
