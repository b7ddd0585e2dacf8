/**
 * The fit rules (contract/fit-rules.ts): one module for the engine, the
 * model service and the form. The engine refuses exactly what the checks
 * report, with the first problem as its message (product rules, no
 * external source).
 */
import { describe, expect, it } from "vitest";
import { dataPreconditions, dataProblems, minimumParticipants } from "../../../contract/fit-rules";
import { type FitData, type ModelSpecInput, modelSpecSchema } from "../../../contract/spec";
import { fitPreconditionProblems, runFit } from "../../../server/stats/run-fit";
import { permutationData, withEmptyCells } from "../stats/permutation-data";

const spec = (input: ModelSpecInput) => modelSpecSchema.parse(input);

describe("dataProblems: rules against the shape of the data", () => {
  const shape = {
    regions: ["left insula", "precuneus"],
    sessions: 0,
    hasStandardErrors: false,
    numericColumns: ["age", "accuracy"],
    categoricalColumns: ["group", "sex", "site"],
    levelsOf: (c: string) => ({ group: ["control", "patient"], site: ["a", "b", "c"] })[c],
    brainTable: "the brain table demo.csv (version 2)",
  };
  it("accepts a model the data can answer", () => {
    expect(
      dataProblems(spec({ kind: "two-group", group: "group", covariates: ["age", "sex"] }), shape),
    ).toEqual([]);
    expect(
      dataProblems(
        spec({ kind: "association", predictor: "accuracy", regions: ["precuneus"] }),
        shape,
      ),
    ).toEqual([]);
  });
  it("names the field and the table of each problem", () => {
    expect(
      dataProblems(spec({ kind: "one-sample", regions: ["precuneus", "cerebellum"] }), shape),
    ).toEqual([
      {
        field: "regions.1",
        message: "no region 'cerebellum' in the brain table demo.csv (version 2)",
      },
    ]);
    expect(dataProblems(spec({ kind: "association", predictor: "sex" }), shape)).toEqual([
      {
        field: "predictor",
        message:
          "column 'sex' of the participant sheet is a category; an association needs a numeric trait",
      },
    ]);
    expect(dataProblems(spec({ kind: "one-sample", covariates: ["age", "site"] }), shape)).toEqual([
      {
        field: "covariates.1",
        message:
          "column 'site' of the participant sheet is a category; a one-sample model takes numeric covariates only (they are mean-centred)",
      },
    ]);
    expect(dataProblems(spec({ kind: "two-group", group: "site" }), shape)).toEqual([
      {
        field: "group",
        message: "column 'site' has 3 levels (a, b, c); name the two to compare in levels",
      },
    ]);
    expect(
      dataProblems(
        spec({ kind: "two-group", group: "group", levels: ["patient", "sibling"] }),
        shape,
      ),
    ).toEqual([{ field: "levels", message: "level 'sibling' is not present in column 'group'" }]);
    expect(dataProblems(spec({ kind: "reliability" }), shape)).toEqual([
      {
        field: "kind",
        message:
          "reliability needs a brain table with at least two sessions; the brain table demo.csv (version 2) has no session column",
      },
    ]);
    expect(dataProblems(spec({ kind: "one-sample", weights: "first-level-se" }), shape)).toEqual([
      {
        field: "weights",
        message:
          "'first-level-se' requires standard errors in the brain table demo.csv (version 2)",
      },
    ]);
  });
  it("does not judge what it does not know (the form before the participant sheet or the levels are read)", () => {
    expect(
      dataProblems(spec({ kind: "association", predictor: "shoe_size" }), {
        regions: shape.regions,
      }),
    ).toEqual([]);
    expect(
      dataProblems(spec({ kind: "two-group", group: "group", levels: ["x", "y"] }), {
        numericColumns: [],
        categoricalColumns: ["group"],
      }),
    ).toEqual([]);
  });
});

describe("dataPreconditions: what only the values decide, in plain words", () => {
  it("names the minimum per region, the columns that must be complete and the group rule", () => {
    const text = dataPreconditions(
      spec({
        kind: "association",
        predictor: "accuracy",
        covariates: ["age", "sex"],
        estimator: "skipped",
      }),
    );
    expect(text.beforeRun[0]).toBe(
      "Every region needs at least 5 participants with a contrast value and a value for accuracy, age and sex; each region keeps its own participants.",
    );
    expect(minimumParticipants("association", "skipped")).toBe(5);
    const groups = dataPreconditions(spec({ kind: "two-group", group: "group" }));
    expect(groups.beforeRun).toContain(
      "The column group must have exactly two levels among the participants, or name the two to compare.",
    );
    expect(groups.beforeRun).toContain(
      "Each of the two groups needs at least 2 participants in every region.",
    );
    expect(groups.atRun[0]).toMatch(/combination of the others/);
  });
});

describe("fitPreconditionProblems judges what runFit refuses, and runFit refuses with the first problem", () => {
  const data = permutationData(12, 41);
  // Region 2 keeps only 2 participants: too few for an association (3 needed).
  const sparse: FitData = withEmptyCells(
    data,
    Array.from({ length: 10 }, (_, i) => [2, i] as const),
  );
  const cases: [string, ModelSpecInput, FitData][] = [
    ["a consistent model", { kind: "association", predictor: "age", covariates: ["motion"] }, data],
    ["an unknown region", { kind: "one-sample", regions: ["cerebellum"] }, data],
    ["a category as the trait", { kind: "association", predictor: "sex" }, data],
    [
      "an absent level",
      { kind: "two-group", group: "group", levels: ["patient", "sibling"] },
      data,
    ],
    ["max-T without permutation", { kind: "one-sample", correction: "maxt" }, data],
    ["a region with too few participants", { kind: "association", predictor: "age" }, sparse],
    [
      "a group with too few participants in a region",
      { kind: "two-group", group: "group", regions: ["precuneus"] },
      withEmptyCells(data, [
        [2, 0],
        [2, 3],
        [2, 6],
      ]),
    ],
    [
      "max-T with empty cells (allowed)",
      { kind: "one-sample", inference: "permutation", resamples: 99, correction: "maxt" },
      sparse,
    ],
  ];
  it.each(cases)("%s", (_name, input, d) => {
    const problems = fitPreconditionProblems(spec(input), d);
    let thrown: string | null = null;
    try {
      runFit(spec(input), d);
    } catch (e) {
      thrown = (e as Error).message;
    }
    if (problems.length === 0) {
      expect(thrown).toBeNull();
    } else {
      const first = problems[0];
      expect(thrown).toBe(
        first.field === "regions" && first.message.startsWith("region '")
          ? first.message
          : `${first.field.split(".")[0]}: ${first.message}`,
      );
    }
  });
  it("reports every region that falls short, under the regions field", () => {
    const problems = fitPreconditionProblems(
      spec({ kind: "association", predictor: "age" }),
      sparse,
    );
    expect(problems).toEqual([
      {
        field: "regions",
        message: "region 'precuneus': too few participants (n = 2; at least 3 needed)",
      },
    ]);
  });
  it("leaves out what needs the participant sheet when there is none", () => {
    expect(
      fitPreconditionProblems(
        spec({ kind: "association", predictor: "age" }),
        { ...data, numericColumns: {}, categoricalColumns: {} },
        { columns: false },
      ),
    ).toEqual([]);
  });
});
