/**
 * A finished fit's region table in the forms a manuscript takes, and its
 * results sentences. The reporting rules (symbols, decimals, leading zeros,
 * p) live in contract/results-sentences.ts; this module lays them out.
 *
 * For the routes (server/routes/fit-exports.ts) and the report bundle:
 *
 * - `regionsMarkdown(fit, options): string` — a pipe table with a title and
 *   a note (italics as `*t*`, subscripts as `<sub>…</sub>`).
 * - `regionsLatex(fit, options): string` — a `table` with a booktabs
 *   `tabular` (`\toprule`, `\midrule`, `\bottomrule`; needs
 *   `\usepackage{booktabs}`), plain numbers (no `\num`), every text escaped.
 * - `regionsDocx(fit, options): Promise<Uint8Array>` — a Word document with
 *   the same table; byte-deterministic: the core properties' created and
 *   modified dates are the fit's finish time and the zip entries carry that
 *   time too (its UTC fields), in a fixed order, so two calls give the same
 *   bytes whatever the server's time zone. The last 32 documents are kept
 *   (a done fit never changes), so a second download costs nothing.
 * - `sentencesOf(fit): { region, text, runs }[]` — one results sentence per
 *   region (`text` without marks, `runs` with them).
 * - `sentencesMarkdown(fit): string` — the sentences as a Markdown list.
 * - `manuscriptTexts(fit, options): Promise<ManuscriptTexts>` — the Markdown
 *   and LaTeX tables, the sentences and their Markdown, written together by
 *   the functions above on the figures' worker thread and kept like the Word
 *   document (the same bytes; the routes and the report bundle use this).
 *
 * `options.participantsVisible` says whether the caller may read
 * participant-level rows (`fits.participants.read`): when false, the note
 * gives the number of participants set aside but not their ids.
 *
 * Columns: Region, N, Estimate [95% CI], Test statistic (with df), p,
 * adjusted p (when a correction applies), and an effect size (r or d with
 * its interval) when the estimate is not already one. The note names the
 * estimate, the method, how p was found (the words of the CSV export), the
 * correction (`correctionLabels`, labels.ts) and the set-asides.
 *
 * Every function throws 409 when the fit is not done. Cost O(regions): the
 * text forms take well under a millisecond for 10 regions and 10–20 ms for
 * 1,000; the Word document ~60 ms for 10 and ~1.3 s for 1,000 (the docx
 * writer's XML; benchmark `manuscript-tables`, at machine load 11) — more
 * than the request thread should spend, so all of them are written on the
 * figures' worker thread (server/jobs/figure-jobs.ts) and kept.
 */
import {
  AlignmentType,
  BorderStyle,
  Document,
  Packer,
  Paragraph,
  Table,
  TableCell,
  TableRow,
  TextRun as DocxRun,
  WidthType,
} from "docx";
import { unzipSync, zipSync } from "fflate";
import type { Fit } from "../../db/schema";
import { correctionLabels, estimatorWords } from "../../contract/labels";
import { count, list } from "../../contract/methods-text";
import {
  EMPTY_CELL,
  type SentenceContext,
  type TextRun,
  correlationSymbol,
  effectSizeCell,
  effectSizeHeader,
  escapeLatex,
  escapeMarkdown,
  estimateCell,
  formatCount,
  pCell,
  resultsSentence,
  runsLatex,
  runsMarkdown,
  runsPlain,
  sentenceContextOf,
  statisticRuns,
} from "../../contract/results-sentences";
import type { RegionResult } from "../../contract/spec";
import type { ResultsSentenceView } from "../../contract/views/manuscript";
import { sharedFigureJobs } from "../jobs/figure-jobs";
import { inferenceOf, regionsOf } from "./fit-exports";

export interface ManuscriptOptions {
  /** The caller may read participant-level rows (`fits.participants.read`): the note lists set-aside ids. */
  participantsVisible: boolean;
  /** The table's title (default "Results by region"). */
  title?: string;
}

/** A region's results sentence: plain text (clipboard) and runs with italics (screen, documents). */
export type RegionSentence = ResultsSentenceView;

type Cell = TextRun[];
interface ManuscriptTable {
  title: string;
  header: Cell[];
  /** Columns aligned right (numbers). */
  numeric: boolean[];
  rows: Cell[][];
  /** The note's text after "Note." */
  note: Cell;
}

const plain = (text: string): TextRun => ({ text, italic: false });
const italic = (text: string): TextRun => ({ text, italic: true });
const cell = (text: string | null): Cell => [plain(text ?? EMPTY_CELL)];

function contextOf(fit: Fit): SentenceContext {
  return sentenceContextOf(
    (fit.result ?? {}) as Record<string, unknown>,
    fit.recipe as Record<string, unknown>,
  );
}

function recipeOf(fit: Fit): {
  predictor?: string;
  group?: string;
  levels?: [string, string];
  covariates?: string[];
  interaction?: boolean;
  setAside?: { participant: string; region?: string; reason: string }[];
} {
  return fit.recipe as never;
}

/** What the estimate is, in words for the note. */
function estimateWords(fit: Fit, ctx: SentenceContext): string {
  const r = recipeOf(fit);
  const covariates = r.covariates ?? [];
  const adjusted =
    covariates.length > 0 ? `, adjusted for ${list(covariates.map((c) => `“${c}”`))}` : "";
  if (ctx.kind === "reliability") return "the intraclass correlation ICC(2,1)";
  if (ctx.kind === "association") {
    if (ctx.estimator === "rank" || ctx.estimator === "skipped" || ctx.estimator === "bend")
      return `the correlation ${runsPlain(correlationSymbol(ctx))} with “${r.predictor}”${adjusted}`;
    if (r.interaction && r.group && r.levels)
      return `the difference in slopes of “${r.predictor}” between ${r.levels[0]} and ${r.levels[1]} (${r.group})${adjusted}`;
    return `the slope of “${r.predictor}”${adjusted}`;
  }
  if (ctx.kind === "two-group" && r.levels) {
    const what = ctx.estimator === "rank" ? "the Hodges–Lehmann shift" : "the difference";
    return `${what} ${r.levels[0]} − ${r.levels[1]} (${r.group})${adjusted}`;
  }
  if (ctx.estimator === "rank") return "the Hodges–Lehmann pseudomedian of the contrast values";
  return `the ${covariates.length > 0 ? "adjusted " : ""}mean contrast value${adjusted}`;
}

function setAsideWords(fit: Fit, options: ManuscriptOptions): string {
  const entries = recipeOf(fit).setAside ?? [];
  if (entries.length === 0) return "No participant was set aside.";
  const people = new Set(entries.map((e) => e.participant));
  const head = `Set aside before fitting: ${count(people.size, "participant")}`;
  if (!options.participantsVisible)
    return `${head} (participant ids withheld: this study restricts participant-level rows).`;
  const items = entries.map(
    (e) => `${e.participant} (${e.region === undefined ? "every region" : e.region})`,
  );
  return `${head}: ${list(items)}.`;
}

function buildTable(fit: Fit, options: ManuscriptOptions): ManuscriptTable {
  const regions = regionsOf(fit);
  const ctx = contextOf(fit);
  const result = (fit.result ?? {}) as { inference?: string; correction?: string };
  const corrected = ctx.correction !== "none";
  const effect = effectSizeHeader(ctx);
  const withEffect = effect !== null && regions.some((r) => effectSizeCell(r, ctx) !== null);
  const header: Cell[] = [
    [plain("Region")],
    [italic("N")],
    [plain("Estimate [95% CI]")],
    [plain("Test statistic")],
    [italic("p")],
  ];
  const numeric = [false, true, true, true, true];
  if (corrected) {
    header.push([italic("p"), { text: "adj", italic: false, script: "sub" }]);
    numeric.push(true);
  }
  if (withEffect && effect) {
    header.push(effect);
    numeric.push(true);
  }
  const rows = regions.map((r: RegionResult) => {
    const row: Cell[] = [
      [plain(r.region)],
      cell(formatCount(r.n)),
      cell(estimateCell(r, ctx)),
      statisticRuns(r, ctx) ?? cell(null),
      cell(pCell(r.p)),
    ];
    if (corrected) row.push(cell(pCell(r.pAdjusted)));
    if (withEffect) row.push(cell(effectSizeCell(r, ctx)));
    return row;
  });
  const methods = [
    ...new Set(regions.map((r) => (typeof r.method === "string" ? r.method : null))),
  ].filter((m): m is string => m !== null);
  const method =
    methods.length > 0
      ? methods.join("; ")
      : (estimatorWords[ctx.estimator as keyof typeof estimatorWords] ?? ctx.estimator);
  const inferences = [
    ...new Set(regions.map((r) => inferenceOf(r, result.inference ?? "parametric"))),
  ];
  const label = correctionLabels[ctx.correction as keyof typeof correctionLabels] ?? ctx.correction;
  const note: Cell = [
    ...(regions.length === 0 ? [plain("This fit reports no per-region results. ")] : []),
    italic("N"),
    plain(
      ` = participants analysed in the region (after set-asides and missing values). Estimate: ${estimateWords(fit, ctx)}; method: ${method}. CI = confidence interval. `,
    ),
    italic("p"),
    plain(`: ${inferences.join("; ")}. `),
    ...(corrected
      ? [
          plain("Adjusted "),
          italic("p"),
          plain(" ("),
          italic("p"),
          { text: "adj", italic: false, script: "sub" as const },
          plain(`): ${label} correction over ${count(regions.length, "region")}. `),
        ]
      : [plain("No correction over regions. ")]),
    plain(setAsideWords(fit, options)),
  ];
  return {
    title: options.title ?? "Results by region",
    header,
    numeric,
    rows,
    note,
  };
}

// ---------------------------------------------------------------- Markdown

/** The region table as Markdown: bold table number, italic title, pipe table, note. */
export function regionsMarkdown(fit: Fit, options: ManuscriptOptions): string {
  const t = buildTable(fit, options);
  const line = (cells: string[]) => `| ${cells.join(" | ")} |`;
  const md = (c: Cell, k: number) => (k === 0 ? escapeMarkdown(runsPlain(c)) : runsMarkdown(c));
  const out = [
    "**Table 1**",
    "",
    `*${escapeMarkdown(t.title)}*`,
    "",
    line(t.header.map((c) => runsMarkdown(c))),
    line(t.numeric.map((n) => (n ? "---:" : ":---"))),
    ...t.rows.map((row) => line(row.map(md))),
    "",
    `*Note.* ${runsMarkdown(t.note)}`,
    "",
  ];
  return out.join("\n");
}

// ---------------------------------------------------------------- LaTeX

/** The region table as LaTeX (booktabs rules, plain numbers, escaped text). */
export function regionsLatex(fit: Fit, options: ManuscriptOptions): string {
  const t = buildTable(fit, options);
  const row = (cells: Cell[]) => `${cells.map((c) => runsLatex(c)).join(" & ")} \\\\`;
  return [
    "% Needs \\usepackage{booktabs} in the preamble.",
    "\\begin{table}[htbp]",
    "\\centering",
    `\\caption{${escapeLatex(t.title)}}`,
    `\\begin{tabular}{${t.numeric.map((n) => (n ? "r" : "l")).join("")}}`,
    "\\toprule",
    row(t.header),
    "\\midrule",
    ...t.rows.map(row),
    "\\bottomrule",
    "\\end{tabular}",
    "",
    "\\smallskip",
    `\\parbox{\\linewidth}{\\footnotesize\\textit{Note.} ${runsLatex(t.note)}}`,
    "\\end{table}",
    "",
  ].join("\n");
}

// ---------------------------------------------------------------- Word

const RULE = { style: BorderStyle.SINGLE, size: 8, color: "000000" } as const;
const NO_RULE = { style: BorderStyle.NONE, size: 0, color: "FFFFFF" } as const;

function docxRuns(runs: readonly TextRun[]): DocxRun[] {
  return runs.map(
    (r) =>
      new DocxRun({
        text: r.text,
        ...(r.italic ? { italics: true } : {}),
        ...(r.script === "sub" ? { subScript: true } : {}),
        ...(r.script === "super" ? { superScript: true } : {}),
      }),
  );
}

/** The fit's finish time (its creation time when no finish is recorded), whole seconds. */
function fixedTime(fit: Fit): Date {
  const at = fit.finishedAt ?? fit.createdAt;
  return new Date(Math.floor(at.getTime() / 1000) * 1000);
}

/**
 * A zip's entries written again with a fixed time and order: `[Content_Types].xml`
 * and `_rels/.rels` first, then the rest in the writer's order. The time's
 * UTC fields become the entries' (local, DOS) time, so the bytes do not
 * depend on the server's time zone.
 */
function rezip(bytes: Uint8Array, at: Date): Uint8Array {
  const entries = unzipSync(bytes);
  const first = ["[Content_Types].xml", "_rels/.rels"].filter((k) => k in entries);
  const order = [...first, ...Object.keys(entries).filter((k) => !first.includes(k))];
  const mtime = new Date(
    at.getUTCFullYear(),
    at.getUTCMonth(),
    at.getUTCDate(),
    at.getUTCHours(),
    at.getUTCMinutes(),
    at.getUTCSeconds(),
  );
  const stamp = at.toISOString().replace(/\.\d{3}Z$/, "Z");
  const files: Record<string, [Uint8Array, { mtime: Date; level: 6 }]> = {};
  for (const name of order) {
    let data = entries[name];
    if (name === "docProps/core.xml") {
      const xml = new TextDecoder()
        .decode(data)
        .replace(
          /(<dcterms:(created|modified)[^>]*>)[^<]*(<\/dcterms:\2>)/g,
          (_m, open: string, _tag: string, close: string) => `${open}${stamp}${close}`,
        );
      data = new TextEncoder().encode(xml);
    }
    files[name] = [data, { mtime, level: 6 }];
  }
  return zipSync(files);
}

/**
 * Word documents already written, by fit, finish time, visibility and title
 * (a done fit never changes, so neither does its document): the download and
 * the report bundle build it once. At most `DOCX_KEPT` documents, the least
 * recently used dropped first.
 */
const docxKept = new Map<string, Uint8Array>();
const DOCX_KEPT = 32;

/** The text forms of a fit's region table and its sentences, written together on the worker thread. */
export interface ManuscriptTexts {
  markdown: string;
  latex: string;
  sentencesMarkdown: string;
  sentences: RegionSentence[];
}

/** Every text form of the fit (worker-thread side of `manuscriptTexts`; no cache). */
export function writeManuscriptTexts(fit: Fit, options: ManuscriptOptions): ManuscriptTexts {
  return {
    markdown: regionsMarkdown(fit, options),
    latex: regionsLatex(fit, options),
    sentencesMarkdown: sentencesMarkdown(fit),
    sentences: sentencesOf(fit),
  };
}

/** Per-region diagnostics no table or sentence reads: left out of what crosses to the worker thread. */
const diagnosticKeys = new Set(["leaveOneOut", "sensitivity", "flagged", "flagThresholds"]);

/**
 * The fit as handed to the worker thread: the columns the writers read and
 * each region without its diagnostics, so the request thread's copy of a
 * 1,000-region fit (a structured clone) stays a fraction of the writing.
 */
export function manuscriptHandOver(fit: Fit): Fit {
  const result = fit.result as { regions?: RegionResult[] } | null;
  const regions = result?.regions?.map((r) => {
    const kept: RegionResult = { ...r };
    for (const key of diagnosticKeys) delete kept[key];
    return kept;
  });
  return {
    id: fit.id,
    status: fit.status,
    recipe: fit.recipe,
    result: result && regions ? { ...result, regions } : fit.result,
    createdAt: fit.createdAt,
    finishedAt: fit.finishedAt,
  } as Fit;
}

/** The key of what is kept for a fit: id, finish time, visibility and title (a done fit never changes). */
function keptKey(fit: Fit, options: ManuscriptOptions): string {
  return JSON.stringify([
    fit.id,
    fixedTime(fit).toISOString(),
    options.participantsVisible,
    options.title ?? null,
  ]);
}

/** Text forms already written, kept as the Word documents are. */
const textsKept = new Map<string, ManuscriptTexts>();
const TEXTS_KEPT = 32;

/**
 * The region table as Markdown and LaTeX, the sentences and their Markdown
 * — the same text as `regionsMarkdown`, `regionsLatex`, `sentencesOf` and
 * `sentencesMarkdown` — written together on the figures' worker thread
 * (10–20 ms each for 1,000 regions) and kept. Throws 409 when the fit is
 * not done. Callers must not change what they get.
 */
export async function manuscriptTexts(
  fit: Fit,
  options: ManuscriptOptions,
): Promise<ManuscriptTexts> {
  regionsOf(fit); // 409 before anything kept is handed out
  const key = keptKey(fit, options);
  const kept = textsKept.get(key);
  if (kept) {
    textsKept.delete(key);
    textsKept.set(key, kept);
    return kept;
  }
  const texts = await sharedFigureJobs().manuscriptTexts(manuscriptHandOver(fit), options);
  textsKept.set(key, texts);
  if (textsKept.size > TEXTS_KEPT) textsKept.delete(textsKept.keys().next().value as string);
  return texts;
}

/**
 * The region table as a Word document (.docx), byte-deterministic for a
 * given fit and options. Callers get a copy of the kept bytes.
 */
export async function regionsDocx(fit: Fit, options: ManuscriptOptions): Promise<Uint8Array> {
  regionsOf(fit); // 409 before anything kept is handed out
  const key = keptKey(fit, options);
  const kept = docxKept.get(key);
  if (kept) {
    docxKept.delete(key);
    docxKept.set(key, kept);
    return kept.slice();
  }
  // The docx writer takes about a second for 1,000 regions: it runs on the figures' worker thread.
  const bytes = await sharedFigureJobs().docx(manuscriptHandOver(fit), options);
  docxKept.set(key, bytes);
  if (docxKept.size > DOCX_KEPT) docxKept.delete(docxKept.keys().next().value as string);
  return bytes.slice();
}

/** Writes the Word document (no cache; worker-thread side of `regionsDocx`). Cost O(regions), about 1 s per 1,000. */
export async function writeDocx(fit: Fit, options: ManuscriptOptions): Promise<Uint8Array> {
  const t = buildTable(fit, options);
  const width = t.header.length;
  // The rules are the table's top and bottom borders and the header cells' bottom border:
  // body cells carry no properties of their own (the docx writer's cost is per XML element).
  const tableCell = (c: Cell, k: number, head: boolean) =>
    new TableCell({
      children: [
        new Paragraph({
          ...(t.numeric[k] ? { alignment: AlignmentType.RIGHT } : {}),
          children: docxRuns(c),
        }),
      ],
      ...(head ? { borders: { bottom: RULE } } : {}),
    });
  const rows = [
    new TableRow({
      tableHeader: true,
      children: t.header.map((c, k) => tableCell(c, k, true)),
    }),
    ...t.rows.map((row) => new TableRow({ children: row.map((c, k) => tableCell(c, k, false)) })),
  ];
  const at = fixedTime(fit);
  const doc = new Document({
    creator: "Covarion",
    lastModifiedBy: "Covarion",
    title: t.title,
    styles: { default: { document: { run: { font: "Times New Roman", size: 22 } } } },
    sections: [
      {
        children: [
          new Paragraph({ children: [new DocxRun({ text: "Table 1", bold: true })] }),
          new Paragraph({ children: [new DocxRun({ text: t.title, italics: true })] }),
          new Table({
            rows,
            width: { size: 100, type: WidthType.PERCENTAGE },
            columnWidths: Array.from({ length: width }, () => Math.floor(9000 / width)),
            margins: { left: 80, right: 80 },
            borders: {
              top: RULE,
              bottom: RULE,
              left: NO_RULE,
              right: NO_RULE,
              insideHorizontal: NO_RULE,
              insideVertical: NO_RULE,
            },
          }),
          new Paragraph({
            spacing: { before: 120 },
            children: [
              new DocxRun({ text: "Note.", italics: true }),
              new DocxRun(" "),
              ...docxRuns(t.note),
            ],
          }),
        ],
      },
    ],
  });
  return rezip(new Uint8Array(await Packer.toBuffer(doc)), at);
}

// ---------------------------------------------------------------- sentences

/** One results sentence per region of a finished fit, in fit order. Throws 409 when the fit is not done. */
export function sentencesOf(fit: Fit): RegionSentence[] {
  const ctx = contextOf(fit);
  return regionsOf(fit).map((r) => {
    const runs = resultsSentence(r, ctx);
    return { region: r.region, text: runsPlain(runs), runs };
  });
}

/** The sentences as a Markdown list: "- **Region**: *r*(58) = .31, …". */
export function sentencesMarkdown(fit: Fit): string {
  const lines = sentencesOf(fit).map(
    (s) => `- **${escapeMarkdown(s.region)}**: ${runsMarkdown(s.runs)}`,
  );
  return `${["# Results by region", "", ...lines].join("\n")}\n`;
}
