/**
 * Split fits through the jobs path of the real server (a child process,
 * demo mode, embedded database): the fit is planned and its chunks computed
 * on the chunk pool's threads — one per core, at the fit threads' lower
 * priority (server/jobs/fit-jobs.ts) — then merged on the fit thread, while
 * GET /api/health is timed every 100 ms (target p95 ≤ 100 ms: the request
 * thread stays first in line).
 *
 * 1. The specification curve at the size of issue 17 (the `curve` suite
 *    times the same model in one piece, in-process): 3 estimators × 8
 *    covariate sets × 4 exclusion rules = 384 specifications, N = 500
 *    invented participants, 500 null draws (CURVE_BENCH_RESAMPLES) in 20
 *    chunks of 25. Target ≤ 20 s.
 * 2. A max-T Freedman–Lane fit of 400 regions × 500 participants × 10,000
 *    rearrangements (4 region chunks × 20 rearrangement blocks).
 *
 * Times are from the request that starts the fit to the fit's "done"
 * (data already loaded and uploaded); the load average is printed beside
 * them, since the machine is shared. Figures only.
 */
import os from "node:os";
import { createRng, normalDraw } from "../../server/stats/rng";
import { healthDuring, latencySummary, startBenchServer } from "../server-process";

const PARTICIPANTS = 500;
const REGIONS = 400;
const MAXT_RESAMPLES = 10_000;

/** Brain table (the curve's region first, then REGIONS − 1 more) and participant sheet, invented from a seed. */
function makeFiles(): { brain: string; sheet: string } {
  const rng = createRng(17);
  const header = ["participant_id", "amygdala"];
  for (let r = 2; r <= REGIONS; r++) header.push(`region_${String(r).padStart(3, "0")}`);
  const brain = [header.join(",")];
  const sheet = ["participant_id\ttrait\tage\tiq\tmean_fd\taccuracy\tsite"];
  for (let i = 0; i < PARTICIPANTS; i++) {
    const id = `sub-${String(i + 1).padStart(4, "0")}`;
    const trait = normalDraw(rng);
    const age = normalDraw(rng);
    const iq = normalDraw(rng);
    const fd = 0.8 * rng.next();
    const accuracy = 0.4 + 0.6 * rng.next();
    const site = i % 4 === 0 ? "north" : "south";
    const cells = [id, (0.2 * trait + 0.1 * age + normalDraw(rng)).toFixed(6)];
    for (let r = 2; r <= REGIONS; r++)
      cells.push((0.3 * (r % 5 === 0 ? accuracy : 0) + rng.next() * 2 - 1).toFixed(5));
    brain.push(cells.join(","));
    sheet.push(
      [id, trait, age, iq, fd, accuracy]
        .map((v) => (typeof v === "number" ? v.toFixed(6) : v))
        .concat(site)
        .join("\t"),
    );
  }
  return { brain: `${brain.join("\n")}\n`, sheet: `${sheet.join("\n")}\n` };
}

export default async function curveJobs(): Promise<void> {
  const resamples = Number(process.env.CURVE_BENCH_RESAMPLES ?? 500);
  const server = await startBenchServer();
  const { base, cookie } = server;
  const must = async (method: string, path: string, body?: unknown) => {
    const res = await fetch(`${base}${path}`, {
      method,
      headers: { Cookie: cookie, ...(body ? { "Content-Type": "application/json" } : {}) },
      body: body ? JSON.stringify(body) : undefined,
    });
    const json = (await res.json()) as Record<string, unknown>;
    if (res.status >= 300)
      throw new Error(
        `${method} ${path} answered ${res.status}: ${JSON.stringify(json).slice(0, 300)}`,
      );
    return json;
  };
  const upload = async (studyId: string, kind: string, fileName: string, text: string) => {
    const form = new FormData();
    form.set("kind", kind);
    form.set("file", new Blob([text]), fileName);
    const res = await fetch(`${base}/api/studies/${studyId}/datasets`, {
      method: "POST",
      body: form,
      headers: { Cookie: cookie },
    });
    const preview = (await res.json()) as { id: string };
    if (res.status !== 201)
      throw new Error(
        `upload ${fileName} answered ${res.status}: ${JSON.stringify(preview).slice(0, 300)}`,
      );
    await must("POST", `/api/studies/${studyId}/datasets/${preview.id}/confirm`, {});
  };
  /** Runs a model's fit to done while timing /api/health; seconds and latencies. */
  const timedFit = async (studyId: string, name: string, spec: object) => {
    const model = await must("POST", `/api/studies/${studyId}/models`, {
      name,
      regionSelection: "anatomical-or-prior",
      spec,
    });
    const load = os.loadavg()[0];
    const t0 = performance.now();
    const fit = await must("POST", `/api/studies/${studyId}/fits`, { modelId: model.id });
    const finished = (async () => {
      for (;;) {
        const now = await must("GET", `/api/fits/${fit.id}`);
        if (now.status === "done") return now;
        if (now.status === "failed" || now.status === "cancelled")
          throw new Error(`fit ${name} ended ${now.status}: ${JSON.stringify(now.error)}`);
        await new Promise((r) => setTimeout(r, 200));
      }
    })();
    // Probes of /api/health with when they were sent, to tell the phase of any slow answer.
    const probes: { at: number; ms: number }[] = [];
    const phases: { at: number; fraction: number }[] = [];
    let settled = false;
    void finished.finally(() => {
      settled = true;
    });
    const inFlight: Promise<unknown>[] = [];
    let turn = 0;
    while (!settled) {
      const sent = performance.now();
      inFlight.push(
        fetch(`${base}/api/health`).then(async (res) => {
          await res.arrayBuffer();
          probes.push({ at: sent - t0, ms: performance.now() - sent });
        }),
      );
      if (turn++ % 5 === 0)
        inFlight.push(
          must("GET", `/api/fits/${fit.id}`).then((now) =>
            phases.push({
              at: sent - t0,
              fraction: (now.progress as { fraction: number } | null)?.fraction ?? 0,
            }),
          ),
        );
      await new Promise((r) => setTimeout(r, 100));
    }
    await Promise.all(inFlight);
    const view = await finished;
    const phaseAt = (at: number) => phases.filter((p) => p.at <= at).at(-1)?.fraction ?? 0;
    const slow = probes
      .filter((p) => p.ms > 100)
      .map(
        (p) =>
          `${(p.at / 1000).toFixed(1)} s (${p.ms.toFixed(0)} ms, progress ${phaseAt(p.at).toFixed(2)})`,
      );
    return {
      seconds: (performance.now() - t0) / 1000,
      health: probes.map((p) => p.ms),
      slow,
      view,
      load,
    };
  };
  try {
    console.log(
      `machine: ${os.cpus().length} cores (available parallelism ${os.availableParallelism()}), load (1-minute average) ${os.loadavg()[0].toFixed(1)}`,
    );
    const study = await must("POST", "/api/studies", { name: "Split fits benchmark" });
    const studyId = study.id as string;
    const files = makeFiles();
    await upload(studyId, "brain", "bench_brain-table.csv", files.brain);
    await upload(studyId, "participants", "bench_participants.tsv", files.sheet);
    console.log(
      latencySummary(
        "GET /api/health, idle, 3 s",
        await healthDuring(base, new Promise((r) => setTimeout(r, 3000))),
      ),
    );

    const covariates = ["age", "iq", "site"];
    const covariateSets: string[][] = [];
    for (let mask = 0; mask < 8; mask++)
      covariateSets.push(covariates.filter((_, k) => mask & (1 << k)));
    const curve = await timedFit(studyId, "Curve", {
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
    const count = ((curve.view.result as { specifications: unknown[] }).specifications ?? [])
      .length;
    console.log(
      `specification curve through the jobs path: ${count} specifications, N = ${PARTICIPANTS}, ${resamples} null draws in ${Math.ceil(resamples / 25)} chunks: ${curve.seconds.toFixed(1)} s (target ≤ 20 s at 500 draws; load ${curve.load.toFixed(1)} at the start, ${os.loadavg()[0].toFixed(1)} after)`,
    );
    console.log(latencySummary("GET /api/health during the curve", curve.health));
    console.log(
      `joint test: ${JSON.stringify((curve.view.result as { jointTest?: unknown }).jointTest)}`,
    );

    const maxT = await timedFit(studyId, "Max-T", {
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
      inference: "permutation",
      resamples: MAXT_RESAMPLES,
      correction: "maxt",
    });
    console.log(
      `max-T Freedman–Lane through the jobs path: ${REGIONS} regions × ${PARTICIPANTS} participants × ${MAXT_RESAMPLES.toLocaleString("en")} rearrangements: ${maxT.seconds.toFixed(1)} s (load ${maxT.load.toFixed(1)} at the start, ${os.loadavg()[0].toFixed(1)} after)`,
    );
    console.log(latencySummary("GET /api/health during the max-T fit", maxT.health));
    console.log(
      `  health answers over 100 ms: ${maxT.slow.length}${maxT.slow.length ? ` — sent at ${maxT.slow.join(", ")} (progress up to 0.9 is chunks; then the merge and the region rows)` : ""}`,
    );
  } catch (error) {
    console.log(`server output:\n${server.log().split("\n").slice(-30).join("\n")}`);
    throw error;
  } finally {
    await server.stop();
  }
}
