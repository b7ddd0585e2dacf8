/**
 * The study's set-asides through the real app: restoring needs a written
 * reason (400 naming the field without one), a restored set-aside stays
 * listed as history with who, when and why, both changes are in the
 * activity trail with what its sentence needs, and a Viewer of a restricted
 * study reads the list with counts, scopes and reasons but no participant
 * ids (and no activity at all).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { memberships } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { setAsideEventFacts, setAsideEventSentence } from "../../contract/set-aside-words";
import type { SetAsideView } from "../../contract/views/set-asides";
import { type Agent, type TestApp, createTestApp, signInDemo, userIdOf } from "./helpers";

let t: TestApp;
const agents: Record<"owner" | "analyst" | "reviewer" | "viewer", Agent> = {} as never;
let studyId: string;

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const)
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
  const study = await agents.owner
    .post("/api/studies")
    .send({ name: "Set-aside ledger study" })
    .expect(201);
  studyId = study.body.id;
  for (const role of ["analyst", "reviewer", "viewer"] as const) {
    await t.db
      .insert(memberships)
      .values({ studyId, userId: await userIdOf(t.db, `${role}@demo.covarion.test`), role });
  }
  await seedDemoDatasets(t.db, {
    studyId,
    uploadedBy: await userIdOf(t.db, "analyst@demo.covarion.test"),
    now: new Date(),
  });
}, 60_000);
afterAll(async () => {
  await t?.close();
});

const path = () => `/api/studies/${studyId}/set-asides`;

async function setAside(
  agent: Agent,
  body: { participant: string; region?: string; reason: string },
): Promise<SetAsideView> {
  return (await agent.post(path()).send(body).expect(201)).body as SetAsideView;
}

describe("restoring a set-aside", () => {
  it("without a reason answers 400 naming body.reason, and nothing changes", async () => {
    const aside = await setAside(agents.analyst, {
      participant: "sub-04",
      region: "L_dlpfc",
      reason: "Motion spikes in the second run",
    });
    for (const send of [undefined, {}, { reason: "" }, { reason: "   " }, { restoreReason: "" }]) {
      const req = agents.analyst.delete(`${path()}/${aside.id}`);
      const res = send === undefined ? await req : await req.send(send);
      expect(res.status, JSON.stringify(send)).toBe(400);
      expect(res.body.error.code).toBe("validation_failed");
      expect(res.body.error.details.map((d: { field: string }) => d.field)).toContain(
        send && "restoreReason" in send ? "body.restoreReason" : "body.reason",
      );
      expect(res.body.error.message).toMatch(/reason/);
    }
    const twoReasons = await agents.analyst
      .delete(`${path()}/${aside.id}?reason=one`)
      .send({ reason: "another" })
      .expect(400);
    expect(twoReasons.body.error.details).toEqual([
      { field: "body.reason", message: expect.stringContaining("one reason") },
    ]);
    const list = (await agents.analyst.get(path()).expect(200)).body as SetAsideView[];
    expect(list.find((s) => s.id === aside.id)).toMatchObject({
      active: true,
      restoredAt: null,
      restoredBy: null,
      restoreReason: null,
    });
    const events = (
      await agents.reviewer
        .get(`/api/studies/${studyId}/activity?kind=participant.restored`)
        .expect(200)
    ).body;
    expect(events).toEqual([]);
    await agents.analyst
      .delete(`${path()}/${aside.id}`)
      .send({ reason: "Cleanup of this case" })
      .expect(200);
  });

  it("with a reason answers 200; the set-aside stays listed as history and the activity event carries its sentence", async () => {
    const aside = await setAside(agents.analyst, {
      participant: "sub-41",
      region: "L_dlpfc",
      reason: "motion spikes",
    });
    const restored = (
      await agents.owner
        .delete(`${path()}/${aside.id}`)
        .send({ reason: "motion rechecked" })
        .expect(200)
    ).body as SetAsideView;
    expect(restored).toMatchObject({
      id: aside.id,
      participant: "sub-41",
      region: "L_dlpfc",
      reason: "motion spikes",
      active: false,
      createdBy: { name: "Tomas Ferreira" },
      restoredBy: { name: "Maren Lindqvist" },
      restoreReason: "motion rechecked",
    });
    expect(Date.parse(restored.restoredAt ?? "")).not.toBeNaN();
    // Restoring twice: 409, with the reason given.
    await agents.owner.delete(`${path()}/${aside.id}`).send({ reason: "again" }).expect(409);

    const all = (await agents.reviewer.get(path()).expect(200)).body as SetAsideView[];
    expect(all.find((s) => s.id === aside.id)).toEqual(restored);
    const active = (await agents.reviewer.get(`${path()}?active=true`).expect(200))
      .body as SetAsideView[];
    expect(active.map((s) => s.id)).not.toContain(aside.id);

    const events = (
      await agents.reviewer.get(`/api/studies/${studyId}/activity?kind=participant`).expect(200)
    ).body as {
      kind: string;
      actor: { name: string };
      targetId: string;
      before: unknown;
      after: unknown;
    }[];
    const [restoreEvent, setAsideEvent] = events;
    expect(restoreEvent).toMatchObject({
      kind: "participant.restored",
      targetId: "sub-41",
      actor: { name: "Maren Lindqvist" },
      before: {
        setAsideId: aside.id,
        participant: "sub-41",
        region: "L_dlpfc",
        reason: "motion spikes",
      },
      after: {
        setAsideId: aside.id,
        participant: "sub-41",
        region: "L_dlpfc",
        reason: "motion rechecked",
        restoredAt: restored.restoredAt,
      },
    });
    expect(setAsideEvent).toMatchObject({
      kind: "participant.set_aside",
      actor: { name: "Tomas Ferreira" },
      after: { participant: "sub-41", region: "L_dlpfc", reason: "motion spikes" },
    });
    const sentences = [restoreEvent, setAsideEvent].map((e) => {
      const facts = setAsideEventFacts(e);
      if (!facts) throw new Error(`${e.kind} is not a set-aside event`);
      return setAsideEventSentence(e.actor.name, facts);
    });
    expect(sentences).toEqual([
      "Maren Lindqvist restored sub-41 to L_dlpfc: ‘motion rechecked’",
      "Tomas Ferreira set aside sub-41 from L_dlpfc: ‘motion spikes’",
    ]);
  });

  it("from every region: the reason may come as restoreReason or in the query, and the sentences say every region", async () => {
    const first = await setAside(agents.analyst, {
      participant: "sub-12",
      reason: "Fell asleep in the scanner",
    });
    await agents.analyst
      .delete(`${path()}/${first.id}`)
      .send({ restoreReason: "Awake in the task runs, per the operator's log" })
      .expect(200);
    const second = await setAside(agents.analyst, {
      participant: "sub-12",
      reason: "Scanner log reread",
    });
    const byQuery = await agents.analyst
      .delete(`${path()}/${second.id}?reason=${encodeURIComponent("Decision withdrawn")}`)
      .expect(200);
    expect(byQuery.body).toMatchObject({ restoreReason: "Decision withdrawn", active: false });
    const events = (
      await agents.analyst.get(`/api/studies/${studyId}/activity?kind=participant`).expect(200)
    ).body as { kind: string; actor: { name: string }; before: unknown; after: unknown }[];
    const words = events
      .slice(0, 4)
      .map((e) => setAsideEventSentence(e.actor.name, setAsideEventFacts(e) ?? (null as never)));
    expect(words).toEqual([
      "Tomas Ferreira restored sub-12 to every region: ‘Decision withdrawn’",
      "Tomas Ferreira set aside sub-12 from every region: ‘Scanner log reread’",
      "Tomas Ferreira restored sub-12 to every region: ‘Awake in the task runs, per the operator's log’",
      "Tomas Ferreira set aside sub-12 from every region: ‘Fell asleep in the scanner’",
    ]);
  });

  it("Reviewers and Viewers may not restore", async () => {
    const aside = await setAside(agents.analyst, {
      participant: "sub-20",
      reason: "Failed the task checks",
    });
    for (const role of ["reviewer", "viewer"] as const) {
      const res = await agents[role]
        .delete(`${path()}/${aside.id}`)
        .send({ reason: "Not mine to restore" })
        .expect(403);
      expect(res.body.error.code).toBe("forbidden");
    }
    await agents.analyst
      .delete(`${path()}/${aside.id}`)
      .send({ reason: "Task checks passed on a rerun" })
      .expect(200);
  });
});

describe("who sees which participants", () => {
  it("a Viewer of a restricted study gets the list with scopes, reasons, who and when, but no participant ids; no activity", async () => {
    const aside = await setAside(agents.analyst, {
      participant: "sub-33",
      region: "R_dlpfc",
      reason: "Coil warning during the run",
    });
    const open = (await agents.viewer.get(path()).expect(200)).body as SetAsideView[];
    expect(open.find((s) => s.id === aside.id)?.participant).toBe("sub-33");
    await agents.owner.patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      const forViewer = (await agents.viewer.get(path()).expect(200)).body as SetAsideView[];
      const forReviewer = (await agents.reviewer.get(path()).expect(200)).body as SetAsideView[];
      expect(forViewer.length).toBe(forReviewer.length);
      expect(forViewer.every((s) => s.participant === null)).toBe(true);
      expect(forViewer.map(({ participant: _p, ...rest }) => rest)).toEqual(
        forReviewer.map(({ participant: _p, ...rest }) => rest),
      );
      expect(forViewer.find((s) => s.id === aside.id)).toMatchObject({
        region: "R_dlpfc",
        reason: "Coil warning during the run",
        createdBy: { name: "Tomas Ferreira" },
        active: true,
      });
      expect(JSON.stringify(forViewer)).not.toMatch(/sub-\d/);
      expect(forReviewer.find((s) => s.id === aside.id)?.participant).toBe("sub-33");
      const active = (await agents.viewer.get(`${path()}?active=true`).expect(200))
        .body as SetAsideView[];
      expect(active.map((s) => s.id)).toEqual([aside.id]);
      // The activity trail (which names participants) is not for Viewers at all.
      await agents.viewer.get(`/api/studies/${studyId}/activity`).expect(403);
    } finally {
      await agents.owner.patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
    await agents.analyst
      .delete(`${path()}/${aside.id}`)
      .send({ reason: "Coil checked: no fault" })
      .expect(200);
  });
});
