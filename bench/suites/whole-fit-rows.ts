/**
 * Whole-fit rows at biobank size: a fit that is not split into chunks (here
 * a Huber association with two covariates, parametric inference) of 20,000
 * participants × 150 regions, run by the fit thread's task
 * (server/jobs/fit-task.ts) as the app runs it, its region messages
 * received and let go as the app stores them. Prints the wall time, the
 * time per region and the peak memory of the whole process (sampled every
 * 200 ms: the fit thread's heap and the messages in flight). The fit thread
 * hands each region's rows on as soon as the region is diagnosed
 * (runFitByRegion); gathered over the whole fit, the same rows took
 * 3.0 GB here. `WHOLE_FIT_REGIONS=400` runs the region count.
 *
 * Data are invented by a seeded generator.
 */
import { MessageChannel } from "node:worker_threads";
import { modelSpecSchema } from "../../contract/spec";
import type { FitTask, FitTaskMessage, FitTaskOutcome } from "../../server/jobs/fit-task";
import { regionRowsOf } from "../../server/jobs/region-rows";
import { workerPool } from "../../server/jobs/worker-pool";
import { createRng, normalDraw } from "../../server/stats/rng";

const N = 20_000;
const REGIONS = Number(process.env.WHOLE_FIT_REGIONS ?? 150);

export default async function wholeFitRows(): Promise<void> {
  const rng = createRng(515);
  const participants = Array.from({ length: N }, (_, i) => `sub-${String(i + 1).padStart(5, "0")}`);
  const regions = Array.from({ length: REGIONS }, (_, r) => `region_${r + 1}`);
  const accuracy = participants.map(() => 0.5 + rng.next() / 2);
  const values = regions.map((_, r) =>
    Float64Array.from(accuracy, (a) => (r % 7 === 0 ? 0.2 * a : 0) + normalDraw(rng)),
  );
  const data = {
    participants,
    regions,
    values,
    numericColumns: {
      accuracy,
      age: participants.map(() => 18 + rng.int(60)),
      mean_fd: participants.map(() => 0.05 + rng.next() / 5),
    },
    categoricalColumns: {},
  };
  const spec = modelSpecSchema.parse({
    kind: "association",
    predictor: "accuracy",
    covariates: ["age", "mean_fd"],
    estimator: "huber",
    inference: "parametric",
    correction: "holm",
    seed: 1,
  });
  const pool = workerPool("fit-task.ts", { minThreads: 1, maxThreads: 1 });
  const channel = new MessageChannel();
  let received = 0;
  let rowBytes = 0;
  let plotBytes = 0;
  channel.port1.on("message", (m: FitTaskMessage) => {
    if (m.type !== "region") return;
    received++;
    // Read back as the app does before storing them.
    const { participants, plot } = regionRowsOf(m);
    rowBytes += participants.length;
    plotBytes += plot?.length ?? 0;
  });
  let peak = process.memoryUsage().rss;
  const sampler = setInterval(() => {
    peak = Math.max(peak, process.memoryUsage().rss);
  }, 200);
  const start = performance.now();
  try {
    const outcome = (await pool.run(
      { spec, data, port: channel.port2, fullPriority: true } satisfies FitTask,
      { transferList: [channel.port2] },
    )) as FitTaskOutcome;
    const seconds = (performance.now() - start) / 1000;
    if (!outcome.ok) throw new Error(outcome.message);
    console.log(
      `Huber association, ${N.toLocaleString("en")} participants × ${REGIONS} regions, parametric: ${seconds.toFixed(1)} s (${((1000 * seconds) / REGIONS).toFixed(0)} ms per region), ${received} region messages (${(rowBytes / 1e6).toFixed(0)} MB of participants' rows and ${(plotBytes / 1e6).toFixed(0)} MB of plot data as JSON)`,
    );
    console.log(`peak memory of the process (RSS): ${(peak / 1e6).toFixed(0)} MB`);
  } finally {
    clearInterval(sampler);
    channel.port1.close();
    await pool.destroy();
  }
}
