/**
 * The data directory: rows survive a restart, the lock keeps a second
 * server out (with a message naming the holder's pid), a dead holder's lock
 * is taken over, and the real server shuts down cleanly on SIGTERM.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { eq } from "drizzle-orm";
import { afterAll, describe, expect, it } from "vitest";
import { openDatabase } from "../../db/client";
import { studies } from "../../db/schema";
import { acquireDataLock, DataLockError, lockFileFor } from "../../server/services/data-lock";
import { openTemplateDatabase } from "./helpers";

const root = join(dirname(fileURLToPath(import.meta.url)), "..", "..");
const made: string[] = [];
function tempDir(): string {
  const dir = mkdtempSync(join(tmpdir(), "covarion-data-"));
  made.push(dir, lockFileFor(dir));
  return dir;
}
afterAll(() => {
  for (const path of made) rmSync(path, { recursive: true, force: true });
});

describe("data directory lock", () => {
  it("refuses a second holder while the first lives, naming its pid", () => {
    const dir = tempDir();
    const lock = acquireDataLock(dir);
    expect(readFileSync(lockFileFor(dir), "utf8").trim()).toBe(String(process.pid));
    const other = spawn(process.execPath, ["-e", "setTimeout(() => {}, 30000)"]);
    try {
      expect(() => acquireDataLock(dir, other.pid)).toThrow(DataLockError);
      expect(() => acquireDataLock(dir, other.pid)).toThrow(`in use by another Covarion server (pid ${process.pid})`);
    } finally {
      other.kill();
      lock.release();
    }
    expect(existsSync(lockFileFor(dir))).toBe(false);
  });

  it("takes over the lock of a process that no longer runs", () => {
    const dir = tempDir();
    const gone = spawnSync(process.execPath, ["-e", ""]).pid;
    writeFileSync(lockFileFor(dir), `${gone}\n`);
    const lock = acquireDataLock(dir);
    expect(readFileSync(lockFileFor(dir), "utf8").trim()).toBe(String(process.pid));
    lock.release();
  });
});

describe("restart", () => {
  it("keeps every committed row after closing and reopening the database", async () => {
    const dir = join(tempDir(), "db");
    const first = await openTemplateDatabase(dir);
    await first.db.insert(studies).values({ id: "5b0c3a52-5a4c-4a55-8d3e-0f1f2a3b4c5d", name: "Kept across restarts" });
    await first.close();
    const second = await openDatabase({ dataDir: dir });
    const rows = await second.db.select().from(studies).where(eq(studies.id, "5b0c3a52-5a4c-4a55-8d3e-0f1f2a3b4c5d"));
    await second.close();
    expect(rows.map((r) => r.name)).toEqual(["Kept across restarts"]);
  });
});

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once("error", reject);
    s.listen(0, "127.0.0.1", () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
  });
}

interface Proc {
  child: ChildProcess;
  output: () => string;
  exited: Promise<number | null>;
}

function startServer(dataDir: string, port: number): Proc {
  let out = "";
  const child = spawn(process.execPath, ["--import", "tsx", "server/index.ts"], {
    cwd: root,
    env: { ...process.env, NODE_ENV: "development", DATA_DIR: dataDir, PORT: String(port), HOST: "127.0.0.1", PUBLIC_URL: "" },
    stdio: ["ignore", "pipe", "pipe"],
  });
  const collect = (c: Buffer) => {
    out += c.toString();
  };
  child.stdout?.on("data", collect);
  child.stderr?.on("data", collect);
  const exited = new Promise<number | null>((resolve) => child.once("exit", (code) => resolve(code)));
  return { child, output: () => out, exited };
}

async function waitForHealth(url: string, proc: Proc): Promise<void> {
  const deadline = Date.now() + 90_000;
  while (Date.now() < deadline) {
    if (proc.child.exitCode !== null) throw new Error(`server exited early:\n${proc.output()}`);
    try {
      if ((await fetch(`${url}/api/health`)).ok) return;
    } catch {
      // not yet listening
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`server did not become healthy:\n${proc.output()}`);
}

async function demoSession(url: string): Promise<string> {
  const res = await fetch(`${url}/api/dev/demo-sign-in`, {
    method: "POST",
    headers: { "Content-Type": "application/json" },
    body: JSON.stringify({ email: "owner@demo.covarion.test" }),
  });
  expect(res.status).toBe(200);
  return (res.headers.get("set-cookie") ?? "").split(";")[0];
}

describe("the real server process", () => {
  it("refuses a second server on the same DATA_DIR, stops cleanly, and keeps rows across a restart", async () => {
    const dataDir = tempDir();
    // Start from the migrated template so the first start skips initdb.
    await (await openTemplateDatabase(join(dataDir, "db"))).close();

    const port = await freePort();
    const url = `http://127.0.0.1:${port}`;
    const first = startServer(dataDir, port);
    try {
      await waitForHealth(url, first);
      expect(first.output()).toContain(`Covarion is running at ${url}`);
      const cookie = await demoSession(url);
      const created = await fetch(`${url}/api/studies`, {
        method: "POST",
        headers: { "Content-Type": "application/json", cookie },
        body: JSON.stringify({ name: "Made before the restart" }),
      });
      expect(created.status).toBe(201);

      const second = startServer(dataDir, await freePort());
      expect(await second.exited).toBe(1);
      expect(second.output()).toContain(`is in use by another Covarion server (pid ${first.child.pid})`);

      first.child.kill("SIGTERM");
      expect(await first.exited).toBe(0);
      expect(existsSync(lockFileFor(dataDir))).toBe(false);
    } finally {
      if (first.child.exitCode === null) first.child.kill("SIGKILL");
    }

    const again = startServer(dataDir, port);
    try {
      await waitForHealth(url, again);
      const cookie = await demoSession(url);
      const list = (await (await fetch(`${url}/api/studies`, { headers: { cookie } })).json()) as { name: string }[];
      expect(list.map((s) => s.name).sort()).toEqual(["Harbour Bay working-memory cohort (demo)", "Made before the restart"]);
      expect(again.output()).not.toContain("created the demo people");
    } finally {
      again.child.kill("SIGTERM");
      expect(await again.exited).toBe(0);
    }
  }, 180_000);
});
