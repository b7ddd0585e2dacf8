/**
 * E-mail notices about fits through the real app and the real mailer
 * pointed at the real local mail fake (contract/notices.ts,
 * server/services/notices.ts): a fit that becomes done reaches the study's
 * Reviewers and Owners other than its starter; a sealed fit reaches the
 * whole team; a person who turned notices off for the study gets none; the
 * audit trail records who got them, not what they said; a mail server that
 * cannot be reached neither fails nor undoes the seal and is recorded.
 *
 * The study holds the demo tables; fits are one-sample and parametric, so
 * they finish quickly.
 */
import { createServer } from "node:net";
import type { AddressInfo } from "node:net";
import { and, eq } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditEvents, fitSeals, memberships } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { noticePreferenceKey } from "../../contract/notices";
import { createApp } from "../../server/app";
import type { FitJobs } from "../../server/jobs/fit-jobs";
import { createMailer } from "../../server/services/mailer";
import type { FitNotices } from "../../server/services/notices";
import {
  type Agent,
  type TestApp,
  createTestApp,
  signInByEmail,
  signInDemo,
  userIdOf,
} from "./helpers";

type Persona = "owner" | "analyst" | "reviewer" | "viewer" | "secondOwner" | "quietReviewer";

let t: TestApp;
const agents = {} as Record<Persona | "outsider", Agent>;
const ids = {} as Record<Persona, string>;
const emails = {
  owner: "owner@demo.covarion.test",
  analyst: "analyst@demo.covarion.test",
  reviewer: "reviewer@demo.covarion.test",
  viewer: "viewer@demo.covarion.test",
  secondOwner: "second-owner@lab.example",
  quietReviewer: "quiet-reviewer@lab.example",
} as const;
let studyId: string;
let modelId: string;

const notices = () => t.app.locals.notices as FitNotices;

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    agents[role] = await signInDemo(t, emails[role]);
    ids[role] = await userIdOf(t.db, emails[role]);
  }
  for (const p of ["secondOwner", "quietReviewer"] as const) {
    agents[p] = await signInByEmail(t, emails[p]);
    ids[p] = await userIdOf(t.db, emails[p]);
  }
  agents.outsider = await signInByEmail(t, "outsider@lab.example");
  const study = await agents.owner.post("/api/studies").send({ name: "Notices study" }).expect(201);
  studyId = study.body.id;
  await t.db.insert(memberships).values([
    ...(["analyst", "reviewer", "viewer"] as const).map((role) => ({
      studyId,
      userId: ids[role],
      role,
    })),
    { studyId, userId: ids.secondOwner, role: "owner" as const },
    { studyId, userId: ids.quietReviewer, role: "reviewer" as const },
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

/** Starts a fit as `who`, waits until it is done and its notices went out. */
async function finishedFit(who: Agent): Promise<string> {
  const fit = await who.post(`/api/studies/${studyId}/fits`).send({ modelId }).expect(202);
  const fitId = fit.body.id as string;
  const start = Date.now();
  for (;;) {
    const res = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    if (res.body.status === "done") break;
    if (res.body.status === "failed" || res.body.status === "cancelled")
      throw new Error(`fit ${fitId} ${res.body.status}`);
    if (Date.now() - start > 60_000) throw new Error(`fit ${fitId} stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 50));
  }
  await notices().whenIdle();
  return fitId;
}

/** The caught messages whose text links to the fit. */
function mailAbout(fitId: string) {
  return t.mail.messages().filter((m) => m.text.includes(`/fits/${fitId}`));
}

async function noticeEvents(fitId: string, kind: string) {
  return t.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.targetId, fitId), eq(auditEvents.kind, kind)));
}

describe("the notice setting", () => {
  it("is on until a person turns it off, per person and per study", async () => {
    const path = `/api/studies/${studyId}/notices`;
    expect((await agents.quietReviewer.get(path).expect(200)).body).toEqual({ enabled: true });
    const off = await agents.quietReviewer.put(path).send({ enabled: false }).expect(200);
    expect(off.body).toEqual({ enabled: false });
    expect((await agents.quietReviewer.get(path).expect(200)).body).toEqual({ enabled: false });
    // Another member keeps their own.
    expect((await agents.reviewer.get(path).expect(200)).body).toEqual({ enabled: true });
    // Stored as a preference of that person for that study only.
    const other = await agents.owner.post("/api/studies").send({ name: "Other" }).expect(201);
    expect(
      (await agents.owner.get(`/api/studies/${other.body.id}/notices`).expect(200)).body,
    ).toEqual({ enabled: true });
    // The personal preferences list leaves it out (its keys are the screens' own).
    expect((await agents.quietReviewer.get("/api/me/preferences").expect(200)).body).toEqual({
      preferences: {},
    });
    expect(noticePreferenceKey(studyId)).toBe(`notices:${studyId}`);
  });

  it("refuses a wrong body naming the field, and answers 404 outside the study", async () => {
    const path = `/api/studies/${studyId}/notices`;
    const bad = await agents.viewer.put(path).send({ enabled: "no" }).expect(400);
    expect(bad.body.error.code).toBe("validation_failed");
    expect(bad.body.error.details[0].field).toBe("body.enabled");
    await agents.viewer.put(path).send({ enabled: true, extra: 1 }).expect(400);
    await agents.outsider.get(path).expect(404);
    await agents.outsider.put(path).send({ enabled: false }).expect(404);
    await request(t.url).get(path).expect(401);
  });
});

describe("a fit that is done and waits for approval", () => {
  it("e-mails the Reviewers and Owners other than its starter, with a link, and records who", async () => {
    const fitId = await finishedFit(agents.analyst);
    const got = mailAbout(fitId);
    // Owner, second Owner and Reviewer; not the Analyst who started it, not the Viewer, not the
    // Reviewer who turned notices off.
    expect(got.map((m) => m.to).sort()).toEqual(
      [emails.owner, emails.reviewer, emails.secondOwner].sort(),
    );
    for (const m of got) {
      expect(m.subject).toContain("waits for approval");
      expect(m.subject).toContain("Load effect");
      expect(m.text).toContain(`${t.url}/studies/${studyId}/fits/${fitId}`);
    }
    const events = await noticeEvents(fitId, "notice.sent");
    expect(events).toHaveLength(1);
    expect(events[0].actorId).toBeNull();
    expect(events[0].studyId).toBe(studyId);
    const after = events[0].after as Record<string, unknown>;
    expect(after).toEqual({
      notice: "fit.awaiting-approval",
      fitId,
      recipients: expect.any(Array),
      count: 3,
    });
    expect((after.recipients as string[]).sort()).toEqual(
      [ids.owner, ids.reviewer, ids.secondOwner].sort(),
    );
    // The event records who, never what the e-mail said.
    expect(JSON.stringify(after)).not.toContain("@");
    expect(JSON.stringify(after)).not.toContain("Load effect");
    // The Activity trail shows it (Reviewers and up read it).
    const activity = await agents.reviewer
      .get(`/api/studies/${studyId}/activity?kind=notice.sent`)
      .expect(200);
    expect(activity.body.map((e: { targetId: string }) => e.targetId)).toContain(fitId);
  });

  it("leaves out a starter who is an Owner", async () => {
    const fitId = await finishedFit(agents.owner);
    expect(
      mailAbout(fitId)
        .map((m) => m.to)
        .sort(),
    ).toEqual([emails.reviewer, emails.secondOwner].sort());
  });
});

describe("a sealed fit", () => {
  it("e-mails the whole team, save those who turned notices off, and records who", async () => {
    const fitId = await finishedFit(agents.analyst);
    const before = mailAbout(fitId).length;
    await agents.reviewer.post(`/api/fits/${fitId}/approve`).send({}).expect(200);
    await notices().whenIdle();
    // Approval sends nothing.
    expect(mailAbout(fitId)).toHaveLength(before);
    await agents.viewer.put(`/api/studies/${studyId}/notices`).send({ enabled: false });
    await agents.viewer.put(`/api/studies/${studyId}/notices`).send({ enabled: true }).expect(200);
    const sealed = await agents.owner.post(`/api/fits/${fitId}/seal`).send({}).expect(200);
    await notices().whenIdle();
    const sealMail = mailAbout(fitId).filter((m) => m.subject.includes("was sealed"));
    expect(sealMail.map((m) => m.to).sort()).toEqual(
      [emails.owner, emails.analyst, emails.reviewer, emails.viewer, emails.secondOwner].sort(),
    );
    expect(sealMail[0].text).toContain(sealed.body.seal.sha256);
    const events = await noticeEvents(fitId, "notice.sent");
    const sealEvent = events.find((e) => (e.after as { notice: string }).notice === "fit.sealed");
    expect(sealEvent?.after).toMatchObject({ notice: "fit.sealed", fitId, count: 5 });
    expect(((sealEvent?.after as { recipients: string[] }).recipients ?? []).sort()).toEqual(
      [ids.owner, ids.analyst, ids.reviewer, ids.viewer, ids.secondOwner].sort(),
    );
  });

  it("a mail server that cannot be reached neither fails nor undoes the seal; the failure is recorded", async () => {
    const fitId = await finishedFit(agents.analyst);
    await agents.reviewer.post(`/api/fits/${fitId}/approve`).send({}).expect(200);
    // A free port nobody listens on: the real mailer's connection is refused.
    const probe = createServer();
    await new Promise<void>((resolve) => probe.listen(0, "127.0.0.1", resolve));
    const deadPort = (probe.address() as AddressInfo).port;
    await new Promise<void>((resolve) => probe.close(() => resolve()));
    const logged: string[] = [];
    const broken = createApp({
      config: t.config,
      db: t.db,
      mailer: createMailer(
        { host: "127.0.0.1", port: deadPort, secure: false, ignoreTLS: true },
        t.config.mailFrom,
      ),
      log: (_error, context) => logged.push(context),
    });
    try {
      const agent = request.agent(broken);
      await agent.post("/api/dev/demo-sign-in").send({ email: emails.owner }).expect(200);
      const res = await agent.post(`/api/fits/${fitId}/seal`).send({}).expect(200);
      expect(res.body.seal.sha256).toMatch(/^[0-9a-f]{64}$/);
      await (broken.locals.notices as FitNotices).whenIdle();
      const [seal] = await t.db.select().from(fitSeals).where(eq(fitSeals.fitId, fitId));
      expect(seal.sha256).toBe(res.body.seal.sha256);
      const failed = await noticeEvents(fitId, "notice.failed");
      expect(failed).toHaveLength(1);
      expect(failed[0].after).toMatchObject({
        notice: "fit.sealed",
        fitId,
        count: 5,
        // nodemailer reports a refused connection as a socket error.
        error: "ESOCKET",
      });
      expect(
        (await noticeEvents(fitId, "notice.sent")).filter(
          (e) => (e.after as { notice: string }).notice === "fit.sealed",
        ),
      ).toHaveLength(0);
      expect(logged.some((c) => c.includes(`fit.sealed notice of fit ${fitId}`))).toBe(true);
      // Nothing reached the mailbox about the seal.
      expect(mailAbout(fitId).filter((m) => m.subject.includes("was sealed"))).toHaveLength(0);
    } finally {
      await (broken.locals.fitJobs as FitJobs).close();
    }
  });
});
