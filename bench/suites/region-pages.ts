/**
 * A finished region's participants at biobank size, read as the app reads
 * them: the real server (a child process on 127.0.0.1, fresh data
 * directory) fits an association (ordinary least squares, parametric) of
 * 20,000 participants × 4 regions uploaded through the API from a seeded
 * generator; then one reader asks for
 * - the region's detail (GET /api/fits/:fitId/regions/:region), the first
 *   time and again;
 * - pages of 100 of its participants (GET …/participants) in the fit's
 *   order, sorted by each diagnostic both ways, and filtered by a search,
 *   the first time and again.
 * For each the suite prints the latency and the CPU time the server's
 * request thread spent per answer (Linux, /proc): the request thread
 * serves everyone, so that is the figure to keep to a few milliseconds.
 * `REGION_PAGES_PARTICIPANTS` changes the size.
 */
import os from "node:os";
import { participantOrders } from "../../contract/views/fits";
import { createRng } from "../../server/stats/rng";
import {
  latencySummary,
  mainThreadCpuMs,
  mustJson,
  startBenchServer,
  uploadDataset,
} from "../server-process";

const PARTICIPANTS = Number(process.env.REGION_PAGES_PARTICIPANTS ?? 20_000);
const REGIONS = 4;
const PAGE = 100;
/** Every order but the fit's own. */
const SORTS = participantOrders.filter((o) => o !== "position");

function makeFiles(): { brain: string; sheet: string } {
  const rng = createRng(4242);
  const lines = [
    [
      "participant_id",
      ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(2, "0")}`),
    ].join(","),
  ];
  const sheet = ["participant_id\tage\taccuracy"];
  for (let i = 0; i < PARTICIPANTS; i++) {
    const id = `sub-${String(i + 1).padStart(5, "0")}`;
    const accuracy = 0.5 + rng.next() / 2;
    const cells = [id];
    for (let r = 0; r < REGIONS; r++) cells.push((0.2 * accuracy + rng.next() * 2 - 1).toFixed(5));
    lines.push(cells.join(","));
    sheet.push([id, String(18 + Math.floor(rng.next() * 60)), accuracy.toFixed(3)].join("\t"));
  }
  return { brain: `${lines.join("\n")}\n`, sheet: `${sheet.join("\n")}\n` };
}

export default async function regionPages(): Promise<void> {
  const server = await startBenchServer();
  const { base, cookie, child } = server;
  try {
    const study = await mustJson(server, "POST", "/api/studies", { name: "Region pages" });
    const studyId = study.id as string;
    const files = makeFiles();
    await uploadDataset(server, studyId, "brain", "pages_brain-table.csv", files.brain);
    await uploadDataset(server, studyId, "participants", "pages_participants.tsv", files.sheet);
    const model = await mustJson(server, "POST", `/api/studies/${studyId}/models`, {
      name: "Pages",
      regionSelection: "independent-data",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "parametric",
        correction: "bh",
      },
    });
    const fit = await mustJson(server, "POST", `/api/studies/${studyId}/fits`, {
      modelId: model.id,
    });
    const fitId = fit.id as string;
    const started = performance.now();
    for (;;) {
      const now = await mustJson(server, "GET", `/api/fits/${fitId}`);
      if (now.status === "done") break;
      if (now.status !== "queued" && now.status !== "running")
        throw new Error(`the fit is ${now.status}: ${JSON.stringify(now.error)}`);
      await new Promise((r) => setTimeout(r, 100));
    }
    console.log(
      `machine: ${os.cpus().length} cores, load (1-minute average) ${os.loadavg()[0].toFixed(1)}`,
    );
    console.log(
      `fit: ${PARTICIPANTS.toLocaleString("en")} participants × ${REGIONS} regions (least squares, parametric) done in ${((performance.now() - started) / 1000).toFixed(1)} s`,
    );

    /** One GET: latency, the request thread's CPU time, the body's size. */
    async function get(path: string): Promise<{ ms: number; cpu: number | null; bytes: number }> {
      const cpuBefore = mainThreadCpuMs(child.pid);
      const t0 = performance.now();
      const res = await fetch(`${base}${path}`, { headers: { Cookie: cookie } });
      const body = await res.arrayBuffer();
      const ms = performance.now() - t0;
      if (res.status !== 200)
        throw new Error(`GET ${path} answered ${res.status}: ${Buffer.from(body).toString()}`);
      const cpuAfter = mainThreadCpuMs(child.pid);
      const cpu = cpuBefore === null || cpuAfter === null ? null : cpuAfter - cpuBefore;
      return { ms, cpu, bytes: body.byteLength };
    }
    const show = (label: string, r: { ms: number; cpu: number | null; bytes: number }) =>
      console.log(
        `${label.padEnd(52)} ${r.ms.toFixed(1).padStart(7)} ms   request thread ${r.cpu === null ? "n/a" : `${r.cpu.toFixed(0)} ms`}   ${(r.bytes / 1e6).toFixed(2)} MB`,
      );

    const region = "region_01";
    const detail = `/api/fits/${fitId}/regions/${region}`;
    show("region detail, first time", await get(detail));
    show("region detail, again", await get(detail));
    const pages = `/api/fits/${fitId}/regions/region_02/participants`;
    show("participants page (other region), first time", await get(`${pages}?limit=${PAGE}`));
    show("participants page, again", await get(`${pages}?limit=${PAGE}`));

    for (const pass of ["first time", "again"]) {
      const times: number[] = [];
      let cpu = 0;
      for (const sort of SORTS) {
        for (const direction of ["asc", "desc"]) {
          const r = await get(`${pages}?limit=${PAGE}&sort=${sort}&direction=${direction}`);
          times.push(r.ms);
          cpu += r.cpu ?? 0;
        }
      }
      console.log(
        `${latencySummary(`  sorted pages (${SORTS.length} orders × 2), ${pass}`, times)}   request thread ${(cpu / times.length).toFixed(1)} ms per answer`,
      );
    }
    const times: number[] = [];
    let cpu = 0;
    for (let k = 0; k < 20; k++) {
      const r = await get(
        `${pages}?limit=${PAGE}&offset=${k * PAGE}&sort=cooksDistance&direction=desc&search=${k % 10}`,
      );
      times.push(r.ms);
      cpu += r.cpu ?? 0;
    }
    console.log(
      `${latencySummary("  searched and sorted pages", times)}   request thread ${(cpu / times.length).toFixed(1)} ms per answer`,
    );
  } finally {
    await server.stop();
  }
}
