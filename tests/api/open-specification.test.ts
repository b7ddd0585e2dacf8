/**
 * Opening one specification of a specification curve as an ordinary fit,
 * through the ordinary model and fit routes, as the curve screen does
 * (hooks/use-open-specification.ts): the specification's model
 * (`specificationModel`, the switched-on rules as its `exclusionRules`) fits
 * to the curve row's numbers; its view names each rule and whom it left
 * out (ids only for those who may see participant rows); its recipe and
 * methods paragraph carry the rules; changing the rules makes the fit
 * stale. On a study holding the seeded demo tables (invented data).
 */
import { strFromU8, unzipSync } from "fflate";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { memberships } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { sameModelFields } from "../../contract/model-form";
import type { ModelSpec } from "../../contract/spec";
import { type CurveResultFields, specificationModel } from "../../contract/specification-curve";
import type { FitView } from "../../contract/views/fits";
import {
  binaryBody,
  createTestApp,
  demoCookie,
  type TestApp,
  userIdOf,
  waitForFitStatus,
} from "./helpers";

let t: TestApp;
let studyId: string;
let owner: string;
let analyst: string;
let viewer: string;

const as = (cookie: () => string) => ({
  get: (path: string) => request(t.url).get(path).set("Cookie", cookie()),
  post: (path: string, body: object) =>
    request(t.url).post(path).set("Cookie", cookie()).send(body),
  patch: (path: string, body: object) =>
    request(t.url).patch(path).set("Cookie", cookie()).send(body),
});

const motion = { column: "mean_fd", op: ">", value: 0.2, reason: "motion" } as const;
const slow = { column: "accuracy", op: "<", value: 0.7, reason: "task not done" } as const;
const curveSpec = {
  kind: "specification-curve",
  predictor: "accuracy",
  regions: ["L_dlpfc"],
  specifications: {
    estimators: ["ols", "huber"],
    covariateSets: [[], ["age"]],
    exclusionRules: [motion, slow],
  },
};

beforeAll(async () => {
  t = await createTestApp();
  owner = await demoCookie(t, "owner@demo.covarion.test");
  analyst = await demoCookie(t, "analyst@demo.covarion.test");
  viewer = await demoCookie(t, "viewer@demo.covarion.test");
  const study = await as(() => owner)
    .post("/api/studies", { name: "Opening specifications" })
    .expect(201);
  studyId = study.body.id;
  const analystId = await userIdOf(t.db, "analyst@demo.covarion.test");
  const viewerId = await userIdOf(t.db, "viewer@demo.covarion.test");
  await t.db.insert(memberships).values([
    { studyId, userId: analystId, role: "analyst" },
    { studyId, userId: viewerId, role: "viewer" },
  ]);
  await seedDemoDatasets(t.db, { studyId, uploadedBy: analystId, now: new Date() });
});

afterAll(async () => {
  await t?.close();
});

/** The report bundle's set-asides.csv of a fit, downloaded by `cookie`, as lines. */
async function setAsidesOf(cookie: () => string, fitId: string): Promise<string[]> {
  const res = await request(t.url)
    .get(`/api/fits/${fitId}/report.zip`)
    .set("Cookie", cookie())
    .buffer(true)
    .parse(binaryBody)
    .expect(200);
  const files = unzipSync(new Uint8Array(res.body as Buffer));
  return strFromU8(files["set-asides.csv"])
    .split("\r\n")
    .filter((l) => l !== "");
}

async function fitOf(modelId: string): Promise<FitView> {
  const started = await as(() => analyst)
    .post(`/api/studies/${studyId}/fits`, { modelId })
    .expect(202);
  return (await waitForFitStatus(t, analyst, started.body.id)) as unknown as FitView;
}

describe("a specification opened as an ordinary fit", () => {
  let curveFit: FitView;
  let curve: ModelSpec;

  beforeAll(async () => {
    const model = await as(() => analyst)
      .post(`/api/studies/${studyId}/models`, {
        name: "Accuracy, every choice",
        regionSelection: "anatomical-or-prior",
        spec: curveSpec,
      })
      .expect(201);
    curve = model.body.spec;
    curveFit = await fitOf(model.body.id);
    expect(curveFit.status).toBe("done");
  }, 120_000);

  it("refuses rules on a kind that does not take them, naming the field", async () => {
    const res = await as(() => analyst)
      .post(`/api/studies/${studyId}/models`, {
        name: "One sample with a rule",
        regionSelection: "anatomical-or-prior",
        spec: { kind: "one-sample", exclusionRules: [motion] },
      })
      .expect(400);
    expect((res.body.error.details as { field: string }[]).map((d) => d.field)).toContain(
      "body.spec.exclusionRules",
    );
  });

  it("has the numbers of the curve's row, and its view names each rule and whom it left out", async () => {
    const rows = (curveFit.result as unknown as CurveResultFields).specifications;
    // Every specification with both rules on and covariate age: one per estimator.
    for (const row of rows.filter((r) => r.exclusions.length === 2 && r.covariates.length === 1)) {
      const k = rows.indexOf(row) + 1;
      const spec = specificationModel(curve, {
        ...row,
        estimator: row.estimator as ModelSpec["estimator"],
      });
      expect(spec.exclusionRules).toEqual([motion, slow]);
      const model = await as(() => analyst)
        .post(`/api/studies/${studyId}/models`, {
          name: `Accuracy, every choice · specification ${k}`,
          regionSelection: "anatomical-or-prior",
          spec,
        })
        .expect(201);
      const fit = await fitOf(model.body.id);
      expect(fit.status, JSON.stringify(fit.error)).toBe("done");
      const region = fit.result?.regions[0];
      expect(region?.n).toBe(row.n);
      for (const key of ["estimate", "ciLow", "ciHigh", "p"] as const)
        expect(
          Math.abs((region?.[key] as number) - (row[key] as number)),
          `${row.estimator} ${key}`,
        ).toBeLessThanOrEqual(1e-9 * Math.abs(row[key] as number));
      // The rules beside the set-asides: each with its count and ids.
      expect(fit.ruleExclusions.map((r) => r.rule)).toEqual([motion, slow]);
      for (const r of fit.ruleExclusions) {
        expect(r.count).toBeGreaterThan(0);
        expect(r.participants).toHaveLength(r.count as number);
      }
      // The region detail lists them as left out, the rule as the reason.
      const detail = await as(() => analyst)
        .get(`/api/fits/${fit.id}/regions/L_dlpfc`)
        .expect(200);
      const reasons = (detail.body.setAside as { participant: string; reason: string }[])
        .filter((s) => s.reason.startsWith("rule: "))
        .map((s) => s.reason);
      expect(new Set(reasons)).toEqual(
        new Set(["rule: mean_fd > 0.2 (motion)", "rule: accuracy < 0.7 (task not done)"]),
      );
      expect(reasons).toHaveLength(fit.ruleExclusions.reduce((n, r) => n + (r.count as number), 0));
      // No ids in the shown result; the recipe carries the rules.
      expect(fit.result).not.toHaveProperty("ruleExclusions");
      expect(fit.recipe?.exclusionRules).toEqual([motion, slow]);
      // The model is recognised as the specification's, so the screen reuses it.
      expect(sameModelFields(model.body.spec, spec)).toBe(true);
      expect(sameModelFields(model.body.spec, { ...spec, exclusionRules: [motion] })).toBe(false);
    }
  }, 120_000);

  it("states the rules in the methods paragraph, withholds ids where participant rows are, and goes stale when the rules change", async () => {
    const models = (
      await as(() => analyst)
        .get(`/api/studies/${studyId}/models`)
        .expect(200)
    ).body as { id: string; name: string; spec: ModelSpec }[];
    const opened = models.find((m) => m.name.includes("· specification")) as (typeof models)[0];
    const fits = (
      await as(() => analyst)
        .get(`/api/studies/${studyId}/fits`)
        .expect(200)
    ).body as { id: string; model: { id: string } }[];
    const fitId = (fits.find((f) => f.model.id === opened.id) as { id: string }).id;
    const methods = await as(() => analyst)
      .get(`/api/fits/${fitId}/methods`)
      .expect(200);
    expect(JSON.stringify(methods.body)).toContain(
      "The model's exclusion rules, part of the model before it was fitted, left out every participant meeting one of them: mean_fd > 0.2 (motion), ",
    );
    // The report bundle lists each participant a rule left out, the rule as the reason.
    const view = (
      await as(() => analyst)
        .get(`/api/fits/${fitId}`)
        .expect(200)
    ).body as FitView;
    const ruled = view.ruleExclusions.flatMap((r) =>
      (r.participants ?? []).map(
        (p) =>
          `${p},all regions,rule: ${r.rule.column} ${r.rule.op} ${r.rule.value} (${r.rule.reason}),`,
      ),
    );
    const listed = await setAsidesOf(() => analyst, fitId);
    expect(listed[0]).toBe("participant,scope,reason,who,when");
    for (const line of ruled) expect(listed.filter((l) => l.startsWith(line))).toHaveLength(1);
    expect(listed).toHaveLength(1 + view.setAsides.length + ruled.length);
    await as(() => owner)
      .patch(`/api/studies/${studyId}`, { restricted: true })
      .expect(200);
    const seen = (
      await as(() => viewer)
        .get(`/api/fits/${fitId}`)
        .expect(200)
    ).body as FitView;
    expect(seen.participantsVisible).toBe(false);
    expect(seen.ruleExclusions[0].count).toBeGreaterThan(0);
    expect(seen.ruleExclusions[0].participants).toBeNull();
    // Without ids: one row per participant a rule left out, no participant column.
    const withheld = await setAsidesOf(() => viewer, fitId);
    expect(withheld[0]).toBe("scope,reason,who,when");
    expect(
      withheld.filter((l) => l.startsWith("all regions,rule: mean_fd > 0.2 (motion),")),
    ).toHaveLength(seen.ruleExclusions[0].count as number);
    await as(() => analyst)
      .patch(`/api/studies/${studyId}/models/${opened.id}`, {
        spec: { ...opened.spec, exclusionRules: [motion] },
      })
      .expect(200);
    const after = (
      await as(() => analyst)
        .get(`/api/fits/${fitId}`)
        .expect(200)
    ).body as FitView;
    expect(after.stale).toBe(true);
    expect(after.staleReasons.join(" ")).toContain("accuracy < 0.7 (task not done) removed");
  }, 120_000);
});
