/**
 * Fits left unfinished by a previous server process: re-queued at start
 * (FitJobs.recover), each keeps its first start time, starts its progress
 * again from 0, is recorded in the activity trail as re-queued after a
 * restart (no actor), and gives the numbers the fit gave before.
 */
import { eq, inArray } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fitRegions, fits, studies, users } from "../../db/schema";
import { demoPeople, demoStudy } from "../../db/seed";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { createFitJobs } from "../../server/services/fit-store";
import { currentVersions } from "../../server/services/datasets";
import { createTestApp, type TestApp } from "./helpers";

let t: TestApp;
let studyId: string;
let cookie: string;

async function waitForDone(fitId: string): Promise<void> {
  const deadline = Date.now() + 60_000;
  for (;;) {
    const res = await request(t.url).get(`/api/fits/${fitId}`).set("Cookie", cookie).expect(200);
    if (res.body.status === "done") return;
    if (res.body.status === "failed" || Date.now() > deadline)
      throw new Error(`fit ${fitId} is ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

beforeAll(async () => {
  t = await createTestApp();
  const [study] = await t.db.select().from(studies).where(eq(studies.name, demoStudy.name));
  studyId = study.id;
  if (!(await currentVersions(t.db, studyId)).brain) {
    const [owner] = await t.db.select().from(users).where(eq(users.email, demoPeople[0].email));
    await seedDemoDatasets(t.db, { studyId, uploadedBy: owner.id, now: new Date() });
  }
  const signIn = await request(t.url)
    .post("/api/dev/demo-sign-in")
    .send({ email: "owner@demo.covarion.test" })
    .expect(200);
  cookie = String(signIn.headers["set-cookie"]).split(";")[0];
});

afterAll(async () => {
  await t?.close();
});

describe("restart", () => {
  it("re-queues fits left queued or running: first start kept, progress from 0, recorded, same numbers", async () => {
    const model = await request(t.url)
      .post(`/api/studies/${studyId}/models`)
      .set("Cookie", cookie)
      .send({
        name: "Across the group",
        regionSelection: "independent-data",
        spec: { kind: "one-sample" },
      })
      .expect(201);
    const run = await request(t.url)
      .post(`/api/studies/${studyId}/fits`)
      .set("Cookie", cookie)
      .send({ modelId: model.body.id })
      .expect(202);
    await waitForDone(run.body.id);
    const [original] = await t.db.select().from(fits).where(eq(fits.id, run.body.id));

    // As a previous process left them: one running at 40 % since an hour ago, one still queued.
    const firstStart = new Date(Date.now() - 3_600_000);
    const copy = {
      studyId,
      modelId: original.modelId,
      brainVersionId: original.brainVersionId,
      sheetVersionId: original.sheetVersionId,
      recipe: original.recipe,
      createdBy: original.createdBy,
    };
    const [running] = await t.db
      .insert(fits)
      .values({ ...copy, status: "running", progress: 0.4, secondsLeft: 12, startedAt: firstStart })
      .returning();
    const [queued] = await t.db
      .insert(fits)
      .values({ ...copy, status: "queued", createdAt: new Date(Date.now() + 1000) })
      .returning();

    const restarted = createFitJobs(t.db, { threads: 1 });
    try {
      expect(await restarted.recover()).toEqual([running.id, queued.id]);
      const [requeued] = await t.db.select().from(fits).where(eq(fits.id, running.id));
      expect(requeued).toMatchObject({
        status: "queued",
        progress: 0,
        secondsLeft: null,
        startedAt: firstStart,
      });
      await restarted.whenIdle();
    } finally {
      await restarted.close();
    }

    const after = await t.db
      .select()
      .from(fits)
      .where(inArray(fits.id, [running.id, queued.id]));
    const byId = new Map(after.map((f) => [f.id, f]));
    expect(byId.get(running.id)).toMatchObject({
      status: "done",
      progress: 1,
      startedAt: firstStart,
    });
    // A fit that had never started gets its start time when it first runs.
    expect(byId.get(queued.id)?.status).toBe("done");
    expect(byId.get(queued.id)?.startedAt?.getTime()).toBeGreaterThan(firstStart.getTime());
    for (const fit of after) expect(fit.result).toEqual(original.result);
    const rowsOf = async (id: string) =>
      (
        await t.db
          .select()
          .from(fitRegions)
          .where(eq(fitRegions.fitId, id))
          .orderBy(fitRegions.position)
      ).map((r) => [r.region, r.participants, r.plot]);
    expect(await rowsOf(running.id)).toEqual(await rowsOf(original.id));

    const activity = await request(t.url)
      .get(`/api/studies/${studyId}/activity?kind=fit.requeued`)
      .set("Cookie", cookie)
      .expect(200);
    expect(activity.body).toHaveLength(2);
    const ofRunning = activity.body.find((e: { targetId: string }) => e.targetId === running.id);
    expect(ofRunning).toMatchObject({
      kind: "fit.requeued",
      actor: null,
      targetType: "fit",
      before: { status: "running", progress: 0.4, startedAt: firstStart.toISOString() },
      after: { status: "queued", progress: 0 },
    });
    const ofQueued = activity.body.find((e: { targetId: string }) => e.targetId === queued.id);
    expect(ofQueued).toMatchObject({ before: { status: "queued", progress: 0, startedAt: null } });
  });
});
