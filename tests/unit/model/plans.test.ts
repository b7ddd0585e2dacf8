/**
 * The analysis plan's rules and words (contract/plans.ts): when a
 * participant's value meets an exclusion rule (numbers as numbers, text as
 * text, missing values by the plan's rule), and the plain-words deviations
 * of a fit from the plan. Expected values are worked out by hand from the
 * rule's definition (common practice, no source).
 */
import { describe, expect, it } from "vitest";
import {
  compareWithPlan,
  type Plan,
  plannedCurveChoice,
  planSchema,
  planVerdict,
  ruleReason,
} from "../../../contract/plans";
import { criterionText, type ExclusionRule, meetsRule } from "../../../contract/exclusion-rules";
import { modelSpecSchema } from "../../../contract/spec";
import { planSentence } from "../../../contract/methods-text";
import { planCountersignedWords, planRegisteredWords } from "../../../contract/activity-words";

const rule = (
  op: ExclusionRule["op"],
  value: number | string,
  column = "mean_fd",
): ExclusionRule => ({
  column,
  op,
  value,
  reason: "motion",
});

describe("meetsRule", () => {
  it("compares numbers as numbers with each operator, boundary included or not", () => {
    const cases: [ExclusionRule["op"], number, boolean][] = [
      [">", 0.5, false],
      [">", 0.51, true],
      [">=", 0.5, true],
      ["<", 0.5, false],
      ["<", 0.49, true],
      ["<=", 0.5, true],
      ["==", 0.5, true],
      ["!=", 0.5, false],
      ["!=", 0.4, true],
    ];
    for (const [op, x, want] of cases)
      expect(meetsRule(rule(op, 0.5), x, "keep"), `${x} ${op} 0.5`).toBe(want);
    // Numbers written as text compare as numbers ("10" > "9"), not as text.
    expect(meetsRule(rule(">", 9), "10", "keep")).toBe(true);
  });

  it("compares text as text", () => {
    expect(meetsRule(rule("==", "patient", "group"), "patient", "keep")).toBe(true);
    expect(meetsRule(rule("==", "patient", "group"), "control", "keep")).toBe(false);
    expect(meetsRule(rule("!=", "patient", "group"), "control", "keep")).toBe(true);
  });

  it("missing values meet no rule under keep, every rule under set-aside", () => {
    for (const missing of [null, undefined, Number.NaN, "", "  "]) {
      expect(meetsRule(rule(">", 0.5), missing, "keep")).toBe(false);
      expect(meetsRule(rule(">", 0.5), missing, "set-aside")).toBe(true);
      expect(meetsRule(rule("<", 0.5), missing, "set-aside")).toBe(true);
    }
  });

  it("writes the criterion and the set-aside reason", () => {
    expect(criterionText(rule(">", 0.5))).toBe("mean_fd > 0.5");
    expect(ruleReason(rule(">", 0.5))).toBe("plan rule: mean_fd > 0.5 — motion");
  });
});

describe("compareWithPlan", () => {
  const plan: Plan = planSchema.parse({
    title: "t",
    models: [
      {
        name: "accuracy",
        spec: { kind: "association", predictor: "accuracy", covariates: ["age"] },
        regionSelection: "anatomical-or-prior",
        direction: "positive",
      },
      {
        name: "groups",
        spec: { kind: "two-group", group: "group", levels: ["patient", "control"] },
        regionSelection: "anatomical-or-prior",
        direction: "negative",
      },
    ],
    correction: "none",
    exclusionRules: [rule(">", 0.5)],
    missing: "keep",
  });
  const spec = (fields: Record<string, unknown>) => modelSpecSchema.parse(fields);
  const byRule = { participant: "sub-09", reason: ruleReason(rule(">", 0.5)) };

  it("a fit equal to a planned model with exactly the rule set-asides is as planned", () => {
    const out = compareWithPlan(
      plan,
      {
        spec: spec({ kind: "association", predictor: "accuracy", covariates: ["age"] }),
        setAside: [byRule],
      },
      ["sub-09"],
    );
    expect(out).toEqual({ model: "accuracy", asPlanned: true, deviations: [] });
    expect(planVerdict(out)).toBe("As planned");
  });

  it("lists each difference in plain words, against the closest planned model", () => {
    const out = compareWithPlan(
      plan,
      {
        spec: spec({
          kind: "association",
          predictor: "accuracy",
          covariates: ["mean_fd"],
          estimator: "huber",
          correction: "holm",
        }),
        setAside: [
          { participant: "sub-02", reason: "fell asleep" },
          { participant: "sub-03", region: "L_dlpfc", reason: "artefact" },
        ],
      },
      ["sub-09"],
    );
    expect(out.model).toBe("accuracy");
    expect(out.deviations).toEqual([
      "added covariate mean_fd",
      "dropped covariate age",
      "estimator huber instead of ols",
      "correction holm instead of none",
      "2 participants set aside outside the plan's rules",
      "1 participant the plan's rules set aside was kept",
    ]);
    expect(planVerdict(out)).toBe("Deviates from the plan (6)");
  });

  it("a model rule the plan names nowhere is a deviation; one of the plan's rules is not", () => {
    const accuracy = { kind: "association", predictor: "accuracy", covariates: ["age"] };
    const out = compareWithPlan(
      plan,
      {
        spec: spec({
          ...accuracy,
          exclusionRules: [rule(">", 0.5), rule("<", 0.6, "accuracy")],
        }),
        setAside: [byRule],
      },
      ["sub-09"],
    );
    // mean_fd > 0.5 is the plan's own rule (it repeats the plan's set-asides): no deviation.
    expect(out.deviations).toEqual(["leaves out by rule accuracy < 0.6, not in the plan"]);
    // A planned model's rules compare like any other field.
    const withRules: Plan = planSchema.parse({
      ...plan,
      models: [
        { ...plan.models[0], spec: { ...accuracy, exclusionRules: [rule("<", 0.6, "accuracy")] } },
      ],
    });
    expect(
      compareWithPlan(
        withRules,
        {
          spec: spec({ ...accuracy, exclusionRules: [rule("<", 0.6, "accuracy")] }),
          setAside: [byRule],
        },
        ["sub-09"],
      ),
    ).toEqual({ model: "accuracy", asPlanned: true, deviations: [] });
    expect(
      compareWithPlan(withRules, { spec: spec(accuracy), setAside: [byRule] }, ["sub-09"])
        .deviations,
    ).toEqual(["dropped rule accuracy < 0.6"]);
  });

  it("a kind the plan does not name is a deviation", () => {
    const out = compareWithPlan(plan, { spec: spec({ kind: "one-sample" }), setAside: [] }, []);
    expect(out).toEqual({
      model: null,
      asPlanned: false,
      deviations: ["a one-sample model, which the plan does not name"],
    });
  });
});

describe("the methods paragraph's plan sentence", () => {
  const sha = "0123456789abcdef".repeat(4);
  it("names the plan's date (UTC) and the first 12 hex of its hash", () => {
    expect(
      planSentence({
        registeredAt: "2026-12-03T23:30:00Z",
        sha256: sha,
        asPlanned: true,
        deviations: [],
      }),
    ).toBe("The analysis followed the plan registered on 3 Dec 2026 (SHA-256 0123456789ab…).");
    expect(
      planSentence({
        registeredAt: "2026-12-03T00:10:00Z",
        sha256: sha,
        asPlanned: false,
        deviations: ["added covariate mean_fd", "estimator huber instead of ols"],
      }),
    ).toBe(
      "The analysis deviated from the plan registered on 3 Dec 2026 (SHA-256 0123456789ab…): added covariate mean_fd; estimator huber instead of ols.",
    );
  });
});

describe("the activity sentences of a plan", () => {
  const sha = "0123456789abcdef".repeat(4);
  it("say which plan, by title and hash, and whether it is a new version", () => {
    expect(planRegisteredWords("Accuracy", sha, false)).toBe(
      "registered the plan ‘Accuracy’ (SHA-256 0123456789ab…)",
    );
    expect(planRegisteredWords("Accuracy", sha, true)).toBe(
      "registered the plan ‘Accuracy’ (SHA-256 0123456789ab…), a new version",
    );
    expect(planCountersignedWords(sha)).toBe("countersigned the plan (SHA-256 0123456789ab…)");
  });
});

describe("plannedCurveChoice", () => {
  const curve = modelSpecSchema.parse({
    kind: "specification-curve",
    regions: ["amygdala_l"],
    predictor: "anxiety",
    specifications: {
      estimators: ["ols", "huber"],
      covariateSets: [[], ["age", "mean_fd"]],
      exclusionRules: [rule(">", 0.5), rule("<", 0.6, "accuracy")],
    },
  });
  const planned = (spec: Record<string, unknown>, rules: ExclusionRule[] = [rule(">", 0.5)]) =>
    planSchema.parse({
      title: "Anxiety and amygdala",
      models: [
        {
          name: "trait",
          spec: { kind: "association", ...spec },
          regionSelection: "anatomical-or-prior",
          direction: "positive",
        },
      ],
      correction: "none",
      exclusionRules: rules,
      missing: "keep",
    });

  it("names the planned model's estimator, covariate set and the rules the plan shares", () => {
    const plan = planned({
      predictor: "anxiety",
      estimator: "huber",
      covariates: ["mean_fd", "age"],
    });
    // The covariate set comes back in the curve's order; only the plan's rule (mean_fd > 0.5) is on.
    expect(plannedCurveChoice(plan, curve)).toEqual({
      model: "trait",
      estimator: "huber",
      covariates: ["age", "mean_fd"],
      exclusions: [0],
    });
    expect(
      plannedCurveChoice(
        planned({ predictor: "anxiety" }, [rule("<", 0.6, "accuracy"), rule(">", 0.5)]),
        curve,
      )?.exclusions,
    ).toEqual([0, 1]);
    expect(plannedCurveChoice(planned({ predictor: "anxiety" }, []), curve)?.exclusions).toEqual(
      [],
    );
  });

  it("is null when no planned model asks the curve's question or the curve lacks its choices", () => {
    expect(plannedCurveChoice(planned({ predictor: "depression" }), curve)).toBeNull();
    expect(
      plannedCurveChoice(planned({ predictor: "anxiety", regions: ["insula_r"] }), curve),
    ).toBeNull();
    expect(
      plannedCurveChoice(planned({ predictor: "anxiety", estimator: "bisquare" }), curve),
    ).toBeNull();
    expect(
      plannedCurveChoice(planned({ predictor: "anxiety", covariates: ["age"] }), curve),
    ).toBeNull();
  });
});
