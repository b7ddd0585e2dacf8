/**
 * A prediction fit through the app: the model is judged by the same rules
 * as the recipe command, runs as a fit job, and hands back its `prediction`
 * block, its N, a recipe the recipe command re-runs to the same numbers,
 * and a methods paragraph. On the seeded demo study (invented data).
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { recipeSchema } from "../../contract/recipe";
import {
  createTestApp,
  demoCookie,
  demoStudyWithData,
  type TestApp,
  waitForFitStatus,
} from "./helpers";

let t: TestApp;
let studyId: string;
let analyst: string;

const as = () => ({
  get: (path: string) => request(t.url).get(path).set("Cookie", analyst),
  post: (path: string, body: object) => request(t.url).post(path).set("Cookie", analyst).send(body),
});

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  analyst = await demoCookie(t, "analyst@demo.covarion.test");
});

afterAll(async () => {
  await t?.close();
});

describe("prediction fits", () => {
  it("refuses what does not apply to a prediction, naming the field", async () => {
    const res = await as()
      .post(`/api/studies/${studyId}/models`, {
        name: "Prediction with a correction",
        regionSelection: "independent-data",
        spec: { kind: "prediction", predictor: "accuracy", correction: "holm" },
      })
      .expect(400);
    expect(res.body.error.details[0].field).toBe("body.spec.correction");
    const categorical = await as()
      .post(`/api/studies/${studyId}/models`, {
        name: "Prediction of a category",
        regionSelection: "independent-data",
        spec: { kind: "prediction", predictor: "group" },
      })
      .expect(400);
    expect(categorical.body.error.details[0]).toMatchObject({ field: "body.spec.predictor" });
    expect(categorical.body.error.details[0].message).toMatch(/numeric trait/);
  });

  it("runs as a fit job and returns its prediction block, N, recipe and methods", async () => {
    const model = await as()
      .post(`/api/studies/${studyId}/models`, {
        name: "Accuracy predicted from every region",
        regionSelection: "anatomical-or-prior",
        spec: {
          kind: "prediction",
          predictor: "accuracy",
          covariates: ["age"],
          folds: 5,
          repeats: 2,
          resamples: 19,
          seed: 4,
        },
      })
      .expect(201);
    const started = await as()
      .post(`/api/studies/${studyId}/fits`, { modelId: model.body.id })
      .expect(202);
    const fit = (await waitForFitStatus(t, analyst, started.body.id)) as {
      status: string;
      error: unknown;
      n: { min: number; max: number } | null;
      recipe: Record<string, unknown>;
      result: { kind: string; regions: unknown[]; n: number; prediction: Record<string, unknown> };
    };
    expect(fit.error).toBeNull();
    expect(fit.status).toBe("done");
    expect(fit.result.kind).toBe("prediction");
    expect(fit.result.regions).toEqual([]);
    const block = fit.result.prediction as {
      folds: number;
      repeats: number;
      permutation: { resamples: number; pR: number };
      participants: unknown[];
      regions: unknown[];
      learningCurve: unknown[];
    };
    expect(block).toMatchObject({ folds: 5, repeats: 2, permutation: { resamples: 19 } });
    // p = (b + 1)/(m + 1) with m = 19: a multiple of 1/20.
    expect(Math.round(block.permutation.pR * 20)).toBeCloseTo(block.permutation.pR * 20, 9);
    expect(block.participants).toHaveLength(fit.result.n);
    expect(fit.n).toEqual({ min: fit.result.n, max: fit.result.n });
    expect(block.learningCurve).toHaveLength(5);
    // The recipe names every choice, so the recipe command re-runs it exactly.
    const recipe = recipeSchema.parse(fit.recipe);
    expect(recipe).toMatchObject({
      kind: "prediction",
      predictor: "accuracy",
      folds: 5,
      repeats: 2,
      inference: "permutation",
      resamples: 19,
      seed: 4,
    });
    const methods = await as().get(`/api/fits/${started.body.id}/methods`).expect(200);
    expect(methods.body.text).toMatch(/ridge regression/);
    expect(methods.body.text).toMatch(/5-fold cross-validation repeated 2 times/);
    expect(methods.body.text).toMatch(/19 random permutations/);
  });
});
