/**
 * A model's exclusion rules (the `exclusionRules` of an association or
 * two-group model; the rules a specification of a curve switches on),
 * judged on the participant sheet in one place for prepare.ts: every
 * participant meeting a rule (contract/exclusion-rules.ts `meetsRule`; a
 * missing value meets none) is left out of the fit, as a set-aside from
 * every region with the reason `modelRuleReason(rule)`. Cost
 * O(rules × participants).
 */
import {
  type ExclusionRule,
  type RuleExclusion,
  meetsRule,
} from "../../../contract/exclusion-rules";
import type { FitData } from "../../../contract/spec";

/**
 * Per rule, the indices of the participants meeting it, in participant
 * order. A rule whose column the sheet lacks meets no one (the fit rules
 * refuse such a model with the field named before it is fitted).
 */
export function ruleMembers(rules: readonly ExclusionRule[], data: FitData): number[][] {
  return rules.map((rule) => {
    const column = Object.hasOwn(data.numericColumns, rule.column)
      ? data.numericColumns[rule.column]
      : Object.hasOwn(data.categoricalColumns, rule.column)
        ? data.categoricalColumns[rule.column]
        : null;
    const out: number[] = [];
    if (!column) return out;
    for (let i = 0; i < data.participants.length; i++)
      if (meetsRule(rule, column[i] ?? null)) out.push(i);
    return out;
  });
}

/**
 * The result's `ruleExclusions` of a model with exclusion rules: each rule
 * with the ids of the participants it left out (a participant meeting two
 * rules is listed under both); nothing for a model without rules.
 */
export function ruleExclusionsOf(prep: {
  spec: { exclusionRules?: readonly ExclusionRule[] };
  data: FitData;
  ruleExclusions: readonly (readonly number[])[];
}): { ruleExclusions?: RuleExclusion[] } {
  const rules = prep.spec.exclusionRules;
  if (!rules || rules.length === 0) return {};
  return {
    ruleExclusions: rules.map((rule, k) => ({
      rule: { ...rule },
      participants: prep.ruleExclusions[k].map((i) => prep.data.participants[i]),
    })),
  };
}
