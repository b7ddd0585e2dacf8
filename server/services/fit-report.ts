/**
 * A finished fit's report bundle: one ZIP archive with everything a paper
 * needs (GET /api/fits/:fitId/report.zip), in a fixed order:
 *
 *   README.txt            what each file is (this list, with what was left out and why)
 *   methods.md            the methods paragraph and its references (fit-exports.ts methodsOf)
 *   results/regions.csv   the region table (fit-exports.ts regionsCsv)
 *   results/regions.md|tex|docx, results/sentences.md
 *                         the table for a manuscript and the results sentences (manuscript-tables.ts);
 *                         only for a fit with region rows. Instead, a specification curve has
 *   results/specifications.csv, results/curve.md
 *                         one row per specification, and the curve's summary and joint test;
 *                         and a prediction
 *   results/prediction.md, results/prediction-repeats.csv, results/prediction-weights.csv,
 *   results/predictions.csv
 *                         its scores, the scores per repeat, the weight of each region, and each
 *                         participant's held-out prediction (no participant column without
 *                         participant rows)
 *   figures/<name>.svg|png|txt
 *                         the forest plot (and a weighted fit's variance shares) and the figures of the first `reportFigureRegions` regions by
 *                         adjusted p (a prediction's three figures at one column), with captions (fit-figures.ts; participant plots only for callers
 *                         who may see participant rows)
 *   recipe.json           the recipe (left out for a caller without participant rows: it names them)
 *   inputs.json           the data files the fit used: name, version, SHA-256, participants
 *   set-asides.csv        participant, scope, reason, who, when, then those the model's rules left out (no participant column without participant rows)
 *   activity.csv          the fit's run, re-queues, approval and seal from the audit trail
 *   seal.json             sealed fits: hash, who, when, intact
 *
 * Deterministic: the same fit (and the same records about it) gives the
 * same bytes — fixed order, every entry dated at the fit's finish time
 * (services/report-zip.ts), no varying metadata; text is LF-terminated
 * except the CSV files (CRLF, as every CSV export of the app). Streamed:
 * the small parts are built first (so a fit that is not done answers 409
 * before anything is sent), then written one entry at a time.
 *
 * The bundle's own SHA-256 (GET /api/fits/:fitId/report.sha256) is
 * computed by writing the same archive into a hash instead of a response;
 * since the bundle is deterministic, that is the hash of what the same
 * caller downloads. It is kept per fit, caller's visibility and digest of
 * the small parts, so a later change of those (a person's name, say) gives
 * a new hash rather than a stale one.
 */
import { createHash } from "node:crypto";
import { and, asc, eq, inArray } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { auditEvents, datasetVersions, type Fit, users } from "../../db/schema";
import {
  fitApprovedWords,
  fitCancelledWords,
  fitRunWords,
  fitSealedWords,
} from "../../contract/activity-words";
import { modelRuleReason, ruleText } from "../../contract/exclusion-rules";
import type { PredictionBlock } from "../../contract/prediction";
import { specOfRecipe } from "../../contract/recipe";
import { type CurveResultFields, curveChoices } from "../../contract/specification-curve";
import {
  type FigureSummary,
  type FigureWidth,
  isPredictionFigureKind,
} from "../../contract/views/figures";
import { curveSummaryWords, jointTestWords } from "../../components/fit/specification-curve-layout";
import type { FitView } from "../../contract/views/fits";
import { pixelsFor } from "../figures/png-resolution";
import { toCsv } from "../intake/export-csv";
import type { FitJobs } from "../jobs/fit-jobs";
import { methodsOf, recipeJson, regionsCsv, regionsOf } from "./fit-exports";
import {
  FIGURE_DPI,
  type FigureAccess,
  figureCaption,
  figurePng,
  figureSvg,
  listFigures,
  MAX_PNG_HEIGHT_PX,
} from "./fit-figures";
import { manuscriptTexts, regionsDocx } from "./manuscript-tables";
import { fitViewParts } from "./fits";
import { writeZip, type ZipEntry } from "./report-zip";

/** A part of the bundle and the line README.txt gives it. */
export interface ReportPart extends ZipEntry {
  about: string;
  /** Made while the archive is written (a PNG rendered in the figure worker), so not in the digest. */
  lazy?: boolean;
}

export interface ReportOptions {
  /** Whether the caller may see participant-level rows (contract/permissions.ts `fits.participants.read`). */
  participantsVisible: boolean;
}

/** The audit events of a fit that its activity.csv lists (not the e-mail notices: they are about mail, not the fit). */
export const reportActivityKinds = [
  "fit.run",
  "fit.requeued",
  "fit.cancelled",
  "fit.approved",
  "fit.sealed",
] as const;

const encoder = new TextEncoder();
const text = (s: string) => encoder.encode(s);
const json = (value: unknown) => text(`${JSON.stringify(value, null, 2)}\n`);

function field(value: unknown, key: string): string | null {
  if (value && typeof value === "object" && key in value) {
    const v = (value as Record<string, unknown>)[key];
    return v === null || v === undefined ? null : String(v);
  }
  return null;
}

/** The fit's life in the audit trail as CSV: when, who, event, what. */
async function activityCsv(db: Queryable, fit: Fit, modelName: string | null): Promise<string> {
  const rows = await db
    .select({
      kind: auditEvents.kind,
      at: auditEvents.at,
      after: auditEvents.after,
      name: users.name,
      email: users.email,
    })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(
      and(
        eq(auditEvents.studyId, fit.studyId),
        eq(auditEvents.targetType, "fit"),
        eq(auditEvents.targetId, fit.id),
        inArray(auditEvents.kind, [...reportActivityKinds]),
      ),
    )
    .orderBy(asc(auditEvents.seq));
  const words = (kind: string, after: unknown): string => {
    switch (kind) {
      case "fit.run":
        return fitRunWords(
          field(after, "modelName"),
          field(after, "seed"),
          field(after, "setAside"),
        );
      case "fit.requeued":
        return "re-queued the fit after a restart";
      case "fit.cancelled":
        return fitCancelledWords(modelName);
      case "fit.approved":
        return fitApprovedWords(modelName);
      default:
        return fitSealedWords(
          modelName,
          field(after, "sha256") ?? "",
          field(after, "singlePersonSignOff") === "true",
        );
    }
  };
  return toCsv(
    ["when", "who", "event", "what"],
    rows.map((r) => [
      r.at.toISOString(),
      r.name ?? r.email ?? "Covarion",
      r.kind,
      words(r.kind, r.after),
    ]),
  );
}

/**
 * The set-asides the fit applied as CSV, then the participants its model's
 * rules left out (scope all regions, reason "rule: …", who started the fit
 * that applied the rule, when); without the participant column when ids are
 * withheld (a rule's rows are then one per participant it left out).
 */
function setAsidesCsv(view: FitView): string {
  const visible = view.participantsVisible;
  const header = [...(visible ? ["participant"] : []), "scope", "reason", "who", "when"];
  const byRule = view.ruleExclusions.flatMap((r) => {
    const row = (participant: string | null) => [
      ...(visible ? [participant] : []),
      "all regions",
      modelRuleReason(r.rule),
      view.createdBy.name ?? view.createdBy.id,
      view.createdAt,
    ];
    if (r.participants) return r.participants.map(row);
    return Array.from({ length: r.count ?? 0 }, () => row(null));
  });
  return toCsv(header, [
    ...view.setAsides.map((s) => [
      ...(visible ? [s.participant] : []),
      s.region === null ? "all regions" : `region ${s.region}`,
      s.reason,
      s.createdBy?.name ?? s.createdBy?.id ?? null,
      s.createdAt,
    ]),
    ...byRule,
  ]);
}

/** What the fit's data were: each file's name, version, SHA-256 and participant count. */
async function inputsJson(db: Queryable, fit: Fit): Promise<unknown> {
  const ids = [fit.brainVersionId, ...(fit.sheetVersionId ? [fit.sheetVersionId] : [])];
  const versions = await db
    .select({
      id: datasetVersions.id,
      fileName: datasetVersions.fileName,
      version: datasetVersions.version,
      sha256: datasetVersions.sha256,
      byteSize: datasetVersions.byteSize,
      participants: datasetVersions.participantCount,
    })
    .from(datasetVersions)
    .where(inArray(datasetVersions.id, ids));
  const file = (id: string | null) => {
    const v = versions.find((x) => x.id === id);
    return v
      ? {
          fileName: v.fileName,
          version: v.version,
          sha256: v.sha256,
          bytes: v.byteSize,
          participants: v.participants,
        }
      : null;
  };
  const recipe = fit.recipe as { softwareVersion?: string; session?: string };
  return {
    fit: fit.id,
    software: { name: "Covarion", version: recipe.softwareVersion ?? null },
    brainTable: file(fit.brainVersionId),
    participantSheet: file(fit.sheetVersionId),
    session: recipe.session ?? null,
    sha256Of: "the file's bytes as uploaded",
  };
}

function methodsMarkdown(methods: Awaited<ReturnType<typeof methodsOf>>): string {
  const refs = methods.references.map((r) => `- ${r.citation}`).join("\n");
  return `# Methods\n\n${methods.text}\n${refs ? `\n## References\n\n${refs}\n` : ""}`;
}

/** A specification curve's specifications as CSV: one row per specification, in the fit's (estimate) order. */
function specificationsCsv(fit: Fit, curve: CurveResultFields): string {
  const rules = curveChoices(specOfRecipe(fit.recipe as Record<string, unknown>)).exclusionRules;
  return toCsv(
    ["estimator", "covariates", "rules_on", "n", "estimate", "ci_low", "ci_high", "p"],
    curve.specifications.map((s) => [
      s.estimator,
      s.covariates.join("; "),
      s.exclusions.map((k) => (rules[k] ? ruleText(rules[k]) : `rule ${k + 1}`)).join("; "),
      s.n,
      s.estimate,
      s.ciLow,
      s.ciHigh,
      s.p,
    ]),
  );
}

/** The curve's summary and joint test in the words of the fit screen. */
function curveMarkdown(curve: CurveResultFields): string {
  const lines = [
    "# Specification curve",
    "",
    `${curve.summary.count} specifications of the ${curve.question === "two-group" ? "two-group difference" : "association"} in ${curve.region}; each is fitted as an ordinary model (results/specifications.csv).`,
    "",
    curveSummaryWords(curve.summary),
  ];
  if (curve.jointTest) lines.push("", jointTestWords(curve.jointTest));
  else lines.push("", "No joint test: the model asked for no null data sets.");
  return `${lines.join("\n")}\n`;
}

function score(v: number | null): string {
  return v === null ? "n/a" : v.toFixed(3);
}

/** A prediction's scores on held-out participants, its spread over repeats and its permutation p. */
function predictionMarkdown(block: PredictionBlock): string {
  const folds = block.folds === "leave-one-out" ? "leave-one-out" : `${block.folds}-fold`;
  const lines = [
    "# Prediction",
    "",
    `Cross-validated ridge prediction, ${folds}, ${block.repeats} repeat${block.repeats === 1 ? "" : "s"} (seed ${block.seed}); λ ${block.lambdaChoice === "inner-cv" ? "chosen by an inner cross-validation in each training set" : "fixed"}. Scores are on held-out participants only.`,
    "",
    `r = ${score(block.r)}, R² = ${score(block.r2)}, mean absolute error = ${block.mae.toFixed(3)}.`,
  ];
  if (block.repeats > 1)
    lines.push(
      "",
      `Standard deviation over repeats: r ${score(block.spread.r)}, R² ${score(block.spread.r2)}, mean absolute error ${score(block.spread.mae)}.`,
    );
  if (block.permutation)
    lines.push(
      "",
      `Permutation test (${block.permutation.resamples} rearrangements of the trait, the whole pipeline re-run on each): p for r ${score(block.permutation.pR)}, p for R² ${score(block.permutation.pR2)}.`,
    );
  lines.push(
    "",
    "Per repeat: results/prediction-repeats.csv. Weight of each region: results/prediction-weights.csv. Each participant's held-out prediction: results/predictions.csv.",
  );
  return `${lines.join("\n")}\n`;
}

/** How many regions' own figures the bundle holds (the forest plot draws every region). */
export const reportFigureRegions = 6;
/** The forest plot spans two columns; a region's figures one (contract/views/figures.ts). */
const forestWidth: FigureWidth = 183;
const regionWidth: FigureWidth = 89;

/** A figure's name as a file name: letters, digits, ".", "_" and "-" kept, anything else "_". */
function fileNameOf(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]/g, "_");
}

/**
 * Rendered PNGs, kept (least recently used first out, at most
 * `keptPngBytes` in all): a finished fit's figures never change, and a
 * download, its hash and the next download ask for the same ones.
 */
const pngs = new Map<string, Uint8Array>();
let pngBytes = 0;
const keptPngBytes = 48 * 1024 * 1024;

async function keptPng(key: string, render: () => Promise<Buffer>): Promise<Uint8Array> {
  const hit = pngs.get(key);
  if (hit) {
    pngs.delete(key);
    pngs.set(key, hit);
    return hit;
  }
  const png = new Uint8Array(await render());
  pngs.set(key, png);
  pngBytes += png.length;
  for (const [old, bytes] of pngs) {
    if (pngBytes <= keptPngBytes) break;
    pngs.delete(old);
    pngBytes -= bytes.length;
  }
  return png;
}

/**
 * The bundle's figures: the whole-fit figures (the forest plot; the
 * variance shares of a weighted fit) and the figures of the first
 * `reportFigureRegions` regions by adjusted p (p without a correction;
 * ties in the fit's order), each as SVG (text as outlines), PNG at 300 dpi
 * and its caption. A PNG taller than the rasterizer's cap is left out (its
 * SVG stays). SVGs and captions are made now (the figure worker outlines
 * them); PNGs are rendered in the figure worker while the archive is
 * written, one at a time.
 */
async function figureParts(
  db: Queryable,
  fit: Fit,
  access: FigureAccess,
): Promise<{ parts: ReportPart[]; leftOut: string[]; regions: string[] }> {
  const figures = await listFigures(db, fit, access);
  if (figures.length === 0) return { parts: [], leftOut: [], regions: [] };
  const order = (p: number | null | undefined) =>
    typeof p === "number" && Number.isFinite(p) ? p : Number.POSITIVE_INFINITY;
  const chosen = regionsOf(fit)
    .map((r, i) => ({ region: r.region, p: order(r.pAdjusted ?? r.p), i }))
    .sort((a, b) => a.p - b.p || a.i - b.i)
    .slice(0, reportFigureRegions)
    .map((r) => r.region);
  // Whole-fit figures (every region) first, then each chosen region's own figures.
  const wholeFit = (f: FigureSummary) => f.kind === "forest" || f.kind === "variance-shares";
  const ofPrediction = (f: FigureSummary) => isPredictionFigureKind(f.kind);
  const selected: FigureSummary[] = [
    ...figures.filter(wholeFit),
    ...figures.filter(ofPrediction),
    ...chosen.flatMap((region) => figures.filter((f) => !wholeFit(f) && f.regions?.[0] === region)),
  ];
  const parts: ReportPart[] = [];
  const leftOut: string[] = [];
  const used = new Set<string>();
  for (const figure of selected) {
    const widthMm = wholeFit(figure) ? forestWidth : regionWidth;
    let base = `figures/${fileNameOf(figure.name)}`;
    for (let n = 2; used.has(base); n++) base = `figures/${fileNameOf(figure.name)}-${n}`;
    used.add(base);
    const [svg, caption] = await Promise.all([
      figureSvg(db, fit, figure.name, access, widthMm),
      figureCaption(db, fit, figure.name, access),
    ]);
    parts.push({
      name: `${base}.svg`,
      about: `${figure.title} (SVG, ${widthMm} mm wide, text as outlines)`,
      compress: true,
      bytes: () => text(svg),
    });
    const box = /viewBox="0 0 ([\d.]+) ([\d.]+)"/.exec(svg);
    const heightPx = box
      ? Math.round((pixelsFor(widthMm, FIGURE_DPI) * Number(box[2])) / Number(box[1]))
      : 0;
    if (heightPx > MAX_PNG_HEIGHT_PX)
      leftOut.push(
        `${base}.png: it would be ${heightPx} px tall at ${FIGURE_DPI} dpi (at most ${MAX_PNG_HEIGHT_PX}); the SVG holds the figure.`,
      );
    else
      parts.push({
        name: `${base}.png`,
        about: `the same figure as PNG, ${widthMm} mm wide at ${FIGURE_DPI} dpi`,
        compress: false,
        lazy: true,
        bytes: () =>
          keptPng(
            `${fit.id}\u0000${figure.name}\u0000${widthMm}\u0000${access.participantsVisible}`,
            () => figurePng(db, fit, figure.name, access, widthMm),
          ),
      });
    parts.push({
      name: `${base}.txt`,
      about: "its caption: what is drawn, N, estimator, interval, set-asides",
      compress: true,
      bytes: () => text(caption),
    });
  }
  return { parts, leftOut, regions: chosen };
}

function readme(
  view: FitView,
  parts: readonly ReportPart[],
  leftOut: readonly string[],
  figureRegions: readonly string[],
): string {
  const width = Math.max(...parts.map((p) => p.name.length), "README.txt".length);
  const lines = [
    "Covarion report bundle",
    "",
    `Fit ${view.id} of the model “${view.model.name}”, finished ${view.finishedAt ?? "—"}.`,
    view.seal
      ? `Sealed ${view.seal.at} by ${view.seal.by.name ?? view.seal.by.id}; SHA-256 of the recipe and result: ${view.seal.sha256}.`
      : "Not sealed: the fit's recipe and results can still be approved and sealed.",
    "",
    "Files, in this order:",
    "",
    `${"README.txt".padEnd(width)}  this list`,
    ...parts.map((p) => `${p.name.padEnd(width)}  ${p.about}`),
  ];
  if (leftOut.length > 0) lines.push("", "Left out:", "", ...leftOut.map((l) => `- ${l}`));
  if (parts.some((p) => p.name.startsWith("figures/")))
    lines.push(
      "",
      `Figures: the forest plot of every region (and a weighted fit's variance shares; ${forestWidth} mm, two columns) and the figures of the`,
      `first ${reportFigureRegions} regions by adjusted p (${figureRegions.join(", ")}; ${regionWidth} mm, one column),`,
      `each as SVG, PNG at ${FIGURE_DPI} dpi and a caption. Every other figure of the fit downloads from`,
      `the fit screen or GET /api/fits/${view.id}/figures.`,
    );
  lines.push(
    "",
    "The same fit gives the same bundle, byte for byte: the files are always in this order and every",
    "file is dated at the fit's finish time (UTC). CSV files use commas, CRLF line ends and n/a for a",
    "missing value.",
    "",
  );
  return lines.join("\n");
}

interface RegionTables {
  markdown: string;
  latex: string;
  docx: Uint8Array;
  sentences: string;
}

/** The region table for a manuscript in its forms and the sentences, written on the figures' worker thread. */
async function regionTables(fit: Fit, manuscript: ReportOptions): Promise<RegionTables> {
  const [texts, docx] = await Promise.all([
    manuscriptTexts(fit, manuscript),
    regionsDocx(fit, manuscript),
  ]);
  return { markdown: texts.markdown, latex: texts.latex, docx, sentences: texts.sentencesMarkdown };
}

type PartOf = (name: string, about: string, data: Uint8Array, compress?: boolean) => ReportPart;

/**
 * The results files: a fit with region rows has its region table in four
 * forms and its results sentences; a specification curve its
 * specifications and summary; a prediction its scores, per-repeat scores,
 * region weights and held-out predictions (participant ids only for callers
 * who may see participant rows, as set-asides.csv).
 */
function resultParts(
  fit: Fit,
  tables: RegionTables | null,
  manuscript: ReportOptions,
  part: PartOf,
): ReportPart[] {
  const result = fit.result as Partial<CurveResultFields> & { prediction?: PredictionBlock };
  if (tables)
    return [
      part(
        "results/regions.csv",
        "the region table: one row per region with n, estimate, se, statistic, df, p, adjusted p, 95% CI (full precision)",
        text(regionsCsv(fit)),
      ),
      part(
        "results/regions.md",
        "the region table for a manuscript, in Markdown, with its note (correction, set-asides)",
        text(tables.markdown),
      ),
      part(
        "results/regions.tex",
        "the same table in LaTeX (booktabs rules: needs \\usepackage{booktabs})",
        text(tables.latex),
      ),
      // A Word document is already a ZIP archive: stored as it is.
      part("results/regions.docx", "the same table as a Word document", tables.docx, false),
      part(
        "results/sentences.md",
        "one results sentence per region in the reporting style of the APA Publication Manual (7th ed.)",
        text(tables.sentences),
      ),
    ];
  if (result.specifications && result.summary) {
    const curve = result as CurveResultFields;
    return [
      part(
        "results/curve.md",
        "the specification curve's summary (median estimate, shares above and below zero) and its joint test",
        text(curveMarkdown(curve)),
      ),
      part(
        "results/specifications.csv",
        "one row per specification in estimate order: estimator, covariates, exclusion rules on, n, estimate, 95% CI, p (full precision)",
        text(specificationsCsv(fit, curve)),
      ),
    ];
  }
  if (result.prediction) {
    const block = result.prediction;
    const visible = manuscript.participantsVisible;
    return [
      part(
        "results/prediction.md",
        "the prediction's scores on held-out participants (r, R², mean absolute error), their spread and permutation p",
        text(predictionMarkdown(block)),
      ),
      part(
        "results/prediction-repeats.csv",
        "the scores of each repeat of the cross-validation: repeat, r, r2, mae",
        text(
          toCsv(
            ["repeat", "r", "r2", "mae"],
            block.perRepeat.map((s) => [s.repeat, s.r, s.r2, s.mae]),
          ),
        ),
      ),
      part(
        "results/prediction-weights.csv",
        "the weight of each region in the model (mean over folds) and the share of folds agreeing with its sign",
        text(
          toCsv(
            ["region", "weight", "sign_consistency"],
            block.regions.map((r) => [r.region, r.weight, r.signConsistency]),
          ),
        ),
      ),
      part(
        "results/predictions.csv",
        visible
          ? "each participant's observed trait and held-out prediction: participant, observed, predicted"
          : "each participant's observed trait and held-out prediction: observed, predicted (participant ids withheld: the study restricts participant-level rows)",
        text(
          toCsv(
            [...(visible ? ["participant"] : []), "observed", "predicted"],
            block.participants.map((p) => [
              ...(visible ? [p.participant] : []),
              p.observed,
              p.predicted,
            ]),
          ),
        ),
      ),
    ];
  }
  return [];
}

export interface Report {
  view: FitView;
  /** README.txt first, then the parts in the order above. */
  entries: ZipEntry[];
  /** Every entry's time (the fit's finish time). */
  mtime: Date;
  /** Digest of the parts built ahead (all but those rendered while writing). */
  digest: string;
}

/**
 * Builds a done fit's bundle for a caller. Reads the fit's view, methods,
 * inputs, set-asides and activity (the methods paragraph joins the fit's
 * data: O(rows × columns)). Throws 409 when the fit is not done.
 */
export async function buildReport(
  db: Queryable,
  jobs: FitJobs,
  fit: Fit,
  options: ReportOptions,
): Promise<Report> {
  const regions = regionsOf(fit); // 409 unless done
  const { head: view } = await fitViewParts(
    db,
    jobs,
    fit.studyId,
    fit.id,
    options.participantsVisible,
  );
  const modelName = view.model.name;
  const manuscript = { participantsVisible: options.participantsVisible };
  const [methods, inputs, activity, tables] = await Promise.all([
    methodsOf(db, fit),
    inputsJson(db, fit),
    activityCsv(db, fit, modelName),
    // A prediction or a specification curve has no region rows: no region table (as the publish panel).
    regions.length > 0 ? regionTables(fit, manuscript) : null,
  ]);
  const figures = await figureParts(db, fit, manuscript);
  const leftOut: string[] = [...figures.leftOut];
  const part = (name: string, about: string, data: Uint8Array, compress = true): ReportPart => ({
    name,
    about,
    compress,
    bytes: () => data,
  });
  const parts: ReportPart[] = [
    part("methods.md", "the methods paragraph with its references", text(methodsMarkdown(methods))),
    ...resultParts(fit, tables, manuscript, part),
    ...figures.parts,
  ];
  if (options.participantsVisible)
    parts.push(
      part(
        "recipe.json",
        "the recipe: re-running it on the two input files reproduces the numbers exactly",
        text(recipeJson(fit)),
      ),
    );
  else
    leftOut.push(
      "recipe.json: this study restricts participant-level rows, and the recipe names participants (set-asides and id mappings).",
    );
  parts.push(
    part(
      "inputs.json",
      "the data files the fit used: file name, version, SHA-256 of the bytes, participants",
      json(inputs),
    ),
    part(
      "set-asides.csv",
      options.participantsVisible
        ? "participants set aside from the fit, then those its model's rules left out: participant, scope, reason, who, when"
        : "set-asides applied by the fit, then one row per participant its model's rules left out: scope, reason, who, when (participant ids withheld: the study restricts participant-level rows)",
      text(setAsidesCsv(view)),
    ),
    part(
      "activity.csv",
      "the fit's run, approval and seal from the study's audit trail",
      text(activity),
    ),
  );
  if (view.seal)
    parts.push(
      part(
        "seal.json",
        "the seal: SHA-256 of the canonical JSON of the recipe and result, who sealed it, when, and whether it still matches",
        json({
          fit: view.id,
          sha256: view.seal.sha256,
          hashOf: 'the canonical JSON (RFC 8785) of { "recipe": …, "result": … } as stored',
          sealedBy: view.seal.by,
          sealedAt: view.seal.at,
          intact: view.seal.intact,
          singlePersonSignOff: view.seal.singlePersonSignOff,
        }),
      ),
    );
  const readmeText = text(readme(view, parts, leftOut, figures.regions));
  const entries: ZipEntry[] = [
    { name: "README.txt", compress: true, bytes: () => readmeText },
    ...parts,
  ];
  const digest = createHash("sha256");
  for (const entry of [{ name: "README.txt", bytes: () => readmeText }, ...parts]) {
    digest.update(entry.name);
    if (!("lazy" in entry && entry.lazy)) digest.update(await entry.bytes());
  }
  const mtime = fit.finishedAt ?? fit.createdAt;
  return { view, entries, mtime, digest: digest.digest("hex") };
}

/** Writes the bundle to `write` (see report-zip.ts). */
export function writeReport(
  report: Report,
  write: (chunk: Uint8Array) => Promise<void> | void,
): Promise<void> {
  return writeZip(report.entries, report.mtime, write);
}

const hashes = new Map<string, { sha256: string; bytes: number }>();
const keptHashes = 256;

/** The bundle's SHA-256 and size, written into a hash (kept per fit, visibility and digest of its parts). */
export async function reportSha256(
  report: Report,
  options: ReportOptions,
): Promise<{ sha256: string; bytes: number }> {
  const key = `${report.view.id} ${options.participantsVisible} ${report.digest}`;
  const kept = hashes.get(key);
  if (kept) return kept;
  const hash = createHash("sha256");
  let bytes = 0;
  await writeReport(report, (chunk) => {
    hash.update(chunk);
    bytes += chunk.length;
  });
  const answer = { sha256: hash.digest("hex"), bytes };
  hashes.set(key, answer);
  if (hashes.size > keptHashes) hashes.delete(hashes.keys().next().value as string);
  return answer;
}
