/**
 * A fit computed whole hands each region's participants' rows to storage
 * as soon as the region is diagnosed. When a later region then fails (here
 * the last region has too few participants once the others are set aside
 * for it), the fit ends `failed` with the region named, and none of the
 * earlier regions' rows are left stored. Demo data (seeded generator).
 */
import { count, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fitRegions, setAsides } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import {
  type Agent,
  type TestApp,
  createTestApp,
  demoCookie,
  signInDemo,
  userIdOf,
  waitForFitStatus,
} from "./helpers";

let t: TestApp;
let owner: Agent;
let studyId: string;
let ownerId: string;

beforeAll(async () => {
  t = await createTestApp();
  owner = await signInDemo(t, "owner@demo.covarion.test");
  studyId = (await owner.post("/api/studies").send({ name: "Late region failure" }).expect(201))
    .body.id;
  ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
  await seedDemoDatasets(t.db, { studyId, uploadedBy: ownerId, now: new Date() });
}, 60_000);
afterAll(async () => {
  await t?.close();
});

describe("a whole fit failing at a later region", () => {
  it.each([
    ["least squares", "ols", "parametric"],
    ["Huber with bootstrap", "huber", "bootstrap"],
  ])("%s: failed, the region named, no rows kept", async (_label, estimator, inference) => {
    await t.db.delete(setAsides).where(eq(setAsides.studyId, studyId));
    const model = await owner
      .post(`/api/studies/${studyId}/models`)
      .send({
        name: `Accuracy (${estimator}, ${inference})`,
        regionSelection: "anatomical-or-prior",
        spec: { kind: "association", predictor: "accuracy", estimator, inference, resamples: 200 },
      })
      .expect(201);
    // After the model is saved (which checks that every region has enough participants), the
    // demo's 72 participants are all but one set aside for the last region only.
    await t.db.insert(setAsides).values(
      Array.from({ length: 71 }, (_, i) => ({
        studyId,
        participantId: `sub-${String(i + 2).padStart(2, "0")}`,
        region: "precuneus",
        reason: "Signal dropout in this region",
        createdBy: ownerId,
      })),
    );
    const fit = await owner
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId: model.body.id })
      .expect(202);
    const cookie = await demoCookie(t, "owner@demo.covarion.test");
    const view = await waitForFitStatus(t, cookie, fit.body.id, ["done", "failed"]);
    expect(view.status).toBe("failed");
    expect(JSON.stringify(view.error)).toContain("precuneus");
    const [stored] = await t.db
      .select({ n: count() })
      .from(fitRegions)
      .where(eq(fitRegions.fitId, fit.body.id));
    expect(stored.n).toBe(0);
  });
});
