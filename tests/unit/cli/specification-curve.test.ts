/**
 * The recipe command running a specification curve on invented files
 * (no API): the curve's specifications, their count, the ordinary
 * association fit each least-squares specification equals, and a clear
 * error for a rule on an unknown column.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type CommandRun, runRecipeCommand } from "../../support/recipe-command";

const dir = mkdtempSync(join(tmpdir(), "covarion-curve-"));

function file(name: string, content: string): string {
  const path = join(dir, name);
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, content);
  return path;
}

// Invented: 12 participants, the contrast rising with accuracy; mean_fd blank for sub-05.
const ids = Array.from({ length: 12 }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
const accuracy = [0.61, 0.72, 0.55, 0.9, 0.83, 0.67, 0.78, 0.7, 0.95, 0.58, 0.88, 0.74];
const age = [25, 31, 28, 40, 35, 22, 30, 27, 33, 45, 29, 38];
const fd = [
  "0.12",
  "0.61",
  "0.20",
  "0.33",
  "",
  "0.70",
  "0.15",
  "0.28",
  "0.41",
  "0.09",
  "0.22",
  "0.55",
];
const insula = [0.1, 0.42, 0.05, 0.8, 0.6, 0.3, 0.51, 0.33, 0.9, 0.02, 0.71, 0.44];
const BRAIN = `participant_id,L_insula\n${ids.map((id, i) => `${id},${insula[i]}`).join("\n")}\n`;
const SHEET = `participant_id\tage\taccuracy\tmean_fd\n${ids
  .map((id, i) => `${id}\t${age[i]}\t${accuracy[i]}\t${fd[i]}`)
  .join("\n")}\n`;
file("data/brain.csv", BRAIN);
file("data/participants.tsv", SHEET);

const base = {
  brainTable: "data/brain.csv",
  participantSheet: "data/participants.tsv",
  regions: ["L_insula"],
};

const curve = {
  ...base,
  kind: "specification-curve",
  predictor: "accuracy",
  specifications: {
    estimators: ["ols", "rank"],
    covariateSets: [[], ["age"]],
    exclusionRules: [{ column: "mean_fd", op: ">", value: 0.5, reason: "motion" }],
  },
};

const runs = new Map<string, CommandRun>();

beforeAll(async () => {
  const jobs: [string, unknown][] = [
    ["curve", curve],
    // The ordinary fit of one least-squares specification: age, mean_fd > 0.5 set aside (sub-02, sub-06, sub-12; sub-05 blank, kept).
    [
      "ordinary",
      {
        ...base,
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        setAside: ["sub-02", "sub-06", "sub-12"].map((participant) => ({
          participant,
          reason: "motion",
        })),
      },
    ],
    // The same specification as a model with the rule as part of it (exclusionRules), as "Fit this specification" makes it.
    [
      "ruled",
      {
        ...base,
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        exclusionRules: [{ column: "mean_fd", op: ">", value: 0.5, reason: "motion" }],
      },
    ],
    [
      "badModelRule",
      {
        ...base,
        kind: "association",
        predictor: "accuracy",
        exclusionRules: [{ column: "mean_fd", op: ">", value: "high", reason: "motion" }],
      },
    ],
    [
      "badRule",
      {
        ...curve,
        specifications: {
          exclusionRules: [{ column: "motion", op: ">", value: 0.5, reason: "motion" }],
        },
      },
    ],
  ];
  await Promise.all(
    jobs.map(async ([name, body]) => {
      const path = file(`${name}.json`, JSON.stringify(body));
      runs.set(name, await runRecipeCommand([path]));
    }),
  );
}, 120_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("recipe command: specification curve", () => {
  it("fits every combination: 2 estimators × 2 covariate sets × 2 rule subsets", () => {
    const r = runs.get("curve") as CommandRun;
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    // Exact enumeration: 2 × 2 × 2 = 8.
    expect(out.specifications).toHaveLength(8);
    expect(out.summary.count).toBe(8);
    expect(out.kind).toBe("specification-curve");
  });

  it("gives the least-squares specification the numbers of the ordinary association fit (the engine's own ordinary fit)", () => {
    const out = JSON.parse((runs.get("curve") as CommandRun).stdout);
    const ordinaryRun = runs.get("ordinary") as CommandRun;
    expect(ordinaryRun.code, ordinaryRun.stderr).toBe(0);
    const ordinary = JSON.parse(ordinaryRun.stdout).regions[0];
    const spec = out.specifications.find(
      (s: { estimator: string; covariates: string[]; exclusions: number[] }) =>
        s.estimator === "ols" && s.covariates.join() === "age" && s.exclusions.join() === "0",
    );
    // 12 participants less the 3 with mean_fd above 0.5 (the blank one is kept).
    expect(spec.n).toBe(9);
    expect(ordinary.n).toBe(9);
    for (const key of ["estimate", "ciLow", "ciHigh", "p"] as const)
      expect(Math.abs(spec[key] - ordinary[key])).toBeLessThanOrEqual(
        1e-9 * Math.abs(ordinary[key]),
      );
  });

  it("fits a model's own exclusion rules to the specification's numbers, lists whom they left out and keeps them in the recipe", () => {
    const out = JSON.parse((runs.get("curve") as CommandRun).stdout);
    const run = runs.get("ruled") as CommandRun;
    expect(run.code, run.stderr).toBe(0);
    const ruled = JSON.parse(run.stdout);
    const spec = out.specifications.find(
      (s: { estimator: string; covariates: string[]; exclusions: number[] }) =>
        s.estimator === "ols" && s.covariates.join() === "age" && s.exclusions.join() === "0",
    );
    const region = ruled.regions[0];
    expect(region.n).toBe(9);
    for (const key of ["estimate", "ciLow", "ciHigh", "p"] as const)
      expect(Math.abs(spec[key] - region[key])).toBeLessThanOrEqual(1e-9 * Math.abs(region[key]));
    // By hand from the sheet: mean_fd above 0.5 for sub-02 (0.61), sub-06 (0.70), sub-12 (0.55); sub-05 blank, kept.
    expect(ruled.ruleExclusions).toEqual([
      {
        rule: { column: "mean_fd", op: ">", value: 0.5, reason: "motion" },
        participants: ["sub-02", "sub-06", "sub-12"],
      },
    ]);
    // The recipe it prints carries the rule, so re-running it gives the same numbers.
    expect(ruled.recipe.exclusionRules).toEqual([
      { column: "mean_fd", op: ">", value: 0.5, reason: "motion" },
    ]);
  });

  it("names the model's rule when its value does not fit a numeric column", () => {
    const r = runs.get("badModelRule") as CommandRun;
    expect(r.code).toBe(2);
    expect(r.stderr).toContain("exclusionRules");
    expect(r.stderr).toContain("'high' is not a number");
  });

  it("names the rule and the column when a rule reads a column the sheet lacks", () => {
    const r = runs.get("badRule") as CommandRun;
    expect(r.code).not.toBe(0);
    expect(r.stderr).toContain("motion");
    expect(r.stderr).toContain("specifications");
  });
});
