/**
 * The specification curve (issue 17) at the size of the issue: 3 estimators
 * (least squares, Huber, rank) × 8 covariate sets (every subset of three
 * covariates) × 4 exclusion rules (16 on/off subsets) = 384 specifications,
 * N = 500 invented participants, 500 null draws of the joint test, each
 * re-running every specification (target ≤ 20 s). CURVE_BENCH_RESAMPLES
 * sets the number of null draws (default 500). Data are invented by a
 * seeded generator; the load average and the fit's CPU time are printed
 * beside the elapsed time, since the machine is shared (the fit runs on
 * one thread here; `curve-jobs` times it spread over threads).
 */
import os from "node:os";
import { type FitData, modelSpecSchema } from "../../contract/spec";
import { runFit } from "../../server/stats/run-fit";
import { createRng, normalDraw } from "../../server/stats/rng";

function invent(n: number, seed: number): FitData {
  const rng = createRng(seed);
  const col = () => Array.from({ length: n }, () => normalDraw(rng) as number | null);
  const trait = col();
  const age = col();
  const iq = col();
  const fd = Array.from({ length: n }, () => (0.8 * rng.next()) as number | null);
  const accuracy = Array.from({ length: n }, () => (0.4 + 0.6 * rng.next()) as number | null);
  const site = Array.from({ length: n }, (_, i) => (i % 4 === 0 ? "north" : "south"));
  const y = Float64Array.from(
    { length: n },
    (_, i) => 0.2 * (trait[i] as number) + 0.1 * (age[i] as number) + normalDraw(rng),
  );
  return {
    participants: Array.from({ length: n }, (_, i) => `P${i + 1}`),
    regions: ["amygdala"],
    values: [y],
    numericColumns: { trait, age, iq, mean_fd: fd, accuracy },
    categoricalColumns: { site },
  };
}

export default async function curve(): Promise<void> {
  const resamples = Number(process.env.CURVE_BENCH_RESAMPLES ?? 500);
  const covariates = ["age", "iq", "site"];
  const covariateSets: string[][] = [];
  for (let mask = 0; mask < 8; mask++)
    covariateSets.push(covariates.filter((_, k) => mask & (1 << k)));
  const spec = modelSpecSchema.parse({
    kind: "specification-curve",
    regions: ["amygdala"],
    predictor: "trait",
    inference: "permutation",
    resamples,
    specifications: {
      estimators: ["ols", "huber", "rank"],
      covariateSets,
      exclusionRules: [
        { column: "mean_fd", op: ">", value: 0.6, reason: "motion" },
        { column: "accuracy", op: "<", value: 0.5, reason: "task not done" },
        { column: "site", op: "==", value: "north", reason: "scanner change" },
        { column: "age", op: ">", value: 2, reason: "outside the age range" },
      ],
    },
  });
  const data = invent(500, 17);
  const before = os.loadavg();
  const start = process.hrtime.bigint();
  const cpuStart = process.cpuUsage();
  const result = runFit(spec, data);
  const cpu = process.cpuUsage(cpuStart);
  const elapsed = Number(process.hrtime.bigint() - start) / 1e9;
  const after = os.loadavg();
  const count = (result.specifications as unknown[]).length;
  console.log(
    `specification curve: ${count} specifications, N = 500, ${resamples} null draws: ${elapsed.toFixed(1)} s (target ≤ 20 s at 500 draws)`,
  );
  console.log(
    `CPU time of the fit: ${((cpu.user + cpu.system) / 1e6).toFixed(1)} s (one thread; less than the elapsed time when the machine is busy)`,
  );
  console.log(
    `load average (1 min) before ${before[0].toFixed(2)}, after ${after[0].toFixed(2)} on ${os.cpus().length} cores`,
  );
  console.log(`joint test: ${JSON.stringify(result.jointTest)}`);
}
