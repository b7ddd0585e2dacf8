/**
 * Studies, roles, invitations and the audit trail: the life cycle of a
 * study and its team, the last-Owner rule, invitation life cycle, the
 * append-only audit trail, cross-origin refusal and rate limits.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditEvents } from "../../db/schema";
import {
  agentFor,
  createTestApp,
  firstLink,
  signInByEmail,
  signInDemo,
  userIdOf,
  type Agent,
  type TestApp,
} from "./helpers";

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});

async function newStudy(agent: Agent, name: string): Promise<string> {
  const res = await agent
    .post("/api/studies")
    .send({ name, description: "For a test" })
    .expect(201);
  return res.body.id as string;
}

async function inviteAndGetToken(
  owner: Agent,
  studyId: string,
  email: string,
  role = "viewer",
): Promise<string> {
  await owner.post(`/api/studies/${studyId}/invitations`).send({ email, role }).expect(201);
  const link = firstLink(t.mail.latestTo(email).text);
  expect(new URL(link).pathname).toMatch(/^\/invitations\/[A-Za-z0-9_-]{43}$/);
  return new URL(link).pathname.split("/")[2];
}

describe("two people who sign in by e-mail link", () => {
  it("A creates a study, B cannot see it, A invites B as Viewer, B accepts and reads it read-only", async () => {
    const a = await signInByEmail(t, "alice@lab.example");
    const b = await signInByEmail(t, "bruno@lab.example");
    const studyId = await newStudy(a, "Load effects pilot");

    const aList = await a.get("/api/studies").expect(200);
    expect(aList.body).toEqual([
      expect.objectContaining({
        id: studyId,
        name: "Load effects pilot",
        role: "owner",
        counts: { members: 1, participants: 0, models: 0, fits: 0, sealedFits: 0 },
      }),
    ]);
    await b.get(`/api/studies/${studyId}`).expect(404);
    expect((await b.get("/api/studies").expect(200)).body).toEqual([]);

    await a
      .post(`/api/studies/${studyId}/invitations`)
      .send({ email: "Bruno@Lab.Example", role: "viewer" })
      .expect(201);
    const mail = t.mail.latestTo("bruno@lab.example");
    expect(mail.subject).toBe('Invitation to the study "Load effects pilot" on Covarion');
    const link = firstLink(mail.text);
    expect(link.startsWith(`${t.url}/invitations/`)).toBe(true);
    const token = new URL(link).pathname.split("/")[2];

    const preview = await b.get(`/api/invitations/${token}`).expect(200);
    expect(preview.body).toMatchObject({
      studyName: "Load effects pilot",
      email: "bruno@lab.example",
      role: "viewer",
      status: "pending",
    });
    const accepted = await b.post(`/api/invitations/${token}/accept`).expect(200);
    expect(accepted.body).toEqual({ studyId, role: "viewer" });

    const seen = await b.get(`/api/studies/${studyId}`).expect(200);
    expect(seen.body).toMatchObject({ role: "viewer", counts: { members: 2 } });
    expect(seen.body.capabilities).toContain("study.read");
    expect(seen.body.capabilities).not.toContain("study.update");
    const rename = await b.patch(`/api/studies/${studyId}`).send({ name: "Mine now" }).expect(403);
    expect(rename.body.error.code).toBe("forbidden");
    await b
      .post(`/api/studies/${studyId}/invitations`)
      .send({ email: "carla@lab.example", role: "viewer" })
      .expect(403);

    const activity = await a.get(`/api/studies/${studyId}/activity`).expect(200);
    const kinds = (activity.body as { kind: string }[]).map((e) => e.kind);
    expect(kinds).toEqual(["invitation.accepted", "invitation.sent", "study.created"]);
    expect(activity.body[0].actor).toMatchObject({ email: "bruno@lab.example" });
    expect(activity.body[1].after).toMatchObject({ email: "bruno@lab.example", role: "viewer" });

    const foreign = await a
      .post("/api/studies")
      .set("Origin", "https://elsewhere.example")
      .send({ name: "Forged" })
      .expect(403);
    expect(foreign.body.error.code).toBe("cross_origin");
  });
});

describe("studies", () => {
  it("renames, describes and restricts with before/after in the audit trail", async () => {
    const owner = await signInByEmail(t, "dana@lab.example");
    const studyId = await newStudy(owner, "Before");
    const res = await owner
      .patch(`/api/studies/${studyId}`)
      .send({ name: "After", restricted: true })
      .expect(200);
    expect(res.body).toMatchObject({
      name: "After",
      restricted: true,
      description: "For a test",
      role: "owner",
    });
    const events = (
      await owner.get(`/api/studies/${studyId}/activity?kind=study.updated`).expect(200)
    ).body;
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({
      before: { name: "Before", restricted: false },
      after: { name: "After", restricted: true },
    });
    await owner.patch(`/api/studies/${studyId}`).send({}).expect(400);
  });

  it("deletes only with the typed name, then hides the study everywhere but keeps its trail and says until when it can be restored", async () => {
    const owner = await signInByEmail(t, "erik@lab.example");
    const studyId = await newStudy(owner, "To be deleted");
    const wrong = await owner
      .delete(`/api/studies/${studyId}`)
      .send({ confirm: "to be deleted" })
      .expect(400);
    expect(wrong.body.error.details[0].field).toBe("body.confirm");
    await owner.delete(`/api/studies/${studyId}`).send({}).expect(400);
    await owner.delete(`/api/studies/${studyId}`).send({ confirm: "To be deleted" }).expect(204);
    await owner.get(`/api/studies/${studyId}`).expect(404);
    expect((await owner.get("/api/studies").expect(200)).body).toEqual([]);
    const rows = await t.db.select().from(auditEvents);
    const deleted = rows.find((r) => r.studyId === studyId && r.kind === "study.deleted");
    expect(deleted?.before).toMatchObject({ name: "To be deleted" });
    // The event says until when the delete can be undone (30 days; see study-lifecycle.test.ts).
    const after = deleted?.after as { deletedAt: string; restorableUntil: string };
    expect(Date.parse(after.restorableUntil) - Date.parse(after.deletedAt)).toBe(
      30 * 24 * 60 * 60 * 1000,
    );
  });

  it("a study id that is not an id answers 404, not 400 (nothing is revealed)", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    await owner.get("/api/studies/not-an-id").expect(404);
  });
});

describe("members and the last-Owner rule", () => {
  it("the last Owner can neither be demoted nor leave; with a second Owner both work", async () => {
    const owner = await signInByEmail(t, "fatima@lab.example");
    const studyId = await newStudy(owner, "Owners");
    const ownerId = await userIdOf(t.db, "fatima@lab.example");
    const demote = await owner
      .patch(`/api/studies/${studyId}/members/${ownerId}`)
      .send({ role: "analyst" })
      .expect(409);
    expect(demote.body.error.message).toMatch(/at least one Owner/);
    await owner.delete(`/api/studies/${studyId}/members/${ownerId}`).expect(409);

    const second = await signInByEmail(t, "gustav@lab.example");
    const token = await inviteAndGetToken(owner, studyId, "gustav@lab.example", "analyst");
    await second.post(`/api/invitations/${token}/accept`).expect(200);
    const gustavId = await userIdOf(t.db, "gustav@lab.example");
    const promoted = await owner
      .patch(`/api/studies/${studyId}/members/${gustavId}`)
      .send({ role: "owner" })
      .expect(200);
    expect(promoted.body).toMatchObject({ userId: gustavId, role: "owner" });
    await owner
      .patch(`/api/studies/${studyId}/members/${ownerId}`)
      .send({ role: "reviewer" })
      .expect(200);
    // Now Gustav is the only Owner: he cannot leave, Fatima (reviewer) can.
    await second.delete(`/api/studies/${studyId}/members/${gustavId}`).expect(409);
    await owner.delete(`/api/studies/${studyId}/members/${ownerId}`).expect(204);
    await owner.get(`/api/studies/${studyId}`).expect(404);

    const members = (await second.get(`/api/studies/${studyId}/members`).expect(200)).body;
    expect(members).toEqual([
      expect.objectContaining({ email: "gustav@lab.example", role: "owner" }),
    ]);
    const kinds = (
      await second.get(`/api/studies/${studyId}/activity?kind=member`).expect(200)
    ).body.map((e: { kind: string }) => e.kind);
    expect(kinds).toEqual(["member.left", "member.role_changed", "member.role_changed"]);
  });

  it("a non-Owner may leave but may not remove someone else", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    const studyId = await newStudy(owner, "Leaving");
    const h = await signInByEmail(t, "hana@lab.example");
    await h
      .post(
        `/api/invitations/${await inviteAndGetToken(owner, studyId, "hana@lab.example", "reviewer")}/accept`,
      )
      .expect(200);
    const ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
    const hanaId = await userIdOf(t.db, "hana@lab.example");
    await h.delete(`/api/studies/${studyId}/members/${ownerId}`).expect(403);
    await h.delete(`/api/studies/${studyId}/members/${hanaId}`).expect(204);
    await h.get(`/api/studies/${studyId}`).expect(404);
  });

  it("a role outside the four is refused with the field named", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    const studyId = await newStudy(owner, "Roles");
    const ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
    const res = await owner
      .patch(`/api/studies/${studyId}/members/${ownerId}`)
      .send({ role: "admin" })
      .expect(400);
    expect(res.body.error.details[0].field).toBe("body.role");
  });
});

describe("invitation life cycle", () => {
  it("refuses the wrong address, works once, and cannot be reused", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    const studyId = await newStudy(owner, "Invites");
    const token = await inviteAndGetToken(owner, studyId, "ines@lab.example", "analyst");
    const wrong = await signInByEmail(t, "not-ines@lab.example");
    const refused = await wrong.post(`/api/invitations/${token}/accept`).expect(403);
    expect(refused.body.error.message).toContain("sent to ines@lab.example");
    await wrong.get(`/api/studies/${studyId}`).expect(404);

    const ines = await signInByEmail(t, "ines@lab.example");
    await ines.post(`/api/invitations/${token}/accept`).expect(200);
    expect((await ines.get(`/api/studies/${studyId}`).expect(200)).body.role).toBe("analyst");
    const reuse = await ines.post(`/api/invitations/${token}/accept`).expect(410);
    expect(reuse.body.error.code).toBe("invitation_used");
    expect((await request(t.app).get(`/api/invitations/${token}`).expect(200)).body.status).toBe(
      "accepted",
    );
    await owner
      .post(`/api/studies/${studyId}/invitations`)
      .send({ email: "ines@lab.example", role: "viewer" })
      .expect(409);
  });

  it("expires after 7 days", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    const studyId = await newStudy(owner, "Expiry");
    const token = await inviteAndGetToken(owner, studyId, "jonas@lab.example");
    const jonas = await signInByEmail(t, "jonas@lab.example");
    t.advanceClock(7 * 24 * 3600 * 1000 + 1000);
    try {
      const res = await jonas.post(`/api/invitations/${token}/accept`).expect(410);
      expect(res.body.error.code).toBe("invitation_expired");
      expect((await owner.get(`/api/studies/${studyId}/invitations`).expect(200)).body).toEqual([]);
    } finally {
      t.advanceClock(-(7 * 24 * 3600 * 1000 + 1000));
    }
  });

  it("a pending invitation is listed, can be revoked once, and then cannot be accepted", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    const studyId = await newStudy(owner, "Revocation");
    const token = await inviteAndGetToken(owner, studyId, "karl@lab.example", "reviewer");
    const pending = (await owner.get(`/api/studies/${studyId}/invitations`).expect(200)).body;
    expect(pending).toEqual([
      expect.objectContaining({ email: "karl@lab.example", role: "reviewer", status: "pending" }),
    ]);
    await owner
      .post(`/api/studies/${studyId}/invitations`)
      .send({ email: "karl@lab.example", role: "viewer" })
      .expect(409);
    await owner.delete(`/api/studies/${studyId}/invitations/${pending[0].id}`).expect(204);
    await owner.delete(`/api/studies/${studyId}/invitations/${pending[0].id}`).expect(409);
    const karl = await signInByEmail(t, "karl@lab.example");
    const res = await karl.post(`/api/invitations/${token}/accept`).expect(410);
    expect(res.body.error.code).toBe("invitation_revoked");
    const kinds = (
      await owner.get(`/api/studies/${studyId}/activity?kind=invitation`).expect(200)
    ).body.map((e: { kind: string }) => e.kind);
    expect(kinds).toEqual(["invitation.revoked", "invitation.sent"]);
  });

  it("an unknown token is 404 and a malformed one 400", async () => {
    const someone = await signInDemo(t, "viewer@demo.covarion.test");
    await someone.post(`/api/invitations/${"x".repeat(43)}/accept`).expect(404);
    await request(t.app).get("/api/invitations/short").expect(400);
  });
});

describe("audit trail", () => {
  it("filters by person and kind, newest first, pages with before", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    const studyId = await newStudy(owner, "Filters");
    await owner.patch(`/api/studies/${studyId}`).send({ description: "one" }).expect(200);
    await owner.patch(`/api/studies/${studyId}`).send({ description: "two" }).expect(200);
    const token = await inviteAndGetToken(owner, studyId, "lena@lab.example", "analyst");
    const lena = await signInByEmail(t, "lena@lab.example");
    await lena.post(`/api/invitations/${token}/accept`).expect(200);
    const lenaId = await userIdOf(t.db, "lena@lab.example");

    const everything = (await owner.get(`/api/studies/${studyId}/activity`).expect(200)).body as {
      seq: number;
      kind: string;
    }[];
    expect(everything.map((e) => e.kind)).toEqual([
      "invitation.accepted",
      "invitation.sent",
      "study.updated",
      "study.updated",
      "study.created",
    ]);
    const seqs = everything.map((e) => e.seq);
    expect([...seqs].sort((x, y) => y - x)).toEqual(seqs);
    const byLena = (
      await owner.get(`/api/studies/${studyId}/activity?person=${lenaId}`).expect(200)
    ).body;
    expect(byLena.map((e: { kind: string }) => e.kind)).toEqual(["invitation.accepted"]);
    const page = (
      await owner.get(`/api/studies/${studyId}/activity?limit=2&before=${seqs[1]}`).expect(200)
    ).body;
    expect(page.map((e: { kind: string }) => e.kind)).toEqual(["study.updated", "study.updated"]);
    const none = (await owner.get(`/api/studies/${studyId}/activity?kind=fit`).expect(200)).body;
    expect(none).toEqual([]);
    const bad = await owner.get(`/api/studies/${studyId}/activity?kind=DROP%20TABLE`).expect(400);
    expect(bad.body.error.details[0].field).toBe("query.kind");
  });

  it("refuses updates and deletes of events at the database", async () => {
    await expect(t.db.update(auditEvents).set({ kind: "tampered.event" })).rejects.toThrow();
    await expect(t.db.delete(auditEvents)).rejects.toThrow();
    const rows = await t.db.select().from(auditEvents);
    expect(rows.some((r) => r.kind === "tampered.event")).toBe(false);
  });
});

describe("security at the edge", () => {
  it("refuses state-changing requests from another site, by Origin or Sec-Fetch-Site", async () => {
    const owner = await signInDemo(t, "owner@demo.covarion.test");
    await owner
      .post("/api/studies")
      .set("Origin", "http://evil.example")
      .send({ name: "x" })
      .expect(403);
    await owner
      .post("/api/studies")
      .set("Sec-Fetch-Site", "cross-site")
      .send({ name: "x" })
      .expect(403);
    await owner
      .post("/api/studies")
      .set("Sec-Fetch-Site", "same-site")
      .send({ name: "x" })
      .expect(403);
    await owner.post("/api/studies").set("Origin", "null").send({ name: "x" }).expect(403);
    const csrf = await agentFor(t).get("/api/auth/csrf");
    await request(t.app)
      .post("/api/auth/signin/nodemailer")
      .set("Origin", "http://evil.example")
      .type("form")
      .send({ email: "x@y.example", csrfToken: csrf.body.csrfToken })
      .expect(403);
    // Same origin passes; reads are never blocked.
    await owner
      .post("/api/studies")
      .set("Origin", t.url)
      .set("Sec-Fetch-Site", "same-origin")
      .send({ name: "Same site" })
      .expect(201);
    await owner.get("/api/studies").set("Origin", "http://evil.example").expect(200);
  });
});

describe("rate limits", () => {
  let limited: TestApp;
  beforeAll(async () => {
    limited = await createTestApp({ env: { RATE_LIMIT_PER_ADDRESS: "2", RATE_LIMIT_PER_IP: "4" } });
  });
  afterAll(async () => {
    await limited?.close();
  });

  async function askForLink(agent: Agent, email: string): Promise<number> {
    const csrf = await agent.get("/api/auth/csrf");
    const res = await agent
      .post("/api/auth/signin/nodemailer")
      .type("form")
      .send({ email, csrfToken: csrf.body.csrfToken });
    if (res.status === 429) expect(res.body.error.code).toBe("rate_limited");
    return res.status;
  }

  it("limits sign-in e-mails per address and per IP", async () => {
    const agent = request.agent(limited.url);
    expect([
      await askForLink(agent, "m@lab.example"),
      await askForLink(agent, "M@lab.example"),
      await askForLink(agent, "m@lab.example"),
    ]).toEqual([302, 302, 429]);
    // A different address from the same IP: allowed until the IP's limit of 4 is reached.
    expect([
      await askForLink(agent, "n@lab.example"),
      await askForLink(agent, "o@lab.example"),
    ]).toEqual([302, 429]);
    expect(limited.mail.messages().filter((m) => m.to === "m@lab.example")).toHaveLength(2);
  });

  it("limits invitation accepts per address", async () => {
    const viewer = await signInDemo(limited, "viewer@demo.covarion.test");
    const statuses: number[] = [];
    for (let i = 0; i < 3; i++)
      statuses.push((await viewer.post(`/api/invitations/${"y".repeat(43)}/accept`)).status);
    expect(statuses).toEqual([404, 404, 429]);
    const res = await viewer.post(`/api/invitations/${"y".repeat(43)}/accept`).expect(429);
    expect(res.body.error.message).toMatch(/Too many invitation accept requests/);
    expect(res.headers["retry-after"]).toBeDefined();
  });
});
