/**
 * Fit worker threads run behind the request thread: on Linux a worker
 * lowers its own nice value and the main thread's stays as it was
 * (read back from /proc, the kernel's own account).
 */
import { readFileSync } from "node:fs";
import { Piscina } from "piscina";
import { describe, expect, it } from "vitest";
import { FIT_THREAD_NICE, lowerWorkerThreadPriority } from "../../../server/jobs/thread-priority";

const niceOf = (path: string) => Number(readFileSync(path, "utf8").split(") ")[1].split(" ")[16]);

describe.runIf(process.platform === "linux")("fit worker thread priority", () => {
  it("a worker thread lowers only itself", async () => {
    const before = niceOf("/proc/thread-self/stat");
    // A worker thread of a pool set up as the fit pool is (server/jobs/fit-jobs.ts).
    const pool = new Piscina({
      filename: new URL("./fixtures/priority-worker.ts", import.meta.url).href,
      execArgv: ["--import", "tsx"],
      maxThreads: 1,
    });
    const report = (await pool.run(null)) as { lowered: boolean; nice: number; mainNice: number };
    await pool.destroy();
    expect(report.lowered).toBe(true);
    expect(report.nice).toBe(Math.max(before, FIT_THREAD_NICE));
    expect(report.mainNice).toBe(before);
    expect(niceOf("/proc/thread-self/stat")).toBe(before);
  });

  it("the main thread is never lowered", () => {
    const before = niceOf("/proc/thread-self/stat");
    expect(lowerWorkerThreadPriority()).toBe(false);
    expect(niceOf("/proc/thread-self/stat")).toBe(before);
  });
});
