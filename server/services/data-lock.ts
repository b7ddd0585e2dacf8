/**
 * An exclusive lock on a data directory, because PGlite has none: two
 * processes on one database directory lose committed rows.
 *
 * The lock is a file beside the data directory (`<dataDir>.lock`, so it
 * is never inside the database files), created atomically (`wx`) with the
 * owner's pid inside. A lock left by a process that no longer runs is taken
 * over; a lock held by a live process makes `acquireDataLock` throw a
 * `DataLockError` naming that pid.
 */
import { readFileSync, rmSync, writeFileSync } from "node:fs";
import { resolve } from "node:path";

export class DataLockError extends Error {
  readonly pid: number;
  constructor(message: string, pid: number) {
    super(message);
    this.name = "DataLockError";
    this.pid = pid;
  }
}

export interface DataLock {
  readonly file: string;
  /** Removes the lock file if this process still owns it. Idempotent. */
  release(): void;
}

/** The lock file path for a data directory. */
export function lockFileFor(dataDir: string): string {
  return `${resolve(dataDir).replace(/[\\/]+$/, "")}.lock`;
}

/** True when a process with this pid exists (EPERM means it exists but is not ours). */
export function isProcessAlive(pid: number): boolean {
  if (!Number.isInteger(pid) || pid <= 0) return false;
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === "EPERM";
  }
}

/**
 * Takes the lock for `dataDir` on behalf of `pid` (default: this process).
 * Throws `DataLockError` when a live process holds it.
 */
export function acquireDataLock(dataDir: string, pid: number = process.pid): DataLock {
  const file = lockFileFor(dataDir);
  for (let attempt = 0; attempt < 3; attempt++) {
    try {
      writeFileSync(file, `${pid}\n`, { flag: "wx" });
      return makeLock(file, pid);
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== "EEXIST") throw error;
    }
    const holder = readHolder(file);
    if (holder !== null && holder !== pid && isProcessAlive(holder)) {
      throw new DataLockError(
        `The data directory ${resolve(dataDir)} is in use by another Covarion server (pid ${holder}). Stop that server first, or choose another DATA_DIR. Lock file: ${file}`,
        holder,
      );
    }
    if (holder === pid) return makeLock(file, pid);
    // The holder is gone (or the file is unreadable): take the lock over.
    rmSync(file, { force: true });
  }
  throw new Error(`Could not take the lock ${file} after three attempts.`);
}

function readHolder(file: string): number | null {
  try {
    const pid = Number.parseInt(readFileSync(file, "utf8").trim(), 10);
    return Number.isInteger(pid) ? pid : null;
  } catch {
    return null;
  }
}

function makeLock(file: string, pid: number): DataLock {
  let released = false;
  return {
    file,
    release() {
      if (released) return;
      released = true;
      if (readHolder(file) === pid) rmSync(file, { force: true });
    },
  };
}
