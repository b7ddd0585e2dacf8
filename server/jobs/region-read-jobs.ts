/**
 * The worker thread that decodes finished regions (piscina,
 * server/jobs/region-read-task.ts), so the request thread does not: at
 * 20,000 participants one region's stored texts (~7 MB) take ~40 ms to
 * decode. Texts under INLINE_CHARS (a region of up to ~700 participants,
 * a few milliseconds) are decoded in place, which costs less than the
 * hand-over. One thread (a second would take the core the request thread
 * needs on a 2-core machine); at most `maxWaiting` reads wait behind the
 * running one, more answer 429 `regions_busy`. The thread starts with the
 * first large region and ends after `idleMs` without one. Decoded regions
 * are kept (services/fits.ts), so each is decoded once.
 */
import type { Piscina } from "piscina";
import { HttpError } from "../http/errors";
import { decodeRegionPoints, type RegionColumns } from "./region-points";
import type { RegionReadTask } from "./region-read-task";
import { workerPool } from "./worker-pool";

/** Stored texts shorter than this (characters, rows and plot together) are decoded on the calling thread. */
export const INLINE_CHARS = 256 * 1024;

export interface RegionReadJobsOptions {
  /** Reads that may wait behind the running one (default 32). */
  maxWaiting?: number;
  /** The thread ends after this long without a read (default 2 minutes). */
  idleMs?: number;
  /** Texts shorter than this are decoded in place (default INLINE_CHARS). */
  inlineChars?: number;
}

export class RegionReadJobs {
  private pool: Piscina | null = null;
  private readonly maxWaiting: number;
  private readonly idleMs: number;
  private readonly inlineChars: number;
  private inFlight = 0;
  private closed = false;

  constructor(options: RegionReadJobsOptions = {}) {
    this.maxWaiting = options.maxWaiting ?? 32;
    this.idleMs = options.idleMs ?? 2 * 60_000;
    this.inlineChars = options.inlineChars ?? INLINE_CHARS;
  }

  /** A region's columns from its stored texts (see decodeRegionPoints). */
  async decode(participants: string | null, plot: string | null): Promise<RegionColumns> {
    if ((participants?.length ?? 0) + (plot?.length ?? 0) < this.inlineChars)
      return decodeRegionPoints(participants, plot);
    if (this.closed) throw new Error("RegionReadJobs: closed");
    if (this.inFlight > this.maxWaiting) {
      throw new HttpError(
        429,
        "regions_busy",
        "Other regions are being read for other requests; ask again in a moment.",
      );
    }
    this.inFlight++;
    try {
      const task: RegionReadTask = { participants, plot };
      return (await this.getPool().run(task)) as RegionColumns;
    } finally {
      this.inFlight--;
    }
  }

  /** Stops the worker thread (reads in flight are rejected). */
  async close(): Promise<void> {
    this.closed = true;
    const pool = this.pool;
    this.pool = null;
    if (pool) await pool.destroy();
  }

  private getPool(): Piscina {
    if (!this.pool) {
      this.pool = workerPool("region-read-task.ts", {
        minThreads: 0,
        maxThreads: 1,
        idleTimeout: this.idleMs,
      });
    }
    return this.pool;
  }
}

let shared: RegionReadJobs | null = null;

/** The process's region-reading thread (created on first use; idle, it does not keep the process alive). */
export function sharedRegionReadJobs(): RegionReadJobs {
  shared ??= new RegionReadJobs();
  return shared;
}
