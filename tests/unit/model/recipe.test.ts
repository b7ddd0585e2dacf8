/**
 * The recipe contract (contract/recipe.ts): the one schema the app, the fit
 * job and the recipe command share, the key order of an exported recipe,
 * and the one way to read a recipe's model fields.
 */
import { describe, expect, it } from "vitest";
import {
  RecipeSpecError,
  buildRecipe,
  orderedRecipe,
  recipeKeyOrder,
  recipeSchema,
  specOfRecipe,
} from "../../../contract/recipe";
import { modelSpecSchema } from "../../../contract/spec";

const hash = "a".repeat(64);

describe("recipe contract", () => {
  it("builds a recipe the schema accepts, with the session and keys in the exported order", () => {
    const recipe = buildRecipe({
      brainTable: { file: "brain.csv", sha256: hash },
      participantSheet: { file: "participants.tsv", sha256: "b".repeat(64) },
      idColumn: "participant_id",
      seSuffix: "_se",
      session: "2",
      mappings: [{ brainId: "7", sheetId: "sub-07" }],
      spec: modelSpecSchema.parse({ kind: "association", predictor: "accuracy" }),
      softwareVersion: "1.2.3",
    });
    expect(recipeSchema.parse(recipe)).toEqual(recipe);
    expect(recipe.session).toBe("2");
    expect(recipe.inputs).toEqual({
      brainTable: { file: "brain.csv", sha256: hash },
      participantSheet: { file: "participants.tsv", sha256: "b".repeat(64) },
    });
    const keys = Object.keys(recipe);
    const order = keys.map((k) => recipeKeyOrder.indexOf(k as never));
    expect(order.every((i) => i >= 0)).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    expect(keys.slice(0, 5)).toEqual([
      "brainTable",
      "participantSheet",
      "idColumn",
      "seSuffix",
      "session",
    ]);
    expect(keys.at(-1)).toBe("inputs");
  });

  it("leaves out the session and the sheet when there are none", () => {
    const recipe = buildRecipe({
      brainTable: { file: "brain.csv", sha256: hash },
      participantSheet: null,
      idColumn: "id",
      seSuffix: "_se",
      session: null,
      mappings: [],
      spec: modelSpecSchema.parse({ kind: "one-sample" }),
      softwareVersion: "1.2.3",
    });
    expect("session" in recipe).toBe(false);
    expect("participantSheet" in recipe).toBe(false);
    expect(recipe.inputs).toEqual({ brainTable: { file: "brain.csv", sha256: hash } });
  });

  it("orders a stored recipe's keys and keeps unknown keys after them", () => {
    const ordered = orderedRecipe({ extra: 1, kind: "one-sample", brainTable: "b.csv" });
    expect(Object.keys(ordered)).toEqual(["brainTable", "kind", "extra"]);
  });

  it("reads the model fields with defaults, and names the field at fault", () => {
    const spec = specOfRecipe({ brainTable: "b.csv", kind: "one-sample", seed: 5 });
    expect(spec).toMatchObject({ kind: "one-sample", seed: 5, estimator: "ols", setAside: [] });
    expect(() => specOfRecipe({ kind: "one-sample", estimator: "median" })).toThrow(
      RecipeSpecError,
    );
    expect(() => specOfRecipe({ kind: "one-sample", estimator: "median" })).toThrow(
      /^recipe field 'estimator': /,
    );
  });
});
