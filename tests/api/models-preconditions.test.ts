/**
 * A model that is sure to fail when run is never saved: POST and PATCH of a
 * model judge it against the study's current data with the fit's own rules
 * (contract/fit-rules.ts through the engine's fitPreconditionProblems).
 * And max-T fits on the demo study, whose brain table has empty cells,
 * finish (sign flips and Freedman–Lane).
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
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

const post = (body: unknown) =>
  request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", analyst)
    .send(body as object);

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  analyst = await demoCookie(t, "analyst@demo.covarion.test");
});
afterAll(async () => {
  await t?.close();
});

describe("models are judged against the study's current data before they are saved", () => {
  it("refuses a level the grouping column does not have, naming the field", async () => {
    const res = await post({
      name: "Absent level",
      regionSelection: "independent-data",
      spec: { kind: "two-group", group: "group", levels: ["patient", "nobody"] },
    }).expect(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.details).toEqual([
      { field: "body.spec.levels", message: "level 'nobody' is not present in column 'group'" },
    ]);
  });

  it("refuses a grouping column with more than two levels when the two to compare are not named", async () => {
    const res = await post({
      name: "By age",
      regionSelection: "independent-data",
      spec: { kind: "two-group", group: "age" },
    }).expect(400);
    expect(res.body.error.details).toHaveLength(1);
    expect(res.body.error.details[0]).toMatchObject({
      field: "body.spec.group",
      message: expect.stringMatching(
        /^column 'age' has \d+ levels \(.*\); name the two to compare in levels$/,
      ),
    });
  });

  it("refuses a category as a one-sample covariate and names the participant sheet", async () => {
    const res = await post({
      name: "Sex-adjusted mean",
      regionSelection: "independent-data",
      spec: { kind: "one-sample", covariates: ["sex"] },
    }).expect(400);
    expect(res.body.error.details).toEqual([
      {
        field: "body.spec.covariates.0",
        message: expect.stringMatching(
          /^column 'sex' of the participant sheet .+ \(version \d+\) is a category; a one-sample model takes numeric covariates only/,
        ),
      },
    ]);
  });

  it("refuses a change that would make a saved model fail, and keeps the model as it was", async () => {
    const created = await post({
      name: "Two groups",
      regionSelection: "independent-data",
      spec: { kind: "two-group", group: "group", levels: ["patient", "control"] },
    }).expect(201);
    const id = created.body.id as string;
    const res = await request(t.url)
      .patch(`/api/studies/${studyId}/models/${id}`)
      .set("Cookie", analyst)
      .send({ spec: { kind: "two-group", group: "group", levels: ["patient", "sibling"] } })
      .expect(400);
    expect(res.body.error.details).toEqual([
      { field: "body.spec.levels", message: "level 'sibling' is not present in column 'group'" },
    ]);
    const kept = await request(t.url)
      .get(`/api/studies/${studyId}/models/${id}`)
      .set("Cookie", analyst)
      .expect(200);
    expect(kept.body.spec.levels).toEqual(["patient", "control"]);
  });
});

describe("max-T fits on the demo study (its brain table has empty cells) finish", () => {
  const cases = [
    {
      name: "Effect across the group, max-T",
      spec: {
        kind: "one-sample",
        inference: "permutation",
        resamples: 500,
        correction: "maxt",
        seed: 3,
      },
      scheme: "sign flipping",
    },
    {
      name: "Accuracy with age and motion, max-T",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age", "mean_fd"],
        inference: "permutation",
        resamples: 500,
        correction: "maxt",
        seed: 3,
      },
      scheme: "Freedman–Lane",
    },
  ];
  it.each(cases)("$name", async ({ name, spec, scheme }) => {
    const model = await post({ name, regionSelection: "anatomical-or-prior", spec }).expect(201);
    const run = await request(t.url)
      .post(`/api/studies/${studyId}/fits`)
      .set("Cookie", analyst)
      .send({ modelId: model.body.id })
      .expect(202);
    const fit = await waitForFitStatus(t, analyst, run.body.id as string, ["done", "failed"]);
    expect(fit.error).toBeNull();
    expect(fit.status).toBe("done");
    const regions = (
      fit.result as { regions: { region: string; n: number; p: number; pAdjusted: number }[] }
    ).regions;
    expect(new Set(regions.map((r) => r.n)).size).toBeGreaterThan(1); // the regions differ in participants
    for (const r of regions) expect(r.pAdjusted).toBeGreaterThanOrEqual(r.p); // max over regions ≥ the region's own statistic
    const detail = await request(t.url)
      .get(`/api/fits/${run.body.id}/regions/${encodeURIComponent(regions[0].region)}`)
      .set("Cookie", analyst)
      .expect(200);
    expect(detail.body.result.permutation).toMatchObject({ scheme, rearrangements: 501 }); // 500 random rearrangements and the identity (common practice, no source)
  });
});
