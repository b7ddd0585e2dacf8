/**
 * The words of a fit's lineage: what a refit changed against the fit it
 * re-runs, and why a fit is stale (services/fit-changes.ts). Plain
 * comparisons of lists, no statistics: expected words are the product's
 * own (common practice, no source).
 */
import { describe, expect, it } from "vitest";
import { modelSpecSchema } from "../../../contract/spec";
import {
  type InputFacts,
  refitChanges,
  setAsideDiff,
  staleReasons,
  modelFieldChanges,
} from "../../../server/services/fit-changes";

const { setAside: _, ...model } = modelSpecSchema.parse({
  kind: "association",
  predictor: "accuracy",
  covariates: ["age"],
});

const base: InputFacts = {
  brain: { id: "b1", version: 1, fileName: "brain.csv" },
  sheet: { id: "s1", version: 1, fileName: "participants.tsv" },
  mappings: [],
  setAside: [{ participant: "sub-40", reason: "motion" }],
  model,
};

const visible = { participantsVisible: true };
const withheld = { participantsVisible: false };

describe("refitChanges", () => {
  it("is empty when nothing changed", () => {
    expect(refitChanges(base, { ...base }, visible)).toEqual([]);
    expect(staleReasons(base, { ...base }, visible)).toEqual([]);
  });

  it("names participants set aside and restored, with their scope", () => {
    const later: InputFacts = {
      ...base,
      setAside: [
        { participant: "sub-12", reason: "asleep" },
        { participant: "sub-07", region: "L_dlpfc", reason: "artefact" },
      ],
    };
    expect(refitChanges(base, later, visible)).toEqual([
      "Set aside: sub-12 (all regions), sub-07 (L_dlpfc)",
      "Restored: sub-40 (all regions)",
    ]);
  });

  it("counts participants instead of naming them when ids are withheld", () => {
    const later: InputFacts = {
      ...base,
      setAside: [
        { participant: "sub-12", reason: "asleep" },
        { participant: "sub-07", region: "L_dlpfc", reason: "artefact" },
      ],
    };
    const words = refitChanges(base, later, withheld);
    expect(words).toEqual(["Set aside: 2 participants", "Restored: 1 participant"]);
    expect(words.join(" ")).not.toMatch(/sub-/);
  });

  it("treats the same participant from another region as a different set-aside", () => {
    const later: InputFacts = {
      ...base,
      setAside: [{ participant: "sub-40", region: "R_insula", reason: "motion" }],
    };
    expect(setAsideDiff(base.setAside, later.setAside)).toEqual({
      added: [{ participant: "sub-40", region: "R_insula", reason: "motion" }],
      restored: [{ participant: "sub-40", reason: "motion" }],
    });
  });

  it("names a new brain table and participant sheet version with their files", () => {
    const later: InputFacts = {
      ...base,
      brain: { id: "b3", version: 3, fileName: "brain-v3.csv" },
      sheet: { id: "s2", version: 2, fileName: "sheet.tsv" },
    };
    expect(refitChanges(base, later, visible)).toEqual([
      "New brain table version 3 (brain-v3.csv)",
      "New participant sheet version 2 (sheet.tsv)",
    ]);
    expect(refitChanges({ ...base, sheet: null }, later, visible)).toContain(
      "Participant sheet version 2 (sheet.tsv) added",
    );
  });

  it("names changed id mappings, or counts them when ids are withheld", () => {
    const later: InputFacts = { ...base, mappings: [{ brainId: "sub-7", sheetId: "S007" }] };
    expect(refitChanges(base, later, visible)).toEqual(["Id mappings changed: sub-7 = S007 added"]);
    expect(refitChanges(later, base, withheld)).toEqual([
      "Id mappings changed: 0 added, 1 removed",
    ]);
  });

  it("names changed model fields", () => {
    const later: InputFacts = {
      ...base,
      model: { ...model, estimator: "huber", covariates: ["age", "motion"] },
    };
    expect(refitChanges(base, later, visible)).toEqual([
      "Model changed: covariates: motion added; estimator ols → huber",
    ]);
  });

  it("lists at most five names, then how many more", () => {
    const many = Array.from({ length: 8 }, (_, i) => ({
      participant: `sub-${i + 1}`,
      reason: "motion",
    }));
    expect(refitChanges({ ...base, setAside: [] }, { ...base, setAside: many }, visible)).toEqual([
      "Set aside: sub-1 (all regions), sub-2 (all regions), sub-3 (all regions), sub-4 (all regions), sub-5 (all regions) and 3 more",
    ]);
  });
});

describe("staleReasons", () => {
  it("says a newer brain table was uploaded", () => {
    expect(
      staleReasons(
        base,
        { ...base, brain: { id: "b4", version: 4, fileName: "brain-v4.csv" } },
        visible,
      ),
    ).toEqual(["A newer brain table (version 4, brain-v4.csv) was uploaded"]);
  });

  it("says which set-asides changed since the fit", () => {
    const now: InputFacts = { ...base, setAside: [{ participant: "sub-12", reason: "asleep" }] };
    expect(staleReasons(base, now, visible)).toEqual([
      "Set-asides changed since this fit: sub-12 (all regions) added, sub-40 (all regions) restored",
    ]);
    expect(staleReasons(base, now, withheld)).toEqual([
      "Set-asides changed since this fit: 1 added, 1 restored",
    ]);
  });

  it("ignores a changed reason for the same participant and region (the numbers would not change)", () => {
    expect(
      staleReasons(
        base,
        { ...base, setAside: [{ participant: "sub-40", reason: "motion, re-checked" }] },
        visible,
      ),
    ).toEqual([]);
  });

  it("says the model changed, and says nothing of a model it cannot read", () => {
    expect(
      staleReasons(base, { ...base, model: { ...model, correction: "holm" } }, visible),
    ).toEqual(["The model was changed since this fit: correction none → holm"]);
    expect(staleReasons(base, { ...base, model: null }, visible)).toEqual([]);
  });

  it("says a participant sheet was uploaded where the fit had none", () => {
    expect(staleReasons({ ...base, sheet: null }, base, visible)).toEqual([
      "A participant sheet (version 1, participants.tsv) was uploaded",
    ]);
  });
});

describe("modelFieldChanges", () => {
  it("does not count the recorded stream scheme as a change of the model", () => {
    const model = modelSpecSchema.parse({ kind: "one-sample", inference: "permutation" });
    const fitted = { ...model, rearrangementStreams: "blocks-v1" as const };
    expect(modelFieldChanges(fitted, model)).toEqual([]);
    expect(modelFieldChanges(fitted, { ...model, resamples: 500 })).toEqual([
      "rearrangements 10000 → 500",
    ]);
  });

  it("treats a model's exclusion rules as part of the model, in their words", () => {
    const motion = { column: "mean_fd", op: ">" as const, value: 0.5, reason: "motion" };
    const task = { column: "accuracy", op: "<" as const, value: 0.6, reason: "task not done" };
    const one = { ...model, exclusionRules: [motion] };
    expect(modelFieldChanges(one, { ...one, exclusionRules: [{ ...motion }] })).toEqual([]);
    expect(modelFieldChanges(model, one)).toEqual([
      "exclusion rules none → mean_fd > 0.5 (motion)",
    ]);
    expect(modelFieldChanges(one, { ...model, exclusionRules: [motion, task] })).toEqual([
      "exclusion rules: accuracy < 0.6 (task not done) added",
    ]);
  });
});
