/**
 * Worker-thread task of the figures: turns a figure's text into outlines
 * or renders it as a PNG at 300 dpi with its resolution written in
 * (server/figures/outline.ts, png-resolution.ts). Computes only. Runs at
 * the fit threads' lower priority, so requests come first.
 */
import { type KeptById, outlineSvg, renderPng } from "../figures/outline";
import { pixelsFor, withResolution } from "../figures/png-resolution";
import { lowerWorkerThreadPriority } from "./thread-priority";

lowerWorkerThreadPriority();

export type FigureTask =
  | { kind: "outline"; svg: string; kept: KeptById }
  | { kind: "png"; svg: string; widthMm: number; dpi: number };

export default function runFigureTask(task: FigureTask): string | Uint8Array {
  if (task.kind === "outline") return outlineSvg(task.svg, task.kept);
  const png = renderPng(task.svg, pixelsFor(task.widthMm, task.dpi));
  return new Uint8Array(withResolution(png, task.dpi));
}
