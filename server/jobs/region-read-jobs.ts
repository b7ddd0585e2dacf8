/**
 * The worker thread that decodes finished regions and sorts their
 * participants (piscina, server/jobs/region-read-task.ts), so the request
 * thread does not: at 20,000 participants one region's stored texts
 * (~3.5 MB) take ~40 ms to decode and one order 10–25 ms to sort. Texts
 * under INLINE_CHARS (a region of up to ~700 participants, a few
 * milliseconds) are decoded in place, and regions of fewer than
 * INLINE_ORDER participants sorted in place, which costs less than the
 * hand-over. One thread (a second would take the core the request thread
 * needs on a 2-core machine); at most `maxWaiting` reads wait behind the
 * running one, more answer 429 `regions_busy`. The thread starts with the
 * first large region and ends after `idleMs` without one. Decoded regions
 * are kept (services/fits.ts), so each is decoded once.
 */
import { HttpError } from "../http/errors";
import {
  decodeRegionPoints,
  type OrderKeys,
  orderPositions,
  type RegionColumns,
} from "./region-points";
import type { RegionReadTask } from "./region-read-task";
import { OneThread } from "./worker-pool";

/** Stored texts shorter than this (characters, rows and plot together) are decoded on the calling thread. */
export const INLINE_CHARS = 256 * 1024;

/** Orders of fewer participants than this (~1–2 ms to sort) are sorted on the calling thread. */
export const INLINE_ORDER = 4096;

export interface RegionReadJobsOptions {
  /** Reads that may wait behind the running one (default 32). */
  maxWaiting?: number;
  /** The thread ends after this long without a read (default 2 minutes). */
  idleMs?: number;
  /** Texts shorter than this are decoded in place (default INLINE_CHARS). */
  inlineChars?: number;
  /** Orders of fewer participants are sorted in place (default INLINE_ORDER). */
  inlineOrder?: number;
}

export class RegionReadJobs {
  private readonly thread: OneThread;
  private readonly inlineChars: number;
  private readonly inlineOrder: number;

  constructor(options: RegionReadJobsOptions = {}) {
    this.inlineChars = options.inlineChars ?? INLINE_CHARS;
    this.inlineOrder = options.inlineOrder ?? INLINE_ORDER;
    this.thread = new OneThread("region-read-task.ts", {
      maxWaiting: options.maxWaiting ?? 32,
      idleMs: options.idleMs ?? 2 * 60_000,
      busy: () =>
        new HttpError(
          429,
          "regions_busy",
          "Other regions are being read for other requests; ask again in a moment.",
        ),
    });
  }

  /** A region's columns from its stored texts (see decodeRegionPoints). */
  async decode(participants: string | null, plot: string | null): Promise<RegionColumns> {
    if ((participants?.length ?? 0) + (plot?.length ?? 0) < this.inlineChars)
      return decodeRegionPoints(participants, plot);
    const task: RegionReadTask = { kind: "decode", participants, plot };
    return (await this.thread.run(task)) as RegionColumns;
  }

  /** The positions of a region's participants in the order of `keys` (see orderPositions). */
  async order(keys: OrderKeys, direction: "asc" | "desc"): Promise<Uint32Array> {
    if (keys.length < this.inlineOrder) return orderPositions(keys, direction);
    const task: RegionReadTask = { kind: "order", keys, direction };
    return (await this.thread.run(task)) as Uint32Array;
  }

  /** Stops the worker thread (reads in flight are rejected). */
  close(): Promise<void> {
    return this.thread.close();
  }
}

let shared: RegionReadJobs | null = null;

/** The process's region-reading thread (created on first use; idle, it does not keep the process alive). */
export function sharedRegionReadJobs(): RegionReadJobs {
  shared ??= new RegionReadJobs();
  return shared;
}
