/**
 * A bench thread's task: the permutation kernel's chunk, or the plain
 * reference loop, timed inside the thread. The embedded path and the
 * worker processes compute chunks on threads (chunk-task.ts), so the
 * kernel's per-chunk cost is measured on a thread too, after a chunk of
 * warm-up, with the reference loop on the same thread right after it;
 * timed from the bench's main thread, the same chunks ran 30–45 % slower
 * than on the workers' threads in the same run.
 */
import runPermutationTask, { type PermutationTask } from "../server/jobs/permutation-task";
import { referenceGflops } from "./reference-loop";

export type KernelTask =
  | { type: "chunks"; tasks: PermutationTask[]; warmUp: PermutationTask }
  | { type: "reference"; n: number; regions: number };

/** Seconds per chunk (mean over `tasks`, after the untimed `warmUp`), or the reference loop's GFLOP/s. */
export default function runKernelTask(task: KernelTask): number {
  if (task.type === "reference") return referenceGflops(task.n, task.regions);
  runPermutationTask(task.warmUp);
  const start = performance.now();
  for (const t of task.tasks) runPermutationTask(t);
  return (performance.now() - start) / 1000 / task.tasks.length;
}
