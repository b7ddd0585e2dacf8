/**
 * "A second person signs off" through the real app: the study setting (on
 * by default, changed by an Owner only, recorded in the activity trail),
 * the approval the fit's starter may not give while it is on (409
 * second_person_required), the seal that refuses one person starting,
 * approving and sealing when the setting was switched on between approval
 * and seal, and, with the setting off, the seal, fit view and methods
 * paragraph that say one person signed off.
 *
 * The study holds the demo tables (seeded generator); fits are one-sample
 * and parametric, so they finish quickly.
 */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fitSeals, memberships, studies } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { singlePersonSignOffSentence } from "../../contract/methods-text";
import { approvalRefusalMessage, sealRefusalMessage } from "../../contract/sign-off";
import {
  type Agent,
  type TestApp,
  createTestApp,
  signInByEmail,
  signInDemo,
  userIdOf,
} from "./helpers";

type Persona = "owner" | "analyst" | "reviewer" | "viewer";

let t: TestApp;
const agents = {} as Record<Persona | "secondOwner" | "secondReviewer" | "outsider", Agent>;
const ids = {} as Record<Persona | "secondOwner" | "secondReviewer", string>;
let studyId: string;
let modelId: string;

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
    ids[role] = await userIdOf(t.db, `${role}@demo.covarion.test`);
  }
  agents.secondOwner = await signInByEmail(t, "second-owner@lab.example");
  ids.secondOwner = await userIdOf(t.db, "second-owner@lab.example");
  agents.secondReviewer = await signInByEmail(t, "second-reviewer@lab.example");
  ids.secondReviewer = await userIdOf(t.db, "second-reviewer@lab.example");
  agents.outsider = await signInByEmail(t, "outsider@lab.example");

  const study = await agents.owner
    .post("/api/studies")
    .send({ name: "Second person signs off" })
    .expect(201);
  studyId = study.body.id;
  await t.db.insert(memberships).values([
    ...(["analyst", "reviewer", "viewer"] as const).map((role) => ({
      studyId,
      userId: ids[role],
      role,
    })),
    { studyId, userId: ids.secondOwner, role: "owner" as const },
    { studyId, userId: ids.secondReviewer, role: "reviewer" as const },
  ]);
  await seedDemoDatasets(t.db, { studyId, uploadedBy: ids.analyst, now: new Date() });
  const model = await agents.analyst
    .post(`/api/studies/${studyId}/models`)
    .send({
      name: "Load effect",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    })
    .expect(201);
  modelId = model.body.id;
}, 120_000);
afterAll(async () => {
  await t?.close();
});

/** Starts a fit of the study's model as `who` and waits until it is done. */
async function finishedFit(who: Agent): Promise<string> {
  const fit = await who.post(`/api/studies/${studyId}/fits`).send({ modelId }).expect(202);
  const fitId = fit.body.id as string;
  const start = Date.now();
  for (;;) {
    const res = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    if (res.body.status === "done") return fitId;
    if (res.body.status === "failed" || res.body.status === "cancelled")
      throw new Error(`fit ${fitId} ${res.body.status}: ${JSON.stringify(res.body.error)}`);
    if (Date.now() - start > 60_000) throw new Error(`fit ${fitId} stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

async function setSignOff(on: boolean): Promise<void> {
  const res = await agents.owner
    .patch(`/api/studies/${studyId}`)
    .send({ secondPersonSignOff: on })
    .expect(200);
  expect(res.body.secondPersonSignOff).toBe(on);
}

describe("the study setting", () => {
  it("is on by default and carried by the study's view for every member", async () => {
    for (const persona of ["owner", "analyst", "reviewer", "viewer"] as const) {
      const res = await agents[persona].get(`/api/studies/${studyId}`).expect(200);
      expect(res.body.secondPersonSignOff, persona).toBe(true);
    }
    const [row] = await t.db
      .select({ on: studies.secondPersonSignOff })
      .from(studies)
      .where(eq(studies.id, studyId));
    expect(row.on).toBe(true);
  });

  it("only an Owner changes it: Analysts, Reviewers and Viewers get 403, outsiders 404, a non-boolean 400", async () => {
    for (const persona of ["analyst", "reviewer", "viewer"] as const) {
      const res = await agents[persona]
        .patch(`/api/studies/${studyId}`)
        .send({ secondPersonSignOff: false })
        .expect(403);
      expect(res.body.error.code, persona).toBe("forbidden");
    }
    await agents.outsider
      .patch(`/api/studies/${studyId}`)
      .send({ secondPersonSignOff: false })
      .expect(404);
    const bad = await agents.owner
      .patch(`/api/studies/${studyId}`)
      .send({ secondPersonSignOff: "no" })
      .expect(400);
    expect(bad.body.error.details).toEqual([
      expect.objectContaining({ field: "body.secondPersonSignOff" }),
    ]);
    expect(
      (await agents.viewer.get(`/api/studies/${studyId}`).expect(200)).body.secondPersonSignOff,
    ).toBe(true);
  });

  it("an Owner turns it off and on; each change is one activity event, a repeat none", async () => {
    const since = new Date();
    await setSignOff(false);
    await setSignOff(false);
    await setSignOff(true);
    const activity = await agents.owner
      .get(`/api/studies/${studyId}/activity?kind=study`)
      .expect(200);
    const changes = (
      activity.body as {
        kind: string;
        at: string;
        actor: { id: string };
        before: unknown;
        after: unknown;
      }[]
    ).filter(
      (e) =>
        e.kind === "study.sign_off_changed" && new Date(e.at) >= new Date(since.getTime() - 1000),
    );
    expect(changes.map((e) => [e.before, e.after])).toEqual([
      [{ secondPersonSignOff: false }, { secondPersonSignOff: true }],
      [{ secondPersonSignOff: true }, { secondPersonSignOff: false }],
    ]);
    expect(changes.every((e) => e.actor.id === ids.owner)).toBe(true);
  });
});

describe("while the setting is on", () => {
  it("the starter's approval answers 409 second_person_required naming the rule; another Reviewer's succeeds", async () => {
    const fitId = await finishedFit(agents.owner);
    const refused = await agents.owner.post(`/api/fits/${fitId}/approve`).expect(409);
    expect(refused.body).toEqual({
      error: { code: "second_person_required", message: approvalRefusalMessage },
    });
    expect(refused.body.error.message).toContain("“A second person signs off” is on");
    expect(refused.body.error.message).toContain("the person who started a fit cannot approve it");
    expect(refused.body.error.message).toContain("an Owner can turn the setting off");
    expect((await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body.approval).toBeNull();

    const approved = await agents.secondReviewer.post(`/api/fits/${fitId}/approve`).expect(200);
    expect(approved.body.approval.by.id).toBe(ids.secondReviewer);
    // The starter seals a fit someone else approved: two people signed off.
    const sealed = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(200);
    expect(sealed.body.seal).toMatchObject({
      by: { id: ids.owner },
      intact: true,
      singlePersonSignOff: false,
    });
  });

  it("an Analyst-started fit approved by the Reviewer and sealed by the Owner works and records two-person sign-off", async () => {
    const fitId = await finishedFit(agents.analyst);
    await agents.reviewer.post(`/api/fits/${fitId}/approve`).expect(200);
    const sealed = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(200);
    expect(sealed.body.createdBy.id).toBe(ids.analyst);
    expect(sealed.body.seal).toMatchObject({ by: { id: ids.owner }, singlePersonSignOff: false });
    const [row] = await t.db.select().from(fitSeals).where(eq(fitSeals.fitId, fitId));
    expect(row.singlePersonSignOff).toBe(false);
    const methods = await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200);
    expect(methods.body.text).not.toContain("The same person started");
  });

  it("the seal: one person cannot start, approve and seal when the setting was turned on after the approval; another Owner can", async () => {
    await setSignOff(false);
    let fitId: string;
    try {
      fitId = await finishedFit(agents.owner);
      await agents.owner.post(`/api/fits/${fitId}/approve`).expect(200);
    } finally {
      await setSignOff(true);
    }
    const refused = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(409);
    expect(refused.body).toEqual({
      error: { code: "second_person_required", message: sealRefusalMessage },
    });
    expect((await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body.seal).toBeNull();
    const sealed = await agents.secondOwner.post(`/api/fits/${fitId}/seal`).expect(200);
    expect(sealed.body.approval.by.id).toBe(ids.owner);
    expect(sealed.body.seal).toMatchObject({
      by: { id: ids.secondOwner },
      singlePersonSignOff: false,
    });
  });
});

describe("while the setting is off", () => {
  let fitId: string;

  beforeAll(async () => {
    await setSignOff(false);
  });
  afterAll(async () => {
    await setSignOff(true);
  });

  it("the starter approves and seals; the seal records singlePersonSignOff, in the database and the fit view", async () => {
    fitId = await finishedFit(agents.owner);
    const approved = await agents.owner.post(`/api/fits/${fitId}/approve`).expect(200);
    expect(approved.body.approval.by.id).toBe(ids.owner);
    const sealed = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(200);
    expect(sealed.body.seal).toMatchObject({
      by: { id: ids.owner },
      intact: true,
      singlePersonSignOff: true,
    });
    const [row] = await t.db.select().from(fitSeals).where(eq(fitSeals.fitId, fitId));
    expect(row.singlePersonSignOff).toBe(true);
    for (const persona of ["analyst", "reviewer", "viewer"] as const) {
      const view = await agents[persona].get(`/api/fits/${fitId}`).expect(200);
      expect(view.body.seal.singlePersonSignOff, persona).toBe(true);
    }
  });

  it("the methods paragraph says one person started, approved and sealed it", async () => {
    const methods = await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200);
    expect(methods.body.text).toContain(singlePersonSignOffSentence);
    expect(methods.body.text).toContain("“A second person signs off” was turned off");
  });

  it("the seal's activity event says so; turning the setting back on does not change a sealed fit", async () => {
    const activity = await agents.owner
      .get(`/api/studies/${studyId}/activity?kind=fit`)
      .expect(200);
    const sealed = (
      activity.body as { kind: string; targetId: string; after: Record<string, unknown> }[]
    ).find((e) => e.kind === "fit.sealed" && e.targetId === fitId);
    expect(sealed?.after).toMatchObject({
      singlePersonSignOff: true,
      sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
    });
    await setSignOff(true);
    try {
      expect(
        (await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body.seal.singlePersonSignOff,
      ).toBe(true);
      expect(
        (await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200)).body.text,
      ).toContain(singlePersonSignOffSentence);
    } finally {
      await setSignOff(false);
    }
  });

  it("a fit its starter approved and another Owner sealed records no single-person sign-off", async () => {
    const other = await finishedFit(agents.owner);
    await agents.owner.post(`/api/fits/${other}/approve`).expect(200);
    const sealed = await agents.secondOwner.post(`/api/fits/${other}/seal`).expect(200);
    expect(sealed.body.seal.singlePersonSignOff).toBe(false);
  });
});
