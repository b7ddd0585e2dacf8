/**
 * The data directory: rows survive a restart; the lock keeps a second
 * server out whatever path names the folder (a symlink too), with a message
 * naming the folder; a hard-killed holder's lock is taken over after the
 * stale period and a live holder's never; a lost lock stops its holder; the
 * real server shuts down cleanly on SIGTERM.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdtempSync, realpathSync, rmSync, symlinkSync } from "node:fs";
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
  made.push(dir);
  return dir;
}
/** A symlink to `target` in a separate temporary folder. */
function linkTo(target: string): string {
  const link = join(tempDir(), "data-link");
  symlinkSync(target, link);
  return link;
}
afterAll(() => {
  for (const path of made) rmSync(path, { recursive: true, force: true });
});

interface Holder {
  child: ChildProcess;
  output: () => string;
  exited: Promise<number | null>;
}

/** Starts a separate process that takes the lock of `dataDir` and holds it until killed. */
async function startHolder(dataDir: string, updateMs: number): Promise<Holder> {
  let out = "";
  const child = spawn(
    process.execPath,
    ["--import", "tsx", "tests/api/data-lock-holder.ts", dataDir, String(updateMs)],
    {
      cwd: root,
      stdio: ["ignore", "pipe", "pipe"],
    },
  );
  const collect = (c: Buffer) => {
    out += c.toString();
  };
  child.stdout?.on("data", collect);
  child.stderr?.on("data", collect);
  const exited = new Promise<number | null>((resolve) =>
    child.once("exit", (code) => resolve(code)),
  );
  const deadline = Date.now() + 20_000;
  while (!out.includes("locked")) {
    if (child.exitCode !== null || Date.now() > deadline)
      throw new Error(`the lock holder did not start:\n${out}`);
    await new Promise((r) => setTimeout(r, 50));
  }
  return { child, output: () => out, exited };
}

describe("data directory lock", () => {
  const quiet = { onWait: () => {} };

  it("refuses a second holder on a symlink to the same folder, naming the folder, until the first stops", async () => {
    const dir = tempDir();
    const real = realpathSync(dir);
    const holder = await startHolder(dir, 1000);
    try {
      expect(existsSync(lockFileFor(real))).toBe(true);
      const refusal = await acquireDataLock(linkTo(dir), quiet).then(
        (lock) => lock.release(),
        (error: unknown) => error,
      );
      expect(refusal).toBeInstanceOf(DataLockError);
      expect((refusal as Error).message).toContain(
        `The data folder ${real} is in use by another Covarion server (pid ${holder.child.pid} on host`,
      );
      await expect(acquireDataLock(dir, quiet)).rejects.toThrow(DataLockError);
    } finally {
      holder.child.kill("SIGTERM");
      await holder.exited;
    }
    // SIGTERM released the lock: the next holder takes it without waiting.
    expect(existsSync(lockFileFor(real))).toBe(false);
    const waited: string[] = [];
    const lock = await acquireDataLock(linkTo(dir), { onWait: (m) => waited.push(m) });
    expect(waited).toEqual([]);
    expect(lock.folder).toBe(real);
    lock.release();
    expect(existsSync(lockFileFor(real))).toBe(false);
  });

  it("never takes over a live holder's lock; waits for a hard-killed holder's lock to go stale and takes it over", async () => {
    const dir = tempDir();
    const staleMs = 3000;
    const holder = await startHolder(dir, 1000);
    try {
      // Alive and refreshing: refused, again and again, for longer than the stale period.
      const until = Date.now() + staleMs + 1500;
      while (Date.now() < until)
        await expect(acquireDataLock(dir, { ...quiet, staleMs })).rejects.toThrow(DataLockError);
    } finally {
      holder.child.kill("SIGKILL");
    }
    await holder.exited;
    // Killed without releasing: the lock stays (whatever became of the pid) until nobody has refreshed it for the stale period.
    expect(existsSync(lockFileFor(realpathSync(dir)))).toBe(true);
    const waited: string[] = [];
    const lock = await acquireDataLock(dir, { staleMs, onWait: (m) => waited.push(m) });
    expect(waited).toEqual([
      `the data folder ${realpathSync(dir)} is locked; waiting up to 3 s to see whether the server holding it still runs.`,
    ]);
    lock.release();
  }, 30_000);

  it("stops a holder whose lock was lost instead of letting it write on", async () => {
    const dir = tempDir();
    const holder = await startHolder(dir, 1000);
    try {
      rmSync(lockFileFor(realpathSync(dir)), { recursive: true });
      expect(await holder.exited).toBe(1);
      expect(holder.output()).toContain(
        `the lock of the data folder ${realpathSync(dir)} was lost`,
      );
    } finally {
      if (holder.child.exitCode === null) holder.child.kill("SIGKILL");
    }
  });
});

describe("restart", () => {
  it("keeps every committed row after closing and reopening the database", async () => {
    const dir = join(tempDir(), "db");
    const first = await openTemplateDatabase(dir);
    await first.db
      .insert(studies)
      .values({ id: "5b0c3a52-5a4c-4a55-8d3e-0f1f2a3b4c5d", name: "Kept across restarts" });
    await first.close();
    const second = await openDatabase({ dataDir: dir });
    const rows = await second.db
      .select()
      .from(studies)
      .where(eq(studies.id, "5b0c3a52-5a4c-4a55-8d3e-0f1f2a3b4c5d"));
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
    env: {
      ...process.env,
      NODE_ENV: "development",
      DATA_DIR: dataDir,
      PORT: String(port),
      HOST: "127.0.0.1",
      PUBLIC_URL: "",
    },
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
      const real = realpathSync(dataDir);
      expect(second.output()).toContain(
        `The data folder ${real} is in use by another Covarion server (pid ${first.child.pid}`,
      );
      // Another path to the same folder is the same folder.
      const third = startServer(linkTo(dataDir), await freePort());
      expect(await third.exited).toBe(1);
      expect(third.output()).toContain(
        `Covarion cannot start: The data folder ${real} is in use by another Covarion server`,
      );

      first.child.kill("SIGTERM");
      expect(await first.exited).toBe(0);
      expect(existsSync(lockFileFor(real))).toBe(false);
    } finally {
      if (first.child.exitCode === null) first.child.kill("SIGKILL");
    }

    const again = startServer(dataDir, port);
    try {
      await waitForHealth(url, again);
      const cookie = await demoSession(url);
      const list = (await (await fetch(`${url}/api/studies`, { headers: { cookie } })).json()) as {
        name: string;
      }[];
      expect(list.map((s) => s.name).sort()).toEqual([
        "Harbour Bay working-memory cohort (demo)",
        "Made before the restart",
      ]);
      expect(again.output()).not.toContain("created the demo people");
    } finally {
      // A hard kill leaves the lock behind.
      again.child.kill("SIGKILL");
      await again.exited;
    }
    expect(existsSync(lockFileFor(realpathSync(dataDir)))).toBe(true);

    // Started again at once, the server waits for the dead server's lock to go stale, then takes it.
    const afterKill = startServer(dataDir, port);
    try {
      await waitForHealth(url, afterKill);
      expect(afterKill.output()).toContain(
        `the data folder ${realpathSync(dataDir)} is locked; waiting up to 10 s`,
      );
    } finally {
      afterKill.child.kill("SIGTERM");
      expect(await afterKill.exited).toBe(0);
    }
  }, 240_000);
});
