/**
 * The analysis plan: what a team commits to before it looks — the models it
 * will fit, the expected direction of each tested effect, the correction,
 * the exclusion rules on participant-sheet columns and the rule for
 * missing values. One definition, used by the API (validation), the
 * server (rule set-asides, deviations of a fit) and the screens (the same
 * words). The rules themselves are contract/exclusion-rules.ts. No server
 * imports.
 */

import { z } from "zod";
import {
  boundedText,
  criterionText,
  type ExclusionRule,
  exclusionRuleSchema,
  missingRules,
} from "./exclusion-rules";
import { modelNameSchema, regionSelectionSchema } from "./model-form";
import { curveKind } from "./fit-rules";
import { corrections, modelSpecSchema, type ModelSpec } from "./spec";
import { curveChoices } from "./specification-curve";

export const directions = ["positive", "negative", "either"] as const;
export type Direction = (typeof directions)[number];

/** A planned model: name, the model fields, how the regions were chosen, and the effect's expected direction. */
export const plannedModelSchema = z.strictObject({
  name: modelNameSchema,
  spec: modelSpecSchema,
  regionSelection: regionSelectionSchema,
  direction: z.enum(directions, { error: `must be one of ${directions.join(", ")}` }),
});

export const planSchema = z.strictObject({
  title: boundedText(300),
  models: z.array(plannedModelSchema).min(1, { error: "name at least one model" }).max(50),
  correction: z.enum(corrections, { error: `must be one of ${corrections.join(", ")}` }),
  exclusionRules: z.array(exclusionRuleSchema).max(100).default([]),
  missing: z.enum(missingRules, { error: `must be one of ${missingRules.join(", ")}` }),
});
export type PlanInput = z.input<typeof planSchema>;
export type Plan = z.output<typeof planSchema>;

/** POST body: a plan, or a new version naming the plan it replaces and why. */
export const planCreateSchema = z
  .strictObject({
    plan: planSchema,
    replaces: z.string().min(1).max(100).optional(),
    reason: boundedText(2000).optional(),
  })
  .refine((b) => (b.replaces === undefined) === (b.reason === undefined), {
    error: "a new version names the plan it replaces and the reason, both",
    path: ["reason"],
  });

/** The set-aside reason a rule gives: "plan rule: mean_fd > 0.5 — motion". */
export function ruleReason(rule: ExclusionRule): string {
  return `plan rule: ${criterionText(rule)} — ${rule.reason}`;
}

/** True when a set-aside reason is one a plan rule gave. */
export function isRuleReason(reason: string): boolean {
  return reason.startsWith("plan rule: ");
}

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;
const show = (v: unknown): string =>
  v === undefined || v === null
    ? "none"
    : Array.isArray(v)
      ? v.length === 0
        ? "none"
        : v.join(", ")
      : String(v);

/** The spec fields compared one by one (covariates and set-asides have their own words). */
const comparedFields = [
  "kind",
  "predictor",
  "group",
  "levels",
  "interaction",
  "estimator",
  "inference",
  "resamples",
  "weights",
  "tau2Method",
  "smallSample",
  "folds",
  "repeats",
  "lambda",
] as const satisfies readonly (keyof ModelSpec)[];

function sameList(a: readonly string[] | undefined, b: readonly string[] | undefined): boolean {
  const x = [...(a ?? [])].sort();
  const y = [...(b ?? [])].sort();
  return x.length === y.length && x.every((v, i) => v === y[i]);
}

/** The plain-words differences of a fit's model fields from a planned model's (the correction is the plan's, compared apart). */
export function specDifferences(planned: ModelSpec, fit: ModelSpec): string[] {
  const out: string[] = [];
  for (const c of fit.covariates)
    if (!planned.covariates.includes(c)) out.push(`added covariate ${c}`);
  for (const c of planned.covariates)
    if (!fit.covariates.includes(c)) out.push(`dropped covariate ${c}`);
  for (const f of comparedFields) {
    const p = planned[f] as unknown;
    const q = fit[f] as unknown;
    const same = Array.isArray(p) || Array.isArray(q) ? show(p) === show(q) : p === q;
    if (!same)
      out.push(`${f === "tau2Method" ? "tau² method" : f} ${show(q)} instead of ${show(p)}`);
  }
  if (!sameList(planned.regions, fit.regions))
    out.push(`regions ${show(fit.regions)} instead of ${show(planned.regions)}`);
  const plannedRules = (planned.exclusionRules ?? []).map(criterionText);
  const fitRules = (fit.exclusionRules ?? []).map(criterionText);
  for (const r of fitRules) if (!plannedRules.includes(r)) out.push(`added rule ${r}`);
  for (const r of plannedRules) if (!fitRules.includes(r)) out.push(`dropped rule ${r}`);
  return out;
}

/** The deviation of a model rule that is neither one of the plan's rules nor the planned model's. */
export function unplannedRuleWords(rule: ExclusionRule): string {
  return `leaves out by rule ${criterionText(rule)}, not in the plan`;
}

export interface PlanComparison {
  /** The planned model the fit is closest to (fewest differences), or null when the plan has none of its kind. */
  model: string | null;
  asPlanned: boolean;
  deviations: string[];
}

/**
 * Compares a fit with the plan: its model fields with the closest planned
 * model's, and its set-asides with the plan's rules. `ruleParticipants`
 * are the participants the plan's rules set aside in the study (study-wide
 * set-asides whose reason is a rule reason). As planned = no difference.
 */
export function compareWithPlan(
  plan: Plan,
  fit: {
    spec: ModelSpec;
    setAside: readonly { participant: string; region?: string; reason: string }[];
  },
  ruleParticipants: readonly string[],
): PlanComparison {
  let best: { name: string; diffs: string[] } | null = null;
  for (const m of plan.models) {
    const diffs = specDifferences(m.spec, fit.spec);
    if (m.spec.kind === fit.spec.kind && (best === null || diffs.length < best.diffs.length))
      best = { name: m.name, diffs };
  }
  // A model rule that is one of the plan's rules repeats what the plan sets aside: no deviation.
  // A model rule the plan names nowhere (its rules or the closest planned model's) is said once, as such.
  const planCriteria = plan.exclusionRules.map(criterionText);
  const plannedCriteria = new Set([
    ...plan.exclusionRules.map(criterionText),
    ...(plan.models.find((m) => m.name === best?.name)?.spec.exclusionRules ?? []).map(
      criterionText,
    ),
  ]);
  const unplanned = (fit.spec.exclusionRules ?? []).filter(
    (r) => !plannedCriteria.has(criterionText(r)),
  );
  const said = new Set(
    [...planCriteria, ...unplanned.map(criterionText)].map((c) => `added rule ${c}`),
  );
  const deviations: string[] = best
    ? best.diffs.filter((d) => !said.has(d))
    : [`a ${fit.spec.kind} model, which the plan does not name`];
  deviations.push(...unplanned.map(unplannedRuleWords));
  if (fit.spec.correction !== plan.correction)
    deviations.push(`correction ${fit.spec.correction} instead of ${plan.correction}`);
  const ruleSet = new Set(ruleParticipants);
  const outside = new Set(
    fit.setAside
      .filter(
        (s) => !(s.region === undefined && isRuleReason(s.reason) && ruleSet.has(s.participant)),
      )
      .map((s) => s.participant),
  );
  if (outside.size > 0)
    deviations.push(
      `${plural(outside.size, "participant", "participants")} set aside outside the plan's rules`,
    );
  const inFit = new Set(
    fit.setAside.filter((s) => s.region === undefined).map((s) => s.participant),
  );
  const kept = [...ruleSet].filter((p) => !inFit.has(p)).length;
  if (kept > 0)
    deviations.push(
      `${plural(kept, "participant", "participants")} the plan's rules set aside ${kept === 1 ? "was" : "were"} kept`,
    );
  return { model: best?.name ?? null, asPlanned: deviations.length === 0, deviations };
}

/**
 * The specification of a curve that the plan names: the first planned model
 * asking the curve's question (an association with the same predictor, or
 * two groups with the same group and levels) in the curve's region, with
 * its estimator, its covariates and, switched on, the curve's exclusion
 * rules that have the criterion of one of the plan's rules (the others
 * off). Null when the plan names no such model or the curve does not hold
 * its estimator or covariate set.
 */
export function plannedCurveChoice(
  plan: Pick<Plan, "models" | "exclusionRules">,
  curve: ModelSpec,
): { model: string; estimator: string; covariates: string[]; exclusions: number[] } | null {
  const question = curveKind(curve);
  const region = curve.regions?.[0];
  const choices = curveChoices(curve);
  const asks = (m: ModelSpec) =>
    m.kind === question &&
    (question === "association"
      ? m.predictor === curve.predictor
      : m.group === curve.group &&
        m.levels?.[0] === curve.levels?.[0] &&
        m.levels?.[1] === curve.levels?.[1]) &&
    (m.regions === undefined || region === undefined || m.regions.includes(region));
  const planned = plan.models.find((m) => asks(m.spec));
  if (!planned) return null;
  const { estimator, covariates } = planned.spec;
  if (!choices.estimators.includes(estimator)) return null;
  const set = choices.covariateSets.find((c) => sameList(c, covariates));
  if (!set) return null;
  const criteria = new Set(plan.exclusionRules.map(criterionText));
  const exclusions = choices.exclusionRules.flatMap((r, k) =>
    criteria.has(criterionText(r)) ? [k] : [],
  );
  return { model: planned.name, estimator, covariates: set, exclusions };
}

/** The fit header's words: "As planned" or "Deviates from the plan (3)". */
export function planVerdict(p: { asPlanned: boolean; deviations: readonly string[] }): string {
  return p.asPlanned ? "As planned" : `Deviates from the plan (${p.deviations.length})`;
}
