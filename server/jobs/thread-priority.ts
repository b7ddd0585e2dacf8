/**
 * Scheduling priority of the fit worker threads.
 *
 * A fit keeps its worker thread busy for seconds to minutes; the request
 * thread must stay responsive meanwhile (target: 20 readers see p95 ≤
 * 100 ms while a 10,000-rearrangement fit runs). On Linux the nice value
 * belongs to each thread, so a worker thread can lower its own priority:
 * the scheduler then hands a shared core to the request thread first and
 * the fit takes what is left (on an idle machine it runs at full speed).
 * Elsewhere the same call would lower the whole process, so it is skipped.
 */
import { setPriority } from "node:os";
import { isMainThread } from "node:worker_threads";

/** Nice value of fit worker threads (0 = normal, 19 = lowest). */
export const FIT_THREAD_NICE = 10;

/** Lowers the calling worker thread's priority to `nice`. True when it was lowered; never touches the main thread. */
export function lowerWorkerThreadPriority(nice: number = FIT_THREAD_NICE): boolean {
  if (isMainThread || process.platform !== "linux") return false;
  try {
    setPriority(nice);
    return true;
  } catch {
    // Not permitted (a sandbox without setpriority): the fit still runs, at normal priority.
    return false;
  }
}
