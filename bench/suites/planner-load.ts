/**
 * The planner under load: the real server (a child process, demo mode)
 * answers planner questions in its worker thread while GET /api/health is
 * timed every 100 ms. Prints the health latency (p50/p95/max) with nothing
 * running, during formula answers, and during a simulation at the cost cap
 * (PLANNER_MAX_DRAWS), plus how long the capped simulation took and how
 * quickly a question over the cap was refused (422 planner_too_costly).
 * Figures only; nothing here passes or fails on time.
 */
import os from "node:os";
import { PLANNER_MAX_DRAWS } from "../../contract/planner";
import { healthDuring, latencySummary, startBenchServer } from "../server-process";

/** The question that held the request thread ~250 s before the planner moved to its worker thread. */
const ISSUE_QUESTION = {
  design: "correlation",
  effect: 0.3,
  mode: "simulation",
  components: { measurementNoise: 4, taskDesign: 0.5, trueDifferences: 1 },
  simulations: 20000,
  sessions: 20,
  trials: 10000,
};

export default async function plannerLoad(): Promise<void> {
  const server = await startBenchServer();
  const ask = async (question: unknown) => {
    const t0 = performance.now();
    const res = await fetch(`${server.base}/api/planner`, {
      method: "POST",
      headers: { "Content-Type": "application/json", Cookie: server.cookie },
      body: JSON.stringify(question),
    });
    const body = (await res.json()) as Record<string, unknown>;
    return { status: res.status, body, ms: performance.now() - t0 };
  };
  try {
    console.log(
      `machine: ${os.cpus().length} cores, load (1-minute average) ${os.loadavg()[0].toFixed(1)}; cap ${PLANNER_MAX_DRAWS / 1e6} million draws`,
    );
    console.log(
      latencySummary(
        "GET /api/health, idle, 3 s",
        await healthDuring(server.base, new Promise((r) => setTimeout(r, 3000))),
      ),
    );

    const formulaTimes: number[] = [];
    const formulas = (async () => {
      for (let k = 0; k < 40; k++) {
        const r = await ask({ design: "two-group", effect: 0.2 + k / 100, groupRatio: 1.5 });
        if (r.status !== 200)
          throw new Error(`formula answered ${r.status}: ${JSON.stringify(r.body).slice(0, 300)}`);
        formulaTimes.push(r.ms);
      }
    })();
    const duringFormulas = await healthDuring(server.base, formulas);
    await formulas;
    console.log(
      `first formula answer (starts the planner thread): ${formulaTimes[0].toFixed(1)} ms`,
    );
    console.log(latencySummary("POST /api/planner, formula (two groups)", formulaTimes.slice(1)));
    console.log(latencySummary("GET /api/health during formula answers", duringFormulas));

    const refused = await ask(ISSUE_QUESTION);
    const error = (
      refused.body as {
        error?: {
          code: string;
          message: string;
          details: { maxSimulations: number; requested: number };
        };
      }
    ).error;
    if (refused.status !== 422 || !error)
      throw new Error(`the question over the cap answered ${refused.status}`);
    console.log(
      `over the cap (${(error.details.requested / 1e6).toFixed(0)} million draws): ${refused.status} ${error.code} in ${refused.ms.toFixed(1)} ms`,
    );

    const capped = { ...ISSUE_QUESTION, simulations: error.details.maxSimulations };
    const simulation = ask(capped);
    const duringSimulation = await healthDuring(server.base, simulation);
    const answered = await simulation;
    if (answered.status !== 200)
      throw new Error(
        `the capped simulation answered ${answered.status}: ${JSON.stringify(answered.body).slice(0, 300)}`,
      );
    const draws =
      error.details.requested * (error.details.maxSimulations / ISSUE_QUESTION.simulations);
    console.log(
      `capped simulation: ${capped.simulations.toLocaleString("en")} simulated studies × 20 sessions, ${(draws / 1e6).toFixed(0)} million draws in ${(answered.ms / 1000).toFixed(1)} s (${(draws / answered.ms / 1000).toFixed(1)} million draws/s)`,
    );
    console.log(latencySummary("GET /api/health during the capped simulation", duringSimulation));
    console.log(`  health answers over 100 ms: ${duringSimulation.filter((t) => t > 100).length}`);
  } catch (error) {
    console.log(`server output:\n${server.log().split("\n").slice(-30).join("\n")}`);
    throw error;
  } finally {
    await server.stop();
  }
}
