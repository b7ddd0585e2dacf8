/**
 * An exclusion rule: a criterion on one participant-sheet column that sets a
 * participant aside, with its reason (e.g. mean_fd > 0.5 "motion"). One
 * definition for the analysis plan (rules applied as set-asides,
 * contract/plans.ts) and the specification curve (rules switched on and
 * off as alternatives). Zod only.
 *
 * Evaluation (`meetsRule`): a value and the rule's value that both read as
 * numbers compare as numbers (text such as "10" counts as the number 10);
 * otherwise only `==` and `!=` apply, comparing text (an ordering operator
 * on text meets nothing). A missing value (null, NaN, empty text) meets no
 * rule under "keep" and every rule under "set-aside".
 */
import { z } from "zod";

export const ruleOps = ["<", "<=", ">", ">=", "==", "!="] as const;
export type RuleOp = (typeof ruleOps)[number];

/** What a missing value on a rule's column does: meets no rule, or every rule. */
export const missingRules = ["keep", "set-aside"] as const;
export type MissingRule = (typeof missingRules)[number];

/** Text of 1 to `max` characters (trimmed), with plain messages. */
export const boundedText = (max: number) =>
  z
    .string({ error: "must be text" })
    .trim()
    .min(1, { error: "must not be empty" })
    .max(max, { error: `must be at most ${max} characters` });

/** A criterion on a participant-sheet column: participants meeting it are set aside. */
export const exclusionRuleSchema = z.strictObject({
  column: boundedText(200),
  op: z.enum(ruleOps, { error: `must be one of ${ruleOps.join(" ")}` }),
  value: z.union([z.number().finite(), boundedText(500)], { error: "must be a number or text" }),
  reason: boundedText(500),
});
export type ExclusionRule = z.output<typeof exclusionRuleSchema>;

/** The criterion in plain words, e.g. "mean_fd > 0.5". */
export function criterionText(rule: ExclusionRule): string {
  return `${rule.column} ${rule.op} ${rule.value}`;
}

/** The rule in plain words with its reason, e.g. "mean_fd > 0.5 (motion)". */
export function ruleText(rule: ExclusionRule): string {
  return `${criterionText(rule)} (${rule.reason})`;
}

/**
 * The reason a model's rule leaves a participant out of a fit, e.g.
 * "rule: mean_fd > 0.5 (motion)" (an ordinary model's `exclusionRules`,
 * and the rules a specification of a curve switches on).
 */
export function modelRuleReason(rule: ExclusionRule): string {
  return `rule: ${ruleText(rule)}`;
}

/** The participants a model's rule left out of a fit (a fit result's `ruleExclusions`, in the rules' order). */
export interface RuleExclusion {
  rule: ExclusionRule;
  participants: string[];
}

function asNumber(v: string | number): number | null {
  if (typeof v === "number") return Number.isFinite(v) ? v : null;
  const t = v.trim();
  const n = Number(t);
  return t !== "" && Number.isFinite(n) ? n : null;
}

/** Whether a participant's value on the rule's column meets the rule (and so sets them aside). */
export function meetsRule(
  rule: ExclusionRule,
  raw: string | number | null | undefined,
  missing: MissingRule = "keep",
): boolean {
  const isMissing =
    raw === null ||
    raw === undefined ||
    (typeof raw === "number" && Number.isNaN(raw)) ||
    (typeof raw === "string" && raw.trim() === "");
  if (isMissing) return missing === "set-aside";
  const a = asNumber(raw);
  const b = asNumber(rule.value);
  if (a !== null && b !== null) {
    switch (rule.op) {
      case "<":
        return a < b;
      case "<=":
        return a <= b;
      case ">":
        return a > b;
      case ">=":
        return a >= b;
      case "==":
        return a === b;
      case "!=":
        return a !== b;
    }
  }
  const x = String(raw).trim();
  const y = String(rule.value).trim();
  if (rule.op === "==") return x === y;
  if (rule.op === "!=") return x !== y;
  return false;
}
