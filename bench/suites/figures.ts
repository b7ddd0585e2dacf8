/**
 * The figures of a fit (issue 13): for a scatter plot of 500 participants
 * and a forest plot of 10 and 100 regions, the time to lay the figure out
 * and write its SVG, to turn its text into outlines, and to render a PNG
 * one column (89 mm, 1051 px) and two columns (183 mm, 2161 px) wide at
 * 300 dpi with its pHYs chunk — each the work one figure-thread task does
 * (server/jobs/figure-task.ts), run here on the main thread to time it.
 * Invented data from a seeded generator; median of 7 runs after 1 warm-up.
 * The load average is printed beside the figures, since the machine is
 * shared. Target: a figure in well under a second on its thread.
 */
import os from "node:os";
import { drawFigure, type FigureInput, svgDocument } from "../../server/figures/figure-svg";
import { outlineSvg, renderPng } from "../../server/figures/outline";
import { pixelsFor, withResolution } from "../../server/figures/png-resolution";
import { createRng, normalDraw } from "../../server/stats/rng";

function median(run: () => unknown): number {
  const times: number[] = [];
  for (let k = 0; k < 8; k++) {
    const start = process.hrtime.bigint();
    run();
    if (k >= 1) times.push(Number(process.hrtime.bigint() - start) / 1e6);
  }
  times.sort((a, b) => a - b);
  return times[3];
}

function scatter(n: number): FigureInput {
  const rng = createRng(1313);
  return {
    kind: "scatter",
    title: "region_1: trait and the contrast value",
    input: {
      points: Array.from({ length: n }, (_, i) => {
        const x = normalDraw(rng);
        return {
          id: `P${i + 1}`,
          flags: i === 0 ? ["outlier"] : [],
          x,
          y: 0.3 * x + normalDraw(rng),
        };
      }),
      band: [
        { x: -3, fit: -0.9, low: -1.1, high: -0.7 },
        { x: 3, fit: 0.9, low: 0.7, high: 1.1 },
      ],
      xLabel: "trait",
      yLabel: "Contrast value",
    },
  };
}

function forest(regions: number): FigureInput {
  const rng = createRng(1314);
  return {
    kind: "forest",
    title: "Estimates with 95% intervals",
    estimateLabel: "Slope",
    rows: Array.from({ length: regions }, (_, r) => {
      const e = 0.2 * normalDraw(rng);
      return { region: `region_${r + 1}`, estimate: e, low: e - 0.15, high: e + 0.15 };
    }),
  };
}

export default async function figures(): Promise<void> {
  const before = os.loadavg()[0];
  for (const [name, figure] of [
    ["scatter, 500 participants", scatter(500)],
    ["forest, 10 regions", forest(10)],
    ["forest, 100 regions", forest(100)],
  ] as const) {
    const row: string[] = [];
    for (const mm of [89, 183]) {
      const raw = drawFigure(figure, mm);
      const svg = svgDocument(raw, mm);
      const kept = Object.fromEntries(raw.kept.byId);
      const layout = median(() => svgDocument(drawFigure(figure, mm), mm));
      const outline = median(() => outlineSvg(svg, kept));
      const png = median(() => withResolution(renderPng(svg, pixelsFor(mm, 300)), 300));
      row.push(
        `${mm} mm: layout+SVG ${layout.toFixed(1)} ms, outlines ${outline.toFixed(1)} ms, PNG ${png.toFixed(0)} ms`,
      );
    }
    console.log(`${name}\n  ${row.join("\n  ")}`);
  }
  console.log(`load average ${before.toFixed(1)} → ${os.loadavg()[0].toFixed(1)}`);
}
