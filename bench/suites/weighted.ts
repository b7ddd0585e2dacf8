/**
 * Weighting by first-level standard errors at whole-brain scale: a weighted
 * one-sample fit (random-effects, τ² by REML) over 400 regions × 2,000
 * participants. Prints the time (target ≤ 1 s), the REML fit per region,
 * and for comparison DerSimonian–Laird and REML with Knapp–Hartung.
 *
 * Data are invented by a seeded generator: per region a true mean, true
 * between-participant spread τ, and per participant a first-level standard
 * error between 0.1 and 0.6.
 */
import {
  weightedLinearModel,
  type SmallSampleAdjustment,
  type Tau2Method,
} from "../../server/stats/meta-regression";
import { modelSpecSchema } from "../../contract/spec";
import { runFit } from "../../server/stats/run-fit";
import { createRng, normalDraw } from "../../server/stats/rng";

const REGIONS = 400;
const N = 2000;
const SEED = 4242;

function seconds(start: bigint): number {
  return Number(process.hrtime.bigint() - start) / 1e9;
}

export default async function run(): Promise<void> {
  const rng = createRng(SEED);
  const values: number[][] = [];
  const errors: number[][] = [];
  for (let r = 0; r < REGIONS; r++) {
    const mean = 0.3 * normalDraw(rng);
    const tau = 0.1 + 0.4 * rng.next();
    const y: number[] = new Array(N);
    const se: number[] = new Array(N);
    for (let i = 0; i < N; i++) {
      se[i] = 0.1 + 0.5 * rng.next();
      y[i] = mean + tau * normalDraw(rng) + se[i] * normalDraw(rng);
    }
    values.push(y);
    errors.push(se);
  }
  const X = Array.from({ length: N }, () => [1]);

  const time = (tau2Method: Tau2Method, smallSample: SmallSampleAdjustment) => {
    const start = process.hrtime.bigint();
    let checksum = 0;
    for (let r = 0; r < REGIONS; r++) {
      checksum += weightedLinearModel({
        y: values[r],
        se: errors[r],
        X,
        tested: 0,
        tau2Method,
        smallSample,
      }).tau2;
    }
    return { elapsed: seconds(start), checksum };
  };

  time("reml", "none"); // warm-up
  const reml = time("reml", "none");
  const dl = time("dl", "none");
  const kh = time("reml", "knapp-hartung");
  console.log(`weighted one-sample fit, ${REGIONS} regions × ${N} participants`);
  console.log(
    `  REML:                 ${(reml.elapsed * 1000).toFixed(0)} ms (target ≤ 1000 ms; ${((reml.elapsed / REGIONS) * 1000).toFixed(2)} ms per region)`,
  );
  console.log(`  DerSimonian–Laird:    ${(dl.elapsed * 1000).toFixed(0)} ms`);
  console.log(`  REML + Knapp–Hartung: ${(kh.elapsed * 1000).toFixed(0)} ms`);
  console.log(`  mean tau2 over regions (REML): ${(reml.checksum / REGIONS).toFixed(4)}`);

  // The same question end to end through runFit, as the app and the recipe command run it:
  // weighted estimates plus the per-participant diagnostics table (400 × 2,000 = 800,000 rows).
  const data = {
    participants: Array.from({ length: N }, (_, i) => `sub-${String(i + 1).padStart(4, "0")}`),
    regions: Array.from({ length: REGIONS }, (_, r) => `region_${r + 1}`),
    values: values.map((v) => Float64Array.from(v)),
    standardErrors: errors.map((e) => Float64Array.from(e)),
    numericColumns: {},
    categoricalColumns: {},
  };
  const spec = modelSpecSchema.parse({
    kind: "one-sample",
    weights: "first-level-se",
    tau2Method: "reml",
  });
  runFit(spec, data); // warm-up
  const start = process.hrtime.bigint();
  const out = runFit(spec, data);
  console.log(
    `  whole runFit (REML, with ${out.participants.length.toLocaleString("en")} participant diagnostic rows): ${(seconds(start) * 1000).toFixed(0)} ms`,
  );
}
