/**
 * What a finished fit hands to a paper: the region table as CSV, the recipe
 * as JSON, and the methods paragraph with its references.
 *
 * - Region table: one row per region in fit order with n, estimate, se,
 *   statistic, df, p, adjusted p, the 95% interval, r and its interval
 *   (columns present when any region has r), the method, the inference and
 *   the correction; numbers in full precision (shortest round-trip
 *   decimals), missing as `n/a`, text cells neutralised against formula
 *   injection (server/intake/export-csv.ts).
 * - Recipe: the stored recipe, keys in the recipe command's order (values
 *   unchanged), so `npm run --silent fit -- recipe.json` beside the two
 *   original files reproduces the numbers.
 * - Methods: contract/methods-text.ts, fed with the recipe, the result,
 *   the data versions, the model's region-selection answer, the join of
 *   the fit's data versions and whether its seal records that one person
 *   started, approved and sealed it.
 *
 * Route handler → this module → pure builders (toCsv, buildMethodsText).
 */
import { eq, inArray } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { datasetVersions, fitSeals, models, type Fit } from "../../db/schema";
import { toCsv, type CsvCell } from "../intake/export-csv";
import type { RuleExclusion } from "../../contract/exclusion-rules";
import { buildMethodsText, type MethodsInput, type MethodsText } from "../../contract/methods-text";
import { correctionLabels } from "../../contract/labels";
import type { PredictionBlock } from "../../contract/prediction";
import { orderedRecipe, specOfRecipe } from "../../contract/recipe";
import type { RegionResult } from "../../contract/spec";
import { conflict } from "../http/errors";
import { buildFitInputs, inputsOfFit } from "./fit-inputs";
import { fitPlan } from "./plans";

/** The regions of a finished fit; throws 409 when the fit is not done. */
export function regionsOf(fit: Fit): RegionResult[] {
  if (fit.status !== "done" || !fit.result)
    throw conflict(
      `This fit is not finished (status ${fit.status}); exports are available once it is done.`,
    );
  return (fit.result as { regions: RegionResult[] }).regions;
}

/** File names of a fit's downloads: "fit-1a2b3c4d-regions.csv", "fit-1a2b3c4d-recipe.json", "fit-1a2b3c4d-report.zip". */
export function exportFileName(
  fit: Pick<Fit, "id">,
  what:
    | "regions.csv"
    | "regions.md"
    | "regions.tex"
    | "regions.docx"
    | "recipe.json"
    | "report.zip",
): string {
  return `fit-${fit.id.slice(0, 8)}-${what}`;
}

/** How a region's p was found, in words (the CSV's `inference` column and the manuscript tables' note). */
export function inferenceOf(r: RegionResult, fallback: string): string {
  const perm = r.permutation as
    | { scheme?: string; exact?: boolean; rearrangements?: number }
    | undefined;
  if (perm && typeof perm.rearrangements === "number") {
    // `rearrangements` counts the observed order too (server/stats/permutation.ts).
    const scheme = perm.scheme ?? "rearrangement";
    return perm.exact
      ? `permutation (${scheme}, all ${perm.rearrangements} rearrangements, exact)`
      : `permutation (${scheme}, ${perm.rearrangements - 1} random rearrangements plus the observed order, Monte Carlo)`;
  }
  const boot = r.bootstrap as { method?: string; resamples?: number } | undefined;
  if (boot && typeof boot.resamples === "number")
    return `bootstrap (${boot.method === "bca" ? "BCa" : "percentile"}, ${boot.resamples} resamples)`;
  return fallback;
}

/** The region table of a finished fit as CSV text. Throws 409 when the fit is not done. Cost O(regions). */
export function regionsCsv(fit: Fit): string {
  const regions = regionsOf(fit);
  const result = fit.result as { inference?: string; correction?: string };
  const withR = regions.some((r) => typeof r.r === "number");
  const header = [
    "region",
    "n",
    "estimate",
    "se",
    "statistic",
    "df",
    "p",
    "p_adjusted",
    "ci_low",
    "ci_high",
  ];
  if (withR) header.push("r", "r_ci_low", "r_ci_high");
  header.push("method", "inference", "correction");
  const correction =
    correctionLabels[(result.correction ?? "none") as keyof typeof correctionLabels] ??
    String(result.correction);
  const rows = regions.map((r) => {
    const row: CsvCell[] = [
      r.region,
      r.n,
      r.estimate,
      r.se,
      r.statistic,
      r.df,
      r.p,
      r.pAdjusted,
      r.ciLow,
      r.ciHigh,
    ];
    if (withR) row.push(r.r ?? null, r.rCiLow ?? null, r.rCiHigh ?? null);
    row.push(
      typeof r.method === "string" ? r.method : null,
      inferenceOf(r, result.inference ?? "parametric"),
      correction,
    );
    return row;
  });
  return toCsv(header, rows);
}

/** The stored recipe as a JSON document (keys in the recipe command's order, values unchanged). */
export function recipeJson(fit: Pick<Fit, "recipe">): string {
  return `${JSON.stringify(orderedRecipe(fit.recipe), null, 2)}\n`;
}

/**
 * The methods paragraph of a finished fit. Reads the data versions, the
 * model and the join of the fit's data (O(rows × columns)). Throws 409 when
 * the fit is not done.
 */
export async function methodsOf(
  db: Queryable,
  fit: Fit,
  softwareName = "Covarion",
): Promise<MethodsText> {
  const regions = regionsOf(fit);
  const ids = [fit.brainVersionId, ...(fit.sheetVersionId ? [fit.sheetVersionId] : [])];
  const [versions, [model], built, [seal], plan] = await Promise.all([
    db.select().from(datasetVersions).where(inArray(datasetVersions.id, ids)),
    db
      .select({ regionSelection: models.regionSelection })
      .from(models)
      .where(eq(models.id, fit.modelId)),
    buildFitInputs(db, inputsOfFit(fit)),
    db
      .select({ singlePersonSignOff: fitSeals.singlePersonSignOff })
      .from(fitSeals)
      .where(eq(fitSeals.fitId, fit.id)),
    fitPlan(db, {
      studyId: fit.studyId,
      createdAt: fit.createdAt,
      spec: specOfRecipe(fit.recipe as Record<string, unknown>),
    }),
  ]);
  const brain = versions.find((v) => v.id === fit.brainVersionId);
  const sheet = fit.sheetVersionId ? versions.find((v) => v.id === fit.sheetVersionId) : undefined;
  if (!brain) throw new Error(`methodsOf: brain table version ${fit.brainVersionId} not found`);
  const roster = built.roster;
  const input: MethodsInput = {
    recipe: fit.recipe as Record<string, unknown>,
    result: {
      regions,
      prediction: (fit.result as { prediction?: PredictionBlock }).prediction,
      n: (fit.result as { n?: number }).n,
      ruleExclusions: (fit.result as { ruleExclusions?: RuleExclusion[] }).ruleExclusions,
    },
    datasets: {
      brain: { fileName: brain.fileName, version: brain.version, sha256: brain.sha256 },
      participants: sheet
        ? { fileName: sheet.fileName, version: sheet.version, sha256: sheet.sha256 }
        : null,
    },
    regionSelection: (model?.regionSelection as MethodsInput["regionSelection"]) ?? null,
    roster:
      roster && sheet
        ? {
            brainParticipants: brain.participantCount,
            sheetParticipants: sheet.participantCount,
            matched: roster.matched.length,
            matchedByMapping: roster.matched.filter((m) => m.via === "mapping").length,
            onlyInBrainTable: roster.onlyInBrainTable.length,
            onlyInParticipantSheet: roster.onlyInParticipantSheet.length,
            duplicateIds: roster.duplicates.reduce((s, d) => s + d.ids.length, 0),
          }
        : null,
    brainParticipants: built.data.participants.length,
    session:
      built.session === null
        ? null
        : { label: built.session, of: built.data.sessions?.labels.length ?? 1 },
    softwareName,
    singlePersonSignOff: seal?.singlePersonSignOff === true,
    plan,
  };
  return buildMethodsText(input);
}
