/**
 * A throw-away PostgreSQL server for tests: finds Debian's binaries
 * (installing the `postgresql` package with apt-get when they are missing
 * and we run as root, as CI does), initialises a cluster in a temporary
 * folder as an unprivileged user (`postgres` when we are root, else
 * ourselves), with trust authentication, listening on a free port on
 * 127.0.0.1 only, and stops and removes it afterwards.
 *
 * Durability is switched off (fsync, synchronous commit, full-page writes):
 * the cluster lives for one test run.
 *
 * `npx tsx tests/support/postgres-server.ts` starts one and prints its
 * address until Ctrl-C (handy for trying `DATABASE_URL=… npm start`).
 */
import { type ChildProcess, execFileSync, spawn } from "node:child_process";
import { chownSync, existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { pathToFileURL } from "node:url";
import pg from "pg";

export interface PostgresServer {
  port: number;
  /** The address of one database on the server (default `postgres`). */
  url(database?: string): string;
  /** Creates a database, from `template` when given (a copy of it: fast). */
  createDatabase(name: string, template?: string): Promise<string>;
  /** Drops a database, closing connections still open to it. */
  dropDatabase(name: string): Promise<void>;
  stop(): Promise<void>;
}

const SUPERUSER = "postgres";

/** The newest installed server's binary folder, or null. */
export function findPostgresBinaries(): string | null {
  const root = "/usr/lib/postgresql";
  if (existsSync(root)) {
    const versions = readdirSync(root)
      .filter((v) => existsSync(join(root, v, "bin", "initdb")))
      .sort((a, b) => Number(b) - Number(a));
    if (versions.length > 0) return join(root, versions[0], "bin");
  }
  try {
    const bin = execFileSync("pg_config", ["--bindir"], { encoding: "utf8" }).trim();
    if (existsSync(join(bin, "initdb"))) return bin;
  } catch {
    // no pg_config on the path
  }
  return null;
}

const isRoot = () => process.getuid?.() === 0;

/** The binaries, installing Debian's `postgresql` first when missing and we are root. */
export function ensurePostgresBinaries(): string {
  const found = findPostgresBinaries();
  if (found) return found;
  if (!isRoot())
    throw new Error(
      "PostgreSQL server binaries not found (looked in /usr/lib/postgresql/*/bin and pg_config --bindir). Install Debian's postgresql package (apt-get install postgresql), or run the tests as root to have it installed.",
    );
  console.log("Installing Debian's postgresql for the tests on a PostgreSQL server…");
  execFileSync(
    "bash",
    [
      "-c",
      "apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql",
    ],
    { stdio: "inherit" },
  );
  const installed = findPostgresBinaries();
  if (!installed) throw new Error("apt-get installed postgresql but its binaries were not found");
  return installed;
}

/** Whom the server runs as: `postgres` when we are root (the server refuses root), else ourselves. */
function serverUser(): { uid: number; gid: number } | null {
  if (!isRoot()) return null;
  const id = (flag: string) =>
    Number(execFileSync("id", [flag, "postgres"], { encoding: "utf8" }).trim());
  try {
    return { uid: id("-u"), gid: id("-g") };
  } catch {
    throw new Error(
      "running as root, but there is no postgres user to run the server as (Debian's postgresql package creates it)",
    );
  }
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer();
    probe.once("error", reject);
    probe.listen(0, "127.0.0.1", () => {
      const address = probe.address();
      const port = typeof address === "object" && address ? address.port : 0;
      probe.close(() => resolve(port));
    });
  });
}

async function waitUntilReady(url: string, server: ChildProcess, log: () => string): Promise<void> {
  const deadline = Date.now() + 60_000;
  for (;;) {
    if (server.exitCode !== null)
      throw new Error(`the PostgreSQL server stopped at start:\n${log()}`);
    const client = new pg.Client({ connectionString: url });
    try {
      await client.connect();
      await client.query("select 1");
      return;
    } catch (error) {
      if (Date.now() > deadline)
        throw new Error(`the PostgreSQL server did not answer within 60 s: ${error}\n${log()}`);
      await new Promise((r) => setTimeout(r, 100));
    } finally {
      await client.end().catch(() => {});
    }
  }
}

const quoteName = (name: string) => {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`bad database name ${name}`);
  return `"${name}"`;
};

async function asAdmin<T>(adminUrl: string, work: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  try {
    return await work(client);
  } finally {
    await client.end();
  }
}

/**
 * Creates database `name` on the server `adminUrl` reaches (as a copy of
 * `template` when given: no other connection to the template may be open)
 * and answers its address.
 */
export async function createDatabase(
  adminUrl: string,
  name: string,
  template?: string,
): Promise<string> {
  await asAdmin(adminUrl, (c) =>
    c.query(
      `CREATE DATABASE ${quoteName(name)}${template ? ` TEMPLATE ${quoteName(template)}` : ""}`,
    ),
  );
  const address = new URL(adminUrl);
  address.pathname = `/${name}`;
  return address.toString();
}

/** Drops database `name`, closing connections still open to it. */
export async function dropDatabase(adminUrl: string, name: string): Promise<void> {
  await asAdmin(adminUrl, (c) =>
    c.query(`DROP DATABASE IF EXISTS ${quoteName(name)} WITH (FORCE)`),
  );
}

export async function startPostgresServer(): Promise<PostgresServer> {
  const bin = ensurePostgresBinaries();
  const user = serverUser();
  const folder = mkdtempSync(join(tmpdir(), "covarion-pg-"));
  const dataDir = join(folder, "data");
  if (user) chownSync(folder, user.uid, user.gid);
  const asUser = user ? { uid: user.uid, gid: user.gid } : {};
  try {
    execFileSync(
      join(bin, "initdb"),
      [
        "-D",
        dataDir,
        "-U",
        SUPERUSER,
        "--auth=trust",
        "--encoding=UTF8",
        "--locale=C",
        "--no-sync",
      ],
      { ...asUser, cwd: folder, stdio: "pipe" },
    );
  } catch (error) {
    rmSync(folder, { recursive: true, force: true });
    const stderr = (error as { stderr?: Buffer }).stderr?.toString() ?? "";
    throw new Error(`initdb failed: ${(error as Error).message}\n${stderr}`);
  }
  const port = await freePort();
  let output = "";
  const server = spawn(
    join(bin, "postgres"),
    [
      "-D",
      dataDir,
      "-p",
      String(port),
      "-h",
      "127.0.0.1",
      "-k",
      folder,
      "-c",
      "fsync=off",
      "-c",
      "synchronous_commit=off",
      "-c",
      "full_page_writes=off",
      "-c",
      "max_connections=300",
    ],
    { ...asUser, cwd: folder, stdio: ["ignore", "pipe", "pipe"] },
  );
  const keep = (chunk: Buffer) => {
    output = (output + chunk.toString()).slice(-20_000);
  };
  server.stdout?.on("data", keep);
  server.stderr?.on("data", keep);
  const exited = new Promise<void>((resolve) => server.once("exit", () => resolve()));
  // The server dies with this process (e.g. a test run stopped with Ctrl-C), its folder too as far as it can.
  const onExit = () => {
    server.kill("SIGKILL");
    try {
      rmSync(folder, { recursive: true, force: true, maxRetries: 3 });
    } catch {
      // left in the temporary folder
    }
  };
  process.once("exit", onExit);
  const url = (database = "postgres") =>
    `postgres://${SUPERUSER}@127.0.0.1:${port}/${encodeURIComponent(database)}`;
  let stopped = false;
  const stop = async () => {
    if (stopped) return;
    stopped = true;
    process.off("exit", onExit);
    if (server.exitCode === null) {
      server.kill("SIGINT"); // fast shutdown: ends sessions, no waiting for clients
      const killer = setTimeout(() => server.kill("SIGKILL"), 10_000);
      await exited;
      clearTimeout(killer);
    }
    rmSync(folder, { recursive: true, force: true });
  };
  try {
    await waitUntilReady(url(), server, () => output);
  } catch (error) {
    await stop();
    throw error;
  }
  return {
    port,
    url,
    createDatabase: (name, template) => createDatabase(url(), name, template),
    dropDatabase: (name) => dropDatabase(url(), name),
    stop,
  };
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  const server = await startPostgresServer();
  await server.createDatabase("covarion");
  console.log(`PostgreSQL is running: DATABASE_URL=${server.url("covarion")}  (Ctrl-C stops it)`);
  const quit = () => void server.stop().then(() => process.exit(0));
  process.once("SIGINT", quit);
  process.once("SIGTERM", quit);
}
