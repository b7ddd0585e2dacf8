/**
 * Worker-thread task of the figures: lays a figure out from its plain
 * input with the screen's layout modules, writes it as SVG and either turns
 * its text into outlines or renders it as a PNG at `dpi` with its
 * resolution written in (server/figures/); or writes a fit's region table
 * as a Word document (the docx writer takes about a second for 1,000
 * regions), and as Markdown and LaTeX with its results sentences (10–20 ms
 * each for 1,000). Computes only; the caller reads
 * the fit from the database. Runs at the fit threads' lower priority, so
 * requests come first.
 */
import { drawFigure, type FigureInput, svgDocument } from "../figures/figure-svg";
import { outlineSvg, renderPng } from "../figures/outline";
import { pixelsFor, withResolution } from "../figures/png-resolution";
import type { Fit } from "../../db/schema";
import {
  type ManuscriptOptions,
  type ManuscriptTexts,
  writeDocx,
  writeManuscriptTexts,
} from "../services/manuscript-tables";
import { lowerWorkerThreadPriority } from "./thread-priority";

lowerWorkerThreadPriority();

export type FigureTask =
  | { kind: "svg"; figure: FigureInput; widthMm: number }
  | { kind: "png"; figure: FigureInput; widthMm: number; dpi: number }
  | { kind: "docx"; fit: Fit; options: ManuscriptOptions }
  | { kind: "texts"; fit: Fit; options: ManuscriptOptions };

export default async function runFigureTask(
  task: FigureTask,
): Promise<string | Uint8Array | ManuscriptTexts> {
  if (task.kind === "docx") return writeDocx(task.fit, task.options);
  if (task.kind === "texts") return writeManuscriptTexts(task.fit, task.options);
  const raw = drawFigure(task.figure, task.widthMm);
  const svg = svgDocument(raw, task.widthMm);
  if (task.kind === "svg") return outlineSvg(svg, Object.fromEntries(raw.kept.byId));
  const png = renderPng(svg, pixelsFor(task.widthMm, task.dpi));
  return new Uint8Array(withResolution(png, task.dpi));
}
