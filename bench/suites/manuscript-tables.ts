/**
 * The manuscript tables of a fit with 1,000 regions (issue 13): Markdown,
 * LaTeX and the results sentences as the writers take them (the cost that
 * moved off the request thread), and as the routes now get them — written on
 * the figures' worker thread, hand-over included (the request thread only
 * waits) — and the Word document, written there too. The fit is a real engine run on invented data from a seeded
 * generator (N = 60, association by least squares with a Holm correction);
 * median of 10 builds after 2 warm-up builds. The load average is printed
 * beside the figures, since the machine is shared.
 */
import os from "node:os";
import type { Fit } from "../../db/schema";
import { type FitData, modelSpecSchema } from "../../contract/spec";
import { createRng, normalDraw } from "../../server/stats/rng";
import { runFit } from "../../server/stats/run-fit";
import {
  manuscriptHandOver,
  manuscriptTexts,
  regionsDocx,
  regionsLatex,
  regionsMarkdown,
  sentencesOf,
} from "../../server/services/manuscript-tables";

function invent(regionCount: number, n: number): FitData {
  const rng = createRng(1304);
  const trait = Array.from({ length: n }, () => normalDraw(rng) as number | null);
  const regions = Array.from({ length: regionCount }, (_, r) => `region_${r + 1}`);
  return {
    participants: Array.from({ length: n }, (_, i) => `P${i + 1}`),
    regions,
    values: regions.map(() =>
      Float64Array.from(trait, (x) => 0.3 * (x as number) + normalDraw(rng)),
    ),
    numericColumns: { trait },
    categoricalColumns: {},
  };
}

function storedResult(result: ReturnType<typeof runFit>): unknown {
  const { participants: _rows, ...summary } = result;
  return summary;
}

async function median(build: () => unknown): Promise<number> {
  const times: number[] = [];
  for (let k = 0; k < 12; k++) {
    const start = process.hrtime.bigint();
    await build();
    if (k >= 2) times.push(Number(process.hrtime.bigint() - start) / 1e6);
  }
  times.sort((a, b) => a - b);
  return (times[4] + times[5]) / 2;
}

export default async function manuscriptTables(): Promise<void> {
  const before = os.loadavg();
  // A new id for every build: the service keeps written documents by fit, and the first build is what costs.
  let copy = 0;
  const fresh = (fit: Fit) => ({
    ...fit,
    id: `00000000-0000-4000-8000-${String(++copy).padStart(12, "0")}`,
  });
  for (const regionCount of [10, 1000]) {
    const spec = modelSpecSchema.parse({
      kind: "association",
      predictor: "trait",
      correction: "holm",
    });
    const fit = {
      id: "00000000-0000-4000-8000-000000000000",
      status: "done",
      recipe: { ...spec },
      // Stored as the fit store stores it: without the per-participant diagnostics (kept as region rows).
      result: storedResult(runFit(spec, invent(regionCount, 60))),
      createdAt: new Date("2026-12-01T09:00:00Z"),
      finishedAt: new Date("2026-12-01T09:00:05Z"),
    } as unknown as Fit;
    const o = { participantsVisible: true };
    const md = await median(() => regionsMarkdown(fit, o));
    const tex = await median(() => regionsLatex(fit, o));
    const docx = await median(() => regionsDocx(fresh(fit), o));
    const sentences = await median(() => sentencesOf(fit));
    const textsWorker = await median(() => manuscriptTexts(fresh(fit), o));
    // What the request thread spends handing the fit over: the slimmed copy and its structured clone.
    const handOver = await median(() => structuredClone(manuscriptHandOver(fit)));
    const bytes = (await regionsDocx(fresh(fit), o)).length;
    console.log(
      `${regionCount} regions: writers Markdown ${md.toFixed(2)} ms, LaTeX ${tex.toFixed(2)} ms, sentences ${sentences.toFixed(2)} ms; on the figures' worker thread with the hand-over: all four text forms ${textsWorker.toFixed(1)} ms (of which the request thread's hand-over ${handOver.toFixed(2)} ms), Word ${docx.toFixed(1)} ms (${(bytes / 1024).toFixed(0)} kB) (medians of 10)`,
    );
  }
  const after = os.loadavg();
  console.log(
    `load average (1 min) before ${before[0].toFixed(2)}, after ${after[0].toFixed(2)} on ${os.cpus().length} cores`,
  );
}
