/**
 * Attenuation beside association results: for each region of a finished
 * association fit, when both reliabilities are known, Spearman's correction
 * of the observed r and the largest r the two measures allow.
 *
 * - Brain reliability: ICC(3,1) of the region, from the sessions of the
 *   same brain-table version the fit ran on (Shrout & Fleiss 1979;
 *   services/reliability.ts). ICC(3,1) — consistency, single session — is
 *   the form that bounds a correlation: a fit uses one session's values,
 *   and a shift common to all participants between sessions does not
 *   lower a correlation, so absolute agreement (ICC(2,1)) would understate
 *   the reliability that matters here.
 * - Trait reliability: the study's stated value for the fit's predictor,
 *   with its source (read when the fit is shown, so a value stated after
 *   the fit still applies; the attenuation object names both inputs and
 *   when the trait's value was stated). It is an annotation beside the
 *   result: a sealed fit's stored result and its seal hash do not include it.
 *
 * Computed for association fits with estimator "ols", no weights and no
 * interaction (the observed r is then Pearson's r, or the partial r with
 * covariates). The interval is the Fisher z interval of r on n − 3 − k
 * degrees of freedom (k other non-intercept columns, as for the region's r
 * interval), with both bounds divided by √(rel_brain · rel_trait), treating
 * the reliabilities as known (Hunter & Schmidt 2004).
 *
 * Route handler → services/fits.ts → this module → `correctForAttenuation`
 * (server/stats/attenuation.ts).
 */
import { eq } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { datasetVersions, type Fit } from "../../db/schema";
import { HttpError } from "../http/errors";
import type { ModelSpec, RegionResult } from "../../contract/spec";
import { correctForAttenuation } from "../stats/attenuation";
import { StatsError } from "../stats/errors";
import type { Attenuation } from "../../contract/views/fits";
import type { RegionReliability } from "../../contract/views/reliability";
import { brainReliabilityOfVersion, traitReliabilityMap } from "./reliability";

/** The note added to a fit's notes when at least one region carries an attenuation. */
export const ATTENUATION_NOTE =
  "attenuation: Spearman's (1904) correction r / √(rel_brain · rel_trait), with rel_brain the region's ICC(3,1) across the brain table's sessions (Shrout & Fleiss 1979) and rel_trait the trait's stated reliability; its interval divides the observed r's Fisher z interval by the same factor, treating both reliabilities as known (Hunter & Schmidt 2004).";

const PARTIAL_CAUTION =
  "With covariates the observed r is a partial correlation; the correction assumes the covariates are measured without error.";

/** Whether a fit's kind and options give an observed r that Spearman's correction applies to. */
export function attenuationApplies(
  spec: Pick<ModelSpec, "kind" | "estimator" | "weights" | "interaction" | "predictor">,
): boolean {
  return (
    spec.kind === "association" &&
    spec.estimator === "ols" &&
    spec.weights === "none" &&
    !spec.interaction &&
    spec.predictor !== undefined
  );
}

function attenuationOf(
  region: RegionResult,
  brain: RegionReliability,
  trait: { name: string; reliability: number; source: string; statedAt: string },
  otherColumns: number,
): Attenuation | null {
  const r = region.r;
  const rel = brain.icc31.value;
  if (typeof r !== "number" || !(rel > 0)) return null;
  // Fisher z on n − 3 − k, as the region's own r interval: pass n − k.
  const k = typeof region.df === "number" ? region.n - region.df - 2 : otherColumns;
  const n = region.n - Math.max(0, k);
  try {
    const a = correctForAttenuation({
      r,
      n,
      reliabilityBrain: Math.min(1, rel),
      reliabilityTrait: trait.reliability,
    });
    const cautions = [a.caution, k > 0 ? PARTIAL_CAUTION : null].filter(
      (c): c is string => c !== null,
    );
    return {
      reliabilityBrain: Math.min(1, rel),
      reliabilityBrainForm: "ICC(3,1)",
      reliabilityTrait: trait.reliability,
      traitSource: trait.source,
      traitStatedAt: trait.statedAt,
      trait: trait.name,
      observed: a.observed,
      observedCiLow: a.observedCiLow,
      observedCiHigh: a.observedCiHigh,
      ceiling: a.ceiling,
      disattenuated: a.corrected,
      disattenuatedCiLow: a.correctedCiLow,
      disattenuatedCiHigh: a.correctedCiHigh,
      caution: cautions.length > 0 ? cautions.join(" ") : null,
    };
  } catch (e) {
    if (e instanceof StatsError) return null;
    throw e;
  }
}

/**
 * The fit's region rows with `attenuation` added where both reliabilities
 * are known, and whether any was added. Regions are returned unchanged
 * when the fit is not an eligible association, the predictor has no stated
 * reliability, or the brain table has no usable sessions.
 */
export async function withAttenuation(
  db: Queryable,
  fit: Pick<Fit, "studyId" | "brainVersionId" | "recipe">,
  regions: readonly RegionResult[],
): Promise<{ regions: RegionResult[]; added: boolean }> {
  const recipe = fit.recipe as Partial<ModelSpec> & { covariates?: string[]; group?: string };
  const spec = {
    kind: recipe.kind,
    estimator: recipe.estimator ?? "ols",
    weights: recipe.weights ?? "none",
    interaction: recipe.interaction ?? false,
    predictor: recipe.predictor,
  } as Pick<ModelSpec, "kind" | "estimator" | "weights" | "interaction" | "predictor">;
  if (!attenuationApplies(spec) || regions.length === 0)
    return { regions: [...regions], added: false };
  const trait = (await traitReliabilityMap(db, fit.studyId)).get(spec.predictor as string);
  if (!trait) return { regions: [...regions], added: false };
  const [version] = await db
    .select()
    .from(datasetVersions)
    .where(eq(datasetVersions.id, fit.brainVersionId));
  if (!version?.sessionColumn) return { regions: [...regions], added: false };
  let reliability: Awaited<ReturnType<typeof brainReliabilityOfVersion>>;
  try {
    reliability = await brainReliabilityOfVersion(db, version);
  } catch (e) {
    if (e instanceof HttpError && e.status === 409) return { regions: [...regions], added: false };
    throw e;
  }
  const byRegion = new Map<string, RegionReliability>();
  for (const r of reliability.regions) if ("icc31" in r) byRegion.set(r.region, r);
  const otherColumns = (recipe.covariates?.length ?? 0) + (recipe.group ? 1 : 0);
  let added = false;
  const out = regions.map((region) => {
    const brain = byRegion.get(region.region);
    if (!brain) return region;
    const attenuation = attenuationOf(
      region,
      brain,
      { name: spec.predictor as string, ...trait },
      otherColumns,
    );
    if (!attenuation) return region;
    added = true;
    return { ...region, attenuation };
  });
  return { regions: out, added };
}

/** A fit's result with `attenuation` on its region rows and the method note, when any applies. */
export async function attenuateResult<T extends { regions: RegionResult[]; notes: string[] }>(
  db: Queryable,
  fit: Pick<Fit, "studyId" | "brainVersionId" | "recipe">,
  result: T,
): Promise<T> {
  const { regions, added } = await withAttenuation(db, fit, result.regions);
  return added ? { ...result, regions, notes: [...result.notes, ATTENUATION_NOTE] } : result;
}
