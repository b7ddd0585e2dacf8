/**
 * The report bundle (issue 13) on the real server in demo mode: a fit of
 * the demo study (one-sample, 10 regions, N ≈ 70) is run through the API,
 * then its bundle is downloaded cold (figures outlined and rasterized in
 * the figure worker) and warm (its PNGs kept), and its SHA-256 asked for,
 * while GET /api/health is timed every 100 ms (target: health p95 ≤ 100 ms,
 * i.e. the request thread is not held up by the bundle). Prints the bundle's
 * size and file count, and the load average, since the machine is shared.
 */
import os from "node:os";
import { unzipSync } from "fflate";
import { healthDuring, latencySummary, startBenchServer } from "../server-process";

export default async function report(): Promise<void> {
  const server = await startBenchServer("analyst@demo.covarion.test");
  const api = async (path: string, init: { method?: string; body?: unknown } = {}) => {
    const res = await fetch(`${server.base}${path}`, {
      method: init.method ?? "GET",
      headers: {
        Cookie: server.cookie,
        Origin: server.base,
        ...(init.body !== undefined ? { "Content-Type": "application/json" } : {}),
      },
      body: init.body !== undefined ? JSON.stringify(init.body) : undefined,
    });
    if (!res.ok) throw new Error(`${path} answered ${res.status}: ${await res.text()}`);
    return res;
  };
  try {
    const [study] = (await (await api("/api/studies")).json()) as { id: string }[];
    const model = (await (
      await api(`/api/studies/${study.id}/models`, {
        method: "POST",
        body: {
          name: "Bench: load effect",
          regionSelection: "anatomical-or-prior",
          spec: { kind: "one-sample" },
        },
      })
    ).json()) as { id: string };
    const fit = (await (
      await api(`/api/studies/${study.id}/fits`, { method: "POST", body: { modelId: model.id } })
    ).json()) as { id: string };
    for (;;) {
      const view = (await (await api(`/api/fits/${fit.id}`)).json()) as { status: string };
      if (view.status === "done") break;
      if (view.status === "failed") throw new Error("the fit failed");
      await new Promise((r) => setTimeout(r, 250));
    }
    const timed = async (path: string) => {
      const t0 = performance.now();
      const bytes = new Uint8Array(await (await api(path)).arrayBuffer());
      return { ms: performance.now() - t0, bytes };
    };
    const before = os.loadavg();
    let cold = { ms: 0, bytes: new Uint8Array() };
    const health = await healthDuring(
      server.base,
      timed(`/api/fits/${fit.id}/report.zip`).then((r) => {
        cold = r;
      }),
    );
    const warm = await timed(`/api/fits/${fit.id}/report.zip`);
    const hash = await timed(`/api/fits/${fit.id}/report.sha256`);
    const after = os.loadavg();
    const files = Object.keys(unzipSync(cold.bytes));
    console.log(
      `bundle: ${files.length} files, ${(cold.bytes.length / 1024).toFixed(0)} kB (${files.filter((f) => f.endsWith(".png")).length} PNG figures)`,
    );
    console.log(`first download (figures drawn):   ${cold.ms.toFixed(0)} ms`);
    console.log(`second download (PNGs kept):      ${warm.ms.toFixed(0)} ms`);
    console.log(`report.sha256 (hash kept):        ${hash.ms.toFixed(0)} ms`);
    console.log(latencySummary("GET /api/health during the first download", health));
    console.log(
      `load average before ${before.map((l) => l.toFixed(1)).join(" ")}, after ${after.map((l) => l.toFixed(1)).join(" ")}`,
    );
  } finally {
    await server.stop();
  }
}
