/**
 * Chunk and fit threads (server/jobs/chunk-task.ts, fit-task.ts): in a web
 * server they run behind the request thread (nice FIT_THREAD_NICE); a
 * worker process's threads, which serve no requests, keep normal priority. Read back from
 * /proc (the kernel's own account of each thread's nice value).
 */
import { readdirSync, readFileSync } from "node:fs";
import { MessageChannel } from "node:worker_threads";
import { describe, expect, it } from "vitest";
import { type FitData, modelSpecSchema } from "../../../contract/spec";
import { FIT_THREAD_NICE } from "../../../server/jobs/thread-priority";
import { workerPool } from "../../../server/jobs/worker-pool";

/** Threads of this process at the fit threads' nice value or lower priority. */
function loweredThreads(): number {
  let count = 0;
  for (const tid of readdirSync("/proc/self/task")) {
    try {
      const fields = readFileSync(`/proc/self/task/${tid}/stat`, "utf8").split(") ")[1].split(" ");
      if (Number(fields[16]) >= FIT_THREAD_NICE) count++;
    } catch {
      // The thread ended meanwhile.
    }
  }
  return count;
}

const data: FitData = {
  participants: ["a", "b", "c", "d"],
  regions: ["insula"],
  values: [Float64Array.from([0.1, 0.4, -0.2, 0.3])],
  numericColumns: {},
  categoricalColumns: {},
};
// A model that is not split: the plan task answers null at once.
const plan = { type: "plan" as const, spec: modelSpecSchema.parse({ kind: "one-sample" }), data };

describe.runIf(process.platform === "linux")("chunk thread priority", () => {
  it("a worker process's chunk thread keeps normal priority; a web server's is lowered", async () => {
    const before = loweredThreads();
    const pool = workerPool("chunk-task.ts", { minThreads: 1, maxThreads: 1 });
    try {
      expect(await pool.run({ ...plan, fullPriority: true })).toEqual({ ok: true, value: null });
      expect(loweredThreads()).toBe(before);
      expect(await pool.run(plan)).toEqual({ ok: true, value: null });
      expect(loweredThreads()).toBe(before + 1);
    } finally {
      await pool.destroy();
    }
  });

  it("so does a worker process's fit thread", async () => {
    const before = loweredThreads();
    const pool = workerPool("fit-task.ts", { minThreads: 1, maxThreads: 1 });
    const runOneFit = async (fullPriority: boolean) => {
      const channel = new MessageChannel();
      const outcome = await pool.run(
        { spec: plan.spec, data, port: channel.port2, fullPriority },
        { transferList: [channel.port2] },
      );
      channel.port1.close();
      return outcome as { ok: boolean };
    };
    try {
      expect((await runOneFit(true)).ok).toBe(true);
      expect(loweredThreads()).toBe(before);
      expect((await runOneFit(false)).ok).toBe(true);
      expect(loweredThreads()).toBe(before + 1);
    } finally {
      await pool.destroy();
    }
  });
});
