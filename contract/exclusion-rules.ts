/**
 * An exclusion rule: a criterion on one participant-sheet column that sets a
 * participant aside, with its reason (e.g. mean_fd > 0.5 "motion"). Used by
 * a specification curve's alternatives (and meant for the analysis plan).
 *
 * Evaluation (`meetsRule`): numeric comparisons on numeric columns; `==` and
 * `!=` also on categories (the value compared as text). A participant with a
 * missing value in the rule's column is NOT excluded by that rule.
 */
import { z } from "zod";

export const exclusionOps = ["<", "<=", ">", ">=", "==", "!="] as const;
export type ExclusionOp = (typeof exclusionOps)[number];

export const exclusionRuleSchema = z.strictObject({
  column: z.string().min(1),
  op: z.enum(exclusionOps),
  value: z.union([z.number(), z.string().min(1)]),
  reason: z.string().min(1),
});

export type ExclusionRule = z.output<typeof exclusionRuleSchema>;

/** The rule in plain words, e.g. "mean_fd > 0.5 (motion)". */
export function ruleText(rule: ExclusionRule): string {
  return `${rule.column} ${rule.op} ${rule.value} (${rule.reason})`;
}

/**
 * Whether a participant's value meets the rule (and so is excluded). A
 * missing value (null, NaN) never meets it. A number compared with a
 * numeric value; a category only with `==` or `!=` against the value as text.
 */
export function meetsRule(rule: ExclusionRule, value: number | string | null): boolean {
  if (value === null) return false;
  if (typeof value === "number") {
    if (!Number.isFinite(value)) return false;
    const v = typeof rule.value === "number" ? rule.value : Number(rule.value);
    if (!Number.isFinite(v)) return false;
    switch (rule.op) {
      case "<":
        return value < v;
      case "<=":
        return value <= v;
      case ">":
        return value > v;
      case ">=":
        return value >= v;
      case "==":
        return value === v;
      case "!=":
        return value !== v;
    }
  }
  const text = String(rule.value);
  if (rule.op === "==") return value === text;
  if (rule.op === "!=") return value !== text;
  return false;
}
