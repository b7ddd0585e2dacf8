/**
 * The figures' worker thread (piscina, server/jobs/figure-task.ts), so the
 * request thread never lays out, outlines or rasterizes a figure, nor
 * writes a Word table (about a second for 1,000 regions) or the Markdown
 * and LaTeX tables and the results sentences (10–20 ms for 1,000): a
 * scatter plot's layout takes milliseconds, outlining its text tens of
 * milliseconds, a 300-dpi PNG a hundred or more. One thread
 * (a second would take the core the request thread needs on a 2-core
 * machine); at most `maxWaiting` tasks wait behind the running one, more
 * answer 429 `figures_busy`. The thread starts with the first task and
 * ends after `idleMs` without one.
 */
import { HttpError } from "../http/errors";
import type { Fit } from "../../db/schema";
import type { FigureInput } from "../figures/figure-svg";
import type { ManuscriptOptions, ManuscriptTexts } from "../services/manuscript-tables";
import type { FigureTask } from "./figure-task";
import { OneThread } from "./worker-pool";

export interface FigureJobsOptions {
  /** Tasks that may wait behind the running one (default 16). */
  maxWaiting?: number;
  /** The thread ends after this long without a task (default 2 minutes). */
  idleMs?: number;
}

export class FigureJobs {
  private readonly thread: OneThread;

  constructor(options: FigureJobsOptions = {}) {
    this.thread = new OneThread("figure-task.ts", {
      maxWaiting: options.maxWaiting ?? 16,
      idleMs: options.idleMs ?? 2 * 60_000,
      busy: () =>
        new HttpError(
          429,
          "figures_busy",
          "Figures are being drawn for other requests; ask again in a moment.",
        ),
    });
  }

  /** The figure as SVG `widthMm` wide with its text as outlines (see outline.ts). */
  async svg(figure: FigureInput, widthMm: number): Promise<string> {
    return (await this.run({ kind: "svg", figure, widthMm })) as string;
  }

  /** The figure as a PNG `widthMm` wide at `dpi` with its pHYs chunk. */
  async png(figure: FigureInput, widthMm: number, dpi: number): Promise<Buffer> {
    const bytes = (await this.run({ kind: "png", figure, widthMm, dpi })) as Uint8Array;
    return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  }

  /** A done fit's region table as a Word document (manuscript-tables.ts `writeDocx`). */
  async docx(fit: Fit, options: ManuscriptOptions): Promise<Uint8Array> {
    return (await this.run({ kind: "docx", fit, options })) as Uint8Array;
  }

  /** A done fit's region table as Markdown and LaTeX, its sentences and their Markdown (`writeManuscriptTexts`). */
  async manuscriptTexts(fit: Fit, options: ManuscriptOptions): Promise<ManuscriptTexts> {
    return (await this.run({ kind: "texts", fit, options })) as ManuscriptTexts;
  }

  /** Stops the worker thread (tasks in flight are rejected). */
  close(): Promise<void> {
    return this.thread.close();
  }

  private run(task: FigureTask): Promise<unknown> {
    return this.thread.run(task);
  }
}

let shared: FigureJobs | null = null;

/** The process's figure thread (created on first use; idle, it does not keep the process alive). */
export function sharedFigureJobs(): FigureJobs {
  shared ??= new FigureJobs();
  return shared;
}
