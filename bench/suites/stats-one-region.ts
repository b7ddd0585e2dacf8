/**
 * One-region association fit with every diagnostic: N = 500 participants,
 * 3 covariates (two numeric, one categorical with three levels), estimator
 * ols, parametric inference — the path a region detail view recomputes.
 * Prints median and 95th percentile over 300 timed runs after 30 warm-up
 * runs. Target: median ≤ 2 ms on this machine.
 *
 * Also prints the robust (Huber) and rank (Spearman) variants of the same
 * fit for comparison (no target).
 */
import os from "node:os";
import type { FitData } from "../../contract/spec";
import { modelSpecSchema } from "../../contract/spec";
import { createRng } from "../../server/stats/rng";
import { runFit } from "../../server/stats/run-fit";

const N = 500;

function makeData(): FitData {
  const rng = createRng(2024);
  const normal = () => {
    let s = 0;
    for (let i = 0; i < 12; i++) s += rng.next();
    return s - 6;
  };
  const participants = Array.from({ length: N }, (_, i) => `sub-${String(i + 1).padStart(4, "0")}`);
  const age = participants.map(() => 18 + rng.int(60));
  const motion = participants.map(() => 0.05 + rng.next() / 5);
  const site = participants.map(() => ["north", "south", "east"][rng.int(3)]);
  const accuracy = participants.map(() => 0.5 + rng.next() / 2);
  const values = [
    Float64Array.from(
      participants,
      (_, i) => 0.8 * accuracy[i] - 0.01 * age[i] + 2 * motion[i] + normal(),
    ),
  ];
  return {
    participants,
    regions: ["left dorsolateral prefrontal"],
    values,
    numericColumns: { age, motion, accuracy },
    categoricalColumns: { site },
  };
}

function summarise(label: string, times: number[]): void {
  const sorted = times.slice().sort((a, b) => a - b);
  const at = (q: number) => sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))];
  console.log(
    `${label}: median ${at(0.5).toFixed(3)} ms, p95 ${at(0.95).toFixed(3)} ms (${times.length} runs)`,
  );
}

export default async function statsOneRegionBench(): Promise<void> {
  const data = makeData();
  console.log(
    `one region, N = ${N}, covariates age + motion + site (3 levels); machine load ${os.loadavg()[0].toFixed(1)}`,
  );
  for (const estimator of ["ols", "huber", "rank"] as const) {
    const spec = modelSpecSchema.parse({
      kind: "association",
      predictor: "accuracy",
      covariates: ["age", "motion", "site"],
      estimator,
    });
    for (let k = 0; k < 30; k++) runFit(spec, data);
    const times: number[] = [];
    let participants = 0;
    for (let k = 0; k < 300; k++) {
      const t0 = performance.now();
      const res = runFit(spec, data);
      times.push(performance.now() - t0);
      participants = res.participants.length;
    }
    summarise(
      `association fit (${estimator}) with diagnostics for ${participants} participants${estimator === "ols" ? " [target median ≤ 2 ms]" : ""}`,
      times,
    );
  }
}
