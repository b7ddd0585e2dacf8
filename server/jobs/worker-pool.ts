/**
 * One way to start a pool of worker threads for a task module in this
 * folder: the task file runs through tsx (Node 20 has no TypeScript
 * stripping), with the pool's thread counts and idle time as given. Each
 * task module lowers its own thread priority (thread-priority.ts).
 */
import { Piscina } from "piscina";

export interface WorkerPoolOptions {
  minThreads: number;
  maxThreads: number;
  /** Milliseconds an idle thread is kept (default: Piscina's). */
  idleTimeout?: number;
}

/** A Piscina pool running `taskFile` (a file name in server/jobs/, e.g. "fit-task.ts"). */
export function workerPool(taskFile: string, options: WorkerPoolOptions): Piscina {
  return new Piscina({
    filename: new URL(`./${taskFile}`, import.meta.url).href,
    execArgv: ["--import", "tsx"],
    ...options,
  });
}

export interface OneThreadOptions {
  /** Tasks that may wait behind the running one; more are refused with `busy()`. */
  maxWaiting: number;
  /** The thread ends after this long without a task. */
  idleMs: number;
  /** The error a task past `maxWaiting` is refused with (an HttpError 429 naming what is busy). */
  busy: () => Error;
}

/**
 * One worker thread for a task module (figures, planner questions, region
 * reads): started with the first task, ended after `idleMs` without one
 * (idle, it does not keep the process alive). One thread, since a second
 * would take the core the request thread needs on a 2-core machine; tasks
 * wait their turn, at most `maxWaiting` of them.
 */
export class OneThread {
  private pool: Piscina | null = null;
  private inFlight = 0;
  private closed = false;

  constructor(
    private readonly taskFile: string,
    private readonly options: OneThreadOptions,
  ) {}

  /** Runs `task` on the thread; a task whose `signal` aborts is dropped from the queue or, when running, stopped by ending the thread. */
  async run(task: unknown, signal?: AbortSignal): Promise<unknown> {
    if (this.closed) throw new Error(`${this.taskFile}: closed`);
    if (this.inFlight > this.options.maxWaiting) throw this.options.busy();
    this.inFlight++;
    try {
      return await this.getPool().run(task, signal ? { signal } : {});
    } finally {
      this.inFlight--;
    }
  }

  /** Stops the thread (tasks in flight are rejected). */
  async close(): Promise<void> {
    this.closed = true;
    const pool = this.pool;
    this.pool = null;
    if (pool) await pool.destroy();
  }

  private getPool(): Piscina {
    this.pool ??= workerPool(this.taskFile, {
      minThreads: 0,
      maxThreads: 1,
      idleTimeout: this.options.idleMs,
    });
    return this.pool;
  }
}
