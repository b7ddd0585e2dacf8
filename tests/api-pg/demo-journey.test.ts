/**
 * The demo journey through the API on a PostgreSQL server: people sign in
 * through the real e-mail link, the Analyst uploads the demo's brain table
 * and participant sheet and confirms them, fits a model, a Reviewer
 * approves the finished fit and the Owner seals it — every step stored in
 * the server's database (createTestApp gives this project a fresh copy of
 * the migrated template).
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { demoStudy } from "../../db/seed";
import { type Agent, createTestApp, signInByEmail, type TestApp } from "../api/helpers";

const demoFolder = join(import.meta.dirname, "..", "..", "assets", "demo");
const brainFile = "harbour-bay_lantern-3-vs-1_brain-table.csv";
const sheetFile = "harbour-bay_participants.tsv";

let t: TestApp;
const people = {} as Record<"owner" | "analyst" | "reviewer", Agent>;
let studyId: string;

beforeAll(async () => {
  if (!inject("postgres")) throw new Error("tests/api-pg run in the api-pg project only");
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer"] as const)
    people[role] = await signInByEmail(t, `${role}@demo.covarion.test`);
}, 120_000);
afterAll(async () => {
  await t?.close();
});

describe("the demo journey on PostgreSQL", () => {
  it("runs on the server's database (it answers on a TCP port; the embedded one has none)", async () => {
    const answer = (await t.db.execute(sql`select inet_server_port() as port`)) as unknown as {
      rows: { port: number | null }[];
    };
    expect(answer.rows[0].port).toBe(Number(new URL(inject("postgres")?.adminUrl ?? "").port));
  });

  it("sign-in, upload, confirm, fit, approve, seal", async () => {
    const list = await people.analyst.get("/api/studies").expect(200);
    const study = (list.body as { id: string; name: string }[]).find(
      (s) => s.name === demoStudy.name,
    );
    expect(study).toBeDefined();
    studyId = (study as { id: string }).id;

    for (const [kind, file] of [
      ["brain", brainFile],
      ["participants", sheetFile],
    ] as const) {
      const preview = await people.analyst
        .post(`/api/studies/${studyId}/datasets`)
        .field("kind", kind)
        .attach("file", readFileSync(join(demoFolder, file)), file)
        .expect(201);
      const confirmed = await people.analyst
        .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
        .send({})
        .expect(201);
      expect(confirmed.body).toMatchObject({ kind, status: "confirmed", version: 1 });
      expect(confirmed.body.rowCount).toBeGreaterThan(0);
    }

    const model = await people.analyst
      .post(`/api/studies/${studyId}/models`)
      .send({
        name: "Accuracy with age",
        regionSelection: "anatomical-or-prior",
        spec: {
          kind: "association",
          predictor: "accuracy",
          covariates: ["age"],
          inference: "permutation",
          resamples: 2000,
          seed: 7,
        },
      })
      .expect(201);
    const fit = await people.analyst
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId: model.body.id })
      .expect(202);
    const fitId = fit.body.id as string;
    const deadline = Date.now() + 90_000;
    let view = (await people.analyst.get(`/api/fits/${fitId}`).expect(200)).body;
    while (!["done", "failed", "cancelled"].includes(view.status) && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 200));
      view = (await people.analyst.get(`/api/fits/${fitId}`).expect(200)).body;
    }
    expect(view.status).toBe("done");
    expect(view.result.regions.length).toBeGreaterThan(0);
    for (const region of view.result.regions) expect(Number.isFinite(region.p)).toBe(true);

    const approved = await people.reviewer.post(`/api/fits/${fitId}/approve`).expect(200);
    expect(approved.body.approval.by.name).toBe("Priya Raman");
    const sealed = await people.owner.post(`/api/fits/${fitId}/seal`).expect(200);
    expect(sealed.body.seal).toMatchObject({
      sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
      intact: true,
    });
    const after = await people.analyst.get(`/api/fits/${fitId}`).expect(200);
    expect(after.body.seal.sha256).toBe(sealed.body.seal.sha256);
    const activity = await people.owner
      .get(`/api/studies/${studyId}/activity?kind=fit.sealed`)
      .expect(200);
    expect(JSON.stringify(activity.body)).toContain(fitId);
  }, 180_000);
});
