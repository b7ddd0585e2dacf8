/**
 * An exclusive lock on a data folder, held for the server's lifetime,
 * because the embedded database has none: two processes on one database
 * folder lose committed rows.
 *
 * - The folder's real path is resolved first (it is created when missing),
 *   so `DATA_DIR=/x` and `DATA_DIR=/x-link` (a symlink) are one folder.
 * - The lock lives inside the folder itself (`<real dataDir>/server.lock`),
 *   so every path to the folder — symlink or bind mount — sees the same lock.
 * - It is proper-lockfile's lock: an atomic `mkdir`, whose mtime the holder
 *   refreshes every `updateMs`. Liveness is judged by that mtime, never by a
 *   pid (pids are reused after a hard kill, and two pid namespaces sharing a
 *   volume would each see the other's pid as alive or dead at random). A
 *   lock not refreshed for `staleMs` belongs to a process that died without
 *   releasing it (kill -9, power loss) and is taken over; a live holder
 *   refreshes it well within that time and is never taken over.
 * - A server that finds the lock held watches it for a moment: a holder
 *   that refreshes it is alive, and the newcomer refuses (`DataLockError`
 *   naming the folder) within about `updateMs`; a lock that is not
 *   refreshed is waited for until it is stale and then taken over, so a
 *   server restarted right after a kill -9 starts within `staleMs`.
 * - It is released on a normal close, and removed on process exit
 *   (proper-lockfile's exit hook), which includes SIGINT/SIGTERM shutdowns.
 * - When the lock is compromised (its folder removed or taken over, for
 *   example after the event loop stalled longer than `staleMs`), the holder
 *   must stop writing at once: by default the process exits with code 1
 *   without closing the database (a hard stop loses nothing committed, a
 *   close could write into files another server now owns).
 *
 * Who holds the lock (pid, host, since when) is written beside it in
 * `server.lock.json`, for the refusal message only.
 */
import { mkdirSync, readFileSync, realpathSync, rmSync, statSync, writeFileSync } from "node:fs";
import { hostname } from "node:os";
import { join, resolve } from "node:path";
import { lockSync } from "proper-lockfile";

/** A lock not refreshed for this long is taken over. */
export const DATA_LOCK_STALE_MS = 10_000;
/** How often the holder refreshes its lock (well within the stale period). */
export const DATA_LOCK_UPDATE_MS = 2_000;
/** How long a new holder waits before checking that nobody took the lock in the same instant. */
const SETTLE_MS = 150;

export class DataLockError extends Error {
  /** The real path of the data folder. */
  readonly folder: string;
  constructor(message: string, folder: string) {
    super(message);
    this.name = "DataLockError";
    this.folder = folder;
  }
}

export interface DataLock {
  /** The real path of the locked data folder. */
  readonly folder: string;
  /** The lock itself (a folder inside the data folder). */
  readonly file: string;
  /** Releases the lock if this process still holds it. Idempotent. */
  release(): void;
}

export interface DataLockOptions {
  /** A lock not refreshed for this long is taken over (default 10 s; at least 2 s). */
  staleMs?: number;
  /** How often the lock is refreshed (default 2 s; at least 1 s, at most half of `staleMs`). */
  updateMs?: number;
  /** Called once when the lock was lost; default: print and exit with code 1 at once. */
  onCompromised?: (error: Error) => void;
  /** Told once, in words, when the lock is held and this process waits to see whether its holder lives (default: printed). */
  onWait?: (message: string) => void;
}

/** The lock's path for a data folder whose real path is `folder`. */
export function lockFileFor(folder: string): string {
  return join(folder, "server.lock");
}

function ownerFileFor(folder: string): string {
  return join(folder, "server.lock.json");
}

/** Creates the folder when missing and returns its real path (symlinks resolved). */
export function realDataFolder(dataDir: string): string {
  const absolute = resolve(dataDir);
  mkdirSync(absolute, { recursive: true });
  return realpathSync(absolute);
}

const sleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));

/**
 * Takes the lock for `dataDir` for this process's lifetime. When the lock
 * is held, waits until its holder shows it is alive (refusal) or the lock
 * goes stale (take-over), at most `staleMs` plus a little. Rejects with
 * `DataLockError` naming the folder when another live server holds it.
 */
export async function acquireDataLock(
  dataDir: string,
  options: DataLockOptions = {},
): Promise<DataLock> {
  const folder = realDataFolder(dataDir);
  const file = lockFileFor(folder);
  const staleMs = Math.max(options.staleMs ?? DATA_LOCK_STALE_MS, 2000);
  const updateMs = options.updateMs ?? DATA_LOCK_UPDATE_MS;
  const onWait = options.onWait ?? ((message: string) => console.log(`Covarion: ${message}`));
  const deadline = Date.now() + staleMs + 2000;
  let seenMtime: bigint | null = null;
  for (;;) {
    try {
      return await takeLock(folder, file, staleMs, updateMs, options.onCompromised);
    } catch (error) {
      if (!(error instanceof DataLockError)) throw error;
      const now = safeStat(file);
      if (now) {
        // A holder that refreshes its lock is alive: refuse at once.
        if (seenMtime !== null && now.mtimeNs !== seenMtime) throw error;
        if (seenMtime === null) {
          onWait(
            `the data folder ${folder} is locked; waiting up to ${Math.ceil(staleMs / 1000)} s to see whether the server holding it still runs.`,
          );
        }
        seenMtime = now.mtimeNs;
      }
      if (Date.now() > deadline) throw error;
      await sleep(250);
    }
  }
}

async function takeLock(
  folder: string,
  file: string,
  staleMs: number,
  updateMs: number,
  compromised?: (error: Error) => void,
): Promise<DataLock> {
  const onCompromised =
    compromised ??
    ((error: Error) => {
      console.error(
        `Covarion stops: the lock of the data folder ${folder} was lost (${error.message}); another server may be using it. Stopping without further writes.`,
      );
      process.exit(1);
    });
  let releaseLock: () => void;
  try {
    releaseLock = lockSync(folder, {
      lockfilePath: file,
      realpath: false,
      stale: staleMs,
      update: updateMs,
      onCompromised,
    });
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    if (code === "ELOCKED" || code === "ENOENT") throw inUse(folder, file, staleMs);
    throw error;
  }

  // Two servers that found the same stale lock at the same instant could
  // each remove it and believe they made the new one: wait a moment and
  // check the lock is still the one this process made.
  const made = statSync(file, { bigint: true });
  await sleep(SETTLE_MS);
  const now = safeStat(file);
  if (!now || now.ino !== made.ino || now.ctimeNs !== made.ctimeNs) {
    try {
      releaseLock();
    } catch {
      // the lock is no longer ours; nothing to release
    }
    throw inUse(folder, file, staleMs);
  }

  writeFileSync(
    ownerFileFor(folder),
    `${JSON.stringify({ pid: process.pid, host: hostname(), since: new Date().toISOString() })}\n`,
  );
  let released = false;
  return {
    folder,
    file,
    release() {
      if (released) return;
      released = true;
      const owner = readOwner(folder);
      if (owner?.pid === process.pid && owner.host === hostname())
        rmSync(ownerFileFor(folder), { force: true });
      try {
        releaseLock();
      } catch (error) {
        // Already released or lost (onCompromised has been told): nothing left to remove.
        if ((error as NodeJS.ErrnoException).code !== "ERELEASED") throw error;
      }
    },
  };
}

function safeStat(file: string) {
  try {
    return statSync(file, { bigint: true });
  } catch {
    return null;
  }
}

function inUse(folder: string, file: string, staleMs: number): DataLockError {
  const owner = readOwner(folder);
  const who = owner ? ` (pid ${owner.pid} on host ${owner.host}, since ${owner.since})` : "";
  return new DataLockError(
    `The data folder ${folder} is in use by another Covarion server${who}, which keeps its lock (${file}) fresh. Stop that server first, or choose another DATA_DIR. ` +
      `(The lock of a server that was killed is taken over ${staleMs / 1000} s after its last sign of life.)`,
    folder,
  );
}

function readOwner(folder: string): { pid: number; host: string; since: string } | null {
  try {
    const parsed = JSON.parse(readFileSync(ownerFileFor(folder), "utf8")) as {
      pid?: unknown;
      host?: unknown;
      since?: unknown;
    };
    if (
      typeof parsed.pid !== "number" ||
      typeof parsed.host !== "string" ||
      typeof parsed.since !== "string"
    )
      return null;
    return { pid: parsed.pid, host: parsed.host, since: parsed.since };
  } catch {
    return null;
  }
}
