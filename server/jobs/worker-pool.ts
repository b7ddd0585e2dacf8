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
