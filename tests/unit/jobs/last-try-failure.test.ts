/**
 * Why a job's last try failed (server/worker/queue.ts `lastTryFailure`):
 * the failure texts pg-boss 10 stores, read from the installed pg-boss's
 * own source so that an upgrade changing them fails here, and our own
 * hand-back text.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import { describe, expect, it } from "vitest";
import { INTERNAL_FAILURE } from "../../../server/jobs/fit-jobs";
import { lastTryFailure, WORKER_STOPPED } from "../../../server/worker/queue";

const pgBossSource = (file: string) =>
  readFileSync(join(dirname(createRequire(import.meta.url).resolve("pg-boss")), file), "utf8");

describe("a job's last try", () => {
  it("pg-boss 10 still writes the failure texts that are read as a lost worker or a try too long", () => {
    expect(pgBossSource("plans.js")).toContain("job failed by timeout in active state");
    expect(pgBossSource("manager.js")).toContain("pg-boss shut down while active");
    expect(pgBossSource("manager.js")).toContain("`handler execution exceeded ");
  });

  it("a lease run out, a worker stopping, or a hand-back: the worker was lost", () => {
    for (const output of [
      // as pg-boss stores them: a text in `value`, or an object with a message
      { value: { message: "job failed by timeout in active state" } },
      { value: "pg-boss shut down while active" },
      { message: `${WORKER_STOPPED}: worker 1 on host-a (process 7)` },
    ]) {
      const failure = lastTryFailure(output, 4);
      expect(failure.code).toBe("worker_lost");
      expect(failure.fitMessage).toContain("not finished in 4 tries");
    }
    expect(lastTryFailure({ value: "pg-boss shut down while active" }, 1).fitMessage).toContain(
      "not finished in 1 try,",
    );
  });

  it("a try timed out in its worker: too long for the lease", () => {
    const failure = lastTryFailure({ message: "handler execution exceeded 21600000ms" }, 4);
    expect(failure.code).toBe("part_too_long");
    expect(failure.fitMessage).toContain("WORKER_LEASE_SECONDS");
    expect(failure.message).toBe("handler execution exceeded 21600000ms");
  });

  it("work that threw, or a failure with no text: an internal error, its text kept for the log", () => {
    const threw = lastTryFailure({ name: "Error", message: "fit x has no plan", stack: "…" }, 4);
    expect(threw).toEqual({
      code: "internal_error",
      message: "fit x has no plan",
      fitMessage: INTERNAL_FAILURE,
    });
    expect(lastTryFailure(null, 4)).toMatchObject({
      code: "internal_error",
      message: "no message",
    });
  });
});
