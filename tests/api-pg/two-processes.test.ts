/**
 * Two web processes (two children running server/index.ts) on one
 * PostgreSQL database, started together on an empty database: both apply
 * the migrations and seed the demo without racing (once); a session made
 * in one is valid in the other; a write in one is seen by the other at
 * once (the read cache is not used on a server); a fit started in one
 * (and computed by a worker process, `npm run worker`) streams its live
 * events to a listener on the other, and cancelling it there stops it.
 */
import { type ChildProcess, spawn } from "node:child_process";
import { mkdtempSync, rmSync } from "node:fs";
import { request as httpRequest } from "node:http";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it, inject } from "vitest";
import { openServerDatabase } from "../../db/client";
import { createDatabase, dropDatabase } from "../support/postgres-server";

const root = join(import.meta.dirname, "..", "..");
const postgres = inject("postgres");
if (!postgres) throw new Error("tests/api-pg run in the api-pg project only");

interface Proc {
  url: string;
  child: ChildProcess;
  output: () => string;
  exited: Promise<number | null>;
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once("error", reject);
    probe.listen(0, "127.0.0.1", () => {
      const address = probe.address();
      probe.close(() => resolve(typeof address === "object" && address ? address.port : 0));
    });
  });
}

function startWorker(databaseUrl: string): Proc {
  return startProcess("server/worker/index.ts", "", {
    NODE_ENV: "production",
    PATH: process.env.PATH,
    DATABASE_URL: databaseUrl,
  });
}

function startServer(databaseUrl: string, dataDir: string, port: number): Proc {
  return startProcess("server/index.ts", `http://127.0.0.1:${port}`, {
    ...process.env,
    NODE_ENV: "development",
    DATABASE_URL: databaseUrl,
    DATA_DIR: dataDir,
    PORT: String(port),
    HOST: "127.0.0.1",
    PUBLIC_URL: "",
  });
}

function startProcess(entry: string, url: string, env: NodeJS.ProcessEnv): Proc {
  let out = "";
  const child = spawn(process.execPath, ["--import", "tsx", entry], {
    cwd: root,
    env,
    stdio: ["ignore", "pipe", "pipe"],
  });
  const collect = (c: Buffer) => {
    out += c.toString();
  };
  child.stdout?.on("data", collect);
  child.stderr?.on("data", collect);
  const exited = new Promise<number | null>((resolve) =>
    child.once("exit", (code) => resolve(code)),
  );
  return { url, child, output: () => out, exited };
}

async function waitForHealth(proc: Proc): Promise<void> {
  const deadline = Date.now() + 120_000;
  while (Date.now() < deadline) {
    if (proc.child.exitCode !== null) throw new Error(`server exited early:\n${proc.output()}`);
    try {
      if ((await fetch(`${proc.url}/api/health`)).ok) return;
    } catch {
      // not yet listening
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`server did not become healthy:\n${proc.output()}`);
}

const taken = new Set<number>();

/**
 * A web process on a port free a moment ago (never one given to another
 * process of this file), healthy; started again on another port when the
 * port was taken in between (it says so and exits).
 */
async function startServerOnFreePort(databaseUrl: string): Promise<Proc> {
  for (let attempt = 1; ; attempt++) {
    let port = await freePort();
    while (taken.has(port)) port = await freePort();
    taken.add(port);
    const proc = startServer(databaseUrl, dataDir, port);
    try {
      await waitForHealth(proc);
      return proc;
    } catch (error) {
      if (attempt >= 3 || !proc.output().includes("the address is already in use")) throw error;
    }
  }
}

interface SseEvent {
  event: string;
  data: { id: string; status: string; progress: { fraction: number } };
}

/** Reads a fit's event stream (uncompressed) until the server closes it. */
function readEvents(
  url: string,
  cookie: string,
  fitId: string,
  onEvent: (e: SseEvent) => void,
): Promise<SseEvent[]> {
  return new Promise((resolve, reject) => {
    const req = httpRequest(
      `${url}/api/fits/${fitId}/events`,
      { headers: { Cookie: cookie, "Accept-Encoding": "identity" } },
      (res) => {
        if (res.statusCode !== 200) reject(new Error(`events answered ${res.statusCode}`));
        const events: SseEvent[] = [];
        let buffer = "";
        res.setEncoding("utf8");
        res.on("data", (chunk: string) => {
          buffer += chunk;
          let cut = buffer.indexOf("\n\n");
          while (cut >= 0) {
            const block = buffer.slice(0, cut);
            buffer = buffer.slice(cut + 2);
            const event = /^event: (.*)$/m.exec(block)?.[1];
            const data = /^data: (.*)$/m.exec(block)?.[1];
            if (event && data) {
              const e = { event, data: JSON.parse(data) } as SseEvent;
              events.push(e);
              onEvent(e);
            }
            cut = buffer.indexOf("\n\n");
          }
        });
        res.on("end", () => resolve(events));
        res.on("error", reject);
      },
    );
    req.on("error", reject);
    req.end();
  });
}

const databaseName = `covarion_two_${process.pid}`;
const dataDir = mkdtempSync(join(tmpdir(), "covarion-two-"));
let a: Proc;
let b: Proc;
let worker: Proc;
let cookie: string;

async function api(proc: Proc, method: string, path: string, body?: unknown) {
  const res = await fetch(`${proc.url}${path}`, {
    method,
    headers: { Cookie: cookie, ...(body ? { "Content-Type": "application/json" } : {}) },
    body: body ? JSON.stringify(body) : undefined,
  });
  const text = await res.text();
  return { status: res.status, body: text ? JSON.parse(text) : null };
}

beforeAll(async () => {
  // An empty database: both processes find migrations to apply and nobody to seed.
  const url = await createDatabase(postgres.adminUrl, databaseName);
  [a, b] = await Promise.all([startServerOnFreePort(url), startServerOnFreePort(url)]);
  worker = startWorker(url);
  const signIn = await fetch(`${a.url}/api/dev/demo-sign-in`, {
    method: "POST",
    headers: { "Content-Type": "application/json" },
    body: JSON.stringify({ email: "analyst@demo.covarion.test" }),
  });
  expect(signIn.status).toBe(200);
  cookie = String(signIn.headers.get("set-cookie")).split(";")[0];
}, 240_000);

afterAll(async () => {
  for (const proc of [a, b, worker]) proc?.child.kill("SIGTERM");
  await Promise.all([a?.exited, b?.exited, worker?.exited]);
  await dropDatabase(postgres.adminUrl, databaseName);
  rmSync(dataDir, { recursive: true, force: true });
});

describe("two web processes on one PostgreSQL database", () => {
  it("started together, they apply the migrations and seed the demo once", async () => {
    const database = await openServerDatabase(
      `${postgres.adminUrl.replace(/\/[^/]*$/, "")}/${databaseName}`,
    );
    try {
      const migrations = await database.pool.query<{ hash: string }>(
        "select hash from drizzle.__drizzle_migrations",
      );
      expect(new Set(migrations.rows.map((r) => r.hash)).size).toBe(migrations.rows.length);
      expect(migrations.rows.length).toBeGreaterThan(0);
      const people = await database.pool.query("select email from users order by email");
      expect(people.rows.map((r) => r.email)).toEqual([
        "analyst@demo.covarion.test",
        "owner@demo.covarion.test",
        "reviewer@demo.covarion.test",
        "viewer@demo.covarion.test",
      ]);
      const versions = await database.pool.query(
        "select kind, version from dataset_versions order by kind, version",
      );
      expect(versions.rows).toEqual([
        { kind: "brain", version: 1 },
        { kind: "participants", version: 1 },
      ]);
    } finally {
      await database.close();
    }
  });

  it("a session made in one process is valid in the other", async () => {
    const meA = await api(a, "GET", "/api/me");
    const meB = await api(b, "GET", "/api/me");
    expect(meA.status).toBe(200);
    expect(meB.body).toEqual(meA.body);
    expect(meB.body.email).toBe("analyst@demo.covarion.test");
  });

  it("a write in one process is seen by the other at once", async () => {
    const before = await api(b, "GET", "/api/studies");
    expect(before.status).toBe(200);
    // Read twice, so an answer kept by a cache would be the one handed out next.
    await api(b, "GET", "/api/studies");
    const created = await api(a, "POST", "/api/studies", { name: "Written in process A" });
    expect(created.status).toBe(201);
    const after = await api(b, "GET", "/api/studies");
    expect(after.body.map((s: { id: string }) => s.id)).toContain(created.body.id);
    expect(after.body).toHaveLength(before.body.length + 1);
  });

  it("a fit started in one process, computed by a worker, streams its live events to a listener on the other; cancelled there, it stops", async () => {
    const studies = await api(a, "GET", "/api/studies");
    const demo = studies.body.find((s: { name: string }) => s.name !== "Written in process A");
    const model = await api(a, "POST", `/api/studies/${demo.id}/models`, {
      name: "Long permutation across processes",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "permutation",
        resamples: 1_000_000,
      },
    });
    expect(model.status).toBe(201);
    const fit = await api(a, "POST", `/api/studies/${demo.id}/fits`, { modelId: model.body.id });
    expect(fit.status).toBe(202);
    let cancelled: Promise<{ status: number }> | null = null;
    const events = await readEvents(b.url, cookie, fit.body.id, (e) => {
      // Progress events come only live (the stream's first event is the stored state).
      if (!cancelled && e.event === "progress" && e.data.progress.fraction > 0)
        cancelled = api(b, "POST", `/api/fits/${fit.body.id}/cancel`);
    });
    expect(events.some((e) => e.event === "progress")).toBe(true);
    expect(cancelled).not.toBeNull();
    expect((await (cancelled as unknown as Promise<{ status: number }>)).status).toBe(200);
    expect(events.at(-1)?.data.status).toBe("cancelled");
    // The worker that ran it stopped: the fit stays cancelled and never gets a result.
    await new Promise((r) => setTimeout(r, 1500));
    const view = await api(a, "GET", `/api/fits/${fit.body.id}`);
    expect(view.body).toMatchObject({ status: "cancelled", result: null });
    expect(`${a.output()}${worker.output()}`).not.toMatch(/Error/);
  }, 120_000);
});
