/**
 * A specification curve through the app: the model is judged by the same
 * rules as the recipe command (errors inside `specifications` named down to
 * the list entry), runs as a fit job and hands back every specification in
 * estimate order with its summary; when the study's plan names one of the
 * specifications, the fit's plan part says which. On a study holding the
 * seeded demo tables (invented data).
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { memberships } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import type { PlanInput } from "../../contract/plans";
import type { CurveResultFields } from "../../contract/specification-curve";
import { createTestApp, demoCookie, type TestApp, userIdOf, waitForFitStatus } from "./helpers";

let t: TestApp;
let studyId: string;
let owner: string;
let analyst: string;

const as = (cookie: () => string) => ({
  get: (path: string) => request(t.url).get(path).set("Cookie", cookie()),
  post: (path: string, body: object) =>
    request(t.url).post(path).set("Cookie", cookie()).send(body),
});

const motion = { column: "mean_fd", op: ">", value: 0.5, reason: "motion" } as const;
const curveSpec = {
  kind: "specification-curve",
  predictor: "accuracy",
  regions: ["L_dlpfc"],
  specifications: {
    estimators: ["ols", "huber"],
    covariateSets: [[], ["age"]],
    exclusionRules: [motion],
  },
};

beforeAll(async () => {
  t = await createTestApp();
  owner = await demoCookie(t, "owner@demo.covarion.test");
  analyst = await demoCookie(t, "analyst@demo.covarion.test");
  const study = await as(() => owner)
    .post("/api/studies", { name: "Curve under a plan" })
    .expect(201);
  studyId = study.body.id;
  const analystId = await userIdOf(t.db, "analyst@demo.covarion.test");
  await t.db.insert(memberships).values({ studyId, userId: analystId, role: "analyst" });
  await seedDemoDatasets(t.db, { studyId, uploadedBy: analystId, now: new Date() });
});

afterAll(async () => {
  await t?.close();
});

describe("specification-curve fits", () => {
  it("names an unknown column inside the alternatives down to its entry", async () => {
    const res = await as(() => analyst)
      .post(`/api/studies/${studyId}/models`, {
        name: "Curve with a typo",
        regionSelection: "anatomical-or-prior",
        spec: {
          ...curveSpec,
          specifications: { ...curveSpec.specifications, covariateSets: [[], ["age", "agee"]] },
        },
      })
      .expect(400);
    const fields = (res.body.error.details as { field: string }[]).map((d) => d.field);
    expect(fields).toContain("body.spec.specifications.covariateSets.1.1");
  });

  it("fits every combination in estimate order and marks the plan's specification", async () => {
    const plan: PlanInput = {
      title: "Accuracy and left prefrontal activity",
      models: [
        {
          name: "accuracy, robust",
          spec: {
            kind: "association",
            predictor: "accuracy",
            covariates: ["age"],
            estimator: "huber",
            regions: ["L_dlpfc"],
          },
          regionSelection: "anatomical-or-prior",
          direction: "positive",
        },
      ],
      correction: "none",
      exclusionRules: [motion],
      missing: "keep",
    };
    await as(() => analyst)
      .post(`/api/studies/${studyId}/plans`, { plan })
      .expect(201);
    const model = await as(() => analyst)
      .post(`/api/studies/${studyId}/models`, {
        name: "Accuracy under every reasonable choice",
        regionSelection: "anatomical-or-prior",
        spec: { ...curveSpec, inference: "permutation", resamples: 19, seed: 5 },
      })
      .expect(201);
    const started = await as(() => analyst)
      .post(`/api/studies/${studyId}/fits`, { modelId: model.body.id })
      .expect(202);
    const fit = (await waitForFitStatus(t, analyst, started.body.id)) as {
      status: string;
      error: unknown;
      result: CurveResultFields;
      plan: { curveChoice?: unknown; asPlanned: boolean } | null;
    };
    expect(fit.error).toBeNull();
    expect(fit.status).toBe("done");
    const { specifications, summary, jointTest } = fit.result;
    // 2 estimators × 2 covariate sets × the rule on or off.
    expect(specifications).toHaveLength(8);
    expect(summary.count).toBe(8);
    const estimates = specifications.map((s) => s.estimate);
    expect(estimates).toEqual([...estimates].sort((a, b) => a - b));
    // p = (b + 1)/(m + 1) with m = 19: multiples of 1/20.
    expect(jointTest?.resamples).toBe(19);
    expect(Math.round((jointTest?.pMedian ?? 0) * 20)).toBeCloseTo(
      (jointTest?.pMedian ?? 0) * 20,
      9,
    );
    // The plan's model is one of the specifications: huber, age, motion rule on.
    expect(fit.plan?.curveChoice).toEqual({
      model: "accuracy, robust",
      estimator: "huber",
      covariates: ["age"],
      exclusions: [0],
    });
    // A curve is not a model the plan names, so it deviates.
    expect(fit.plan?.asPlanned).toBe(false);
  });
});
