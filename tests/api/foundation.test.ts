/**
 * Foundation: health, the error envelope, sessions, sign-in by e-mail link
 * and by institution (OpenID Connect), demo sign-in, sign-out.
 */
import express from "express";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { noStoreByDefault } from "../../server/http/security-headers";
import {
  agentFor,
  createTestApp,
  firstLink,
  pathOf,
  signInByEmail,
  signInByInstitution,
  signInDemo,
  type TestApp,
} from "./helpers";

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});

describe("health and envelope", () => {
  it("GET /api/health answers ok with the version", async () => {
    const res = await request(t.app).get("/api/health").expect(200);
    expect(res.body).toEqual({ ok: true, version: expect.stringMatching(/^\d+\.\d+\.\d+/) });
  });

  it("unknown /api paths answer 404 with the envelope", async () => {
    const res = await request(t.app).get("/api/no-such-thing").expect(404);
    expect(res.body).toEqual({
      error: { code: "not_found", message: "No API route GET /api/no-such-thing." },
    });
    const post = await request(t.app).post("/api/studies/x/y/z").send({}).expect(404);
    expect(post.body.error.code).toBe("not_found");
  });

  it("GET /api/studies without a session is 401 with the envelope", async () => {
    const res = await request(t.app).get("/api/studies").expect(401);
    expect(res.headers["content-type"]).toMatch(/application\/json/);
    expect(res.body).toEqual({ error: { code: "unauthorized", message: "Sign in to continue." } });
  });

  it("GET /api/me without a session is 401", async () => {
    await request(t.app).get("/api/me").expect(401);
  });

  it("malformed JSON is 400 and an oversized body is 413, both with the envelope", async () => {
    const agent = await signInDemo(t, "owner@demo.covarion.test");
    const bad = await agent
      .post("/api/studies")
      .set("Content-Type", "application/json")
      .send("{nope")
      .expect(400);
    expect(bad.body.error.code).toBe("malformed_json");
    const big = await agent
      .post("/api/studies")
      .send({ name: "x", description: "y".repeat(1_100_000) })
      .expect(413);
    expect(big.body.error.code).toBe("payload_too_large");
  });

  it("validation failures name the field", async () => {
    const agent = await signInDemo(t, "owner@demo.covarion.test");
    const res = await agent.post("/api/studies").send({ name: "", extra: 1 }).expect(400);
    expect(res.body.error.code).toBe("validation_failed");
    const fields = (res.body.error.details as { field: string }[]).map((d) => d.field);
    expect(fields).toContain("body.name");
    const q = await agent.get("/api/studies?sort=name").expect(400);
    expect(q.body.error.details[0].field).toBe("query");
  });

  it("sets security headers with a content security policy", async () => {
    const res = await request(t.app).get("/api/health");
    expect(res.headers["content-security-policy"]).toContain("default-src 'self'");
    expect(res.headers["x-content-type-options"]).toBe("nosniff");
  });

  it("API answers are kept by no cache; pages and answers carry a Permissions-Policy", async () => {
    const agent = await signInDemo(t, "analyst@demo.covarion.test");
    for (const path of ["/api/studies", "/api/me", "/api/auth/session", "/api/health"]) {
      const res = await agent.get(path).expect(200);
      expect(res.headers["cache-control"], path).toContain("no-store");
    }
    expect((await request(t.app).get("/api/studies").expect(401)).headers["cache-control"]).toBe(
      "no-store",
    );
    expect(
      (await request(t.app).get("/api/no-such-thing").expect(404)).headers["cache-control"],
    ).toBe("no-store");
    for (const path of ["/api/health", "/sign-in"]) {
      const policy = String((await request(t.app).get(path)).headers["permissions-policy"]);
      for (const feature of [
        "camera=()",
        "microphone=()",
        "geolocation=()",
        "payment=()",
        "usb=()",
      ])
        expect(policy, path).toContain(feature);
    }
  });

  it("a route that sets its own caching keeps it", async () => {
    const app = express();
    app.use(noStoreByDefault);
    app.get("/view", (_req, res) => {
      res.set("Cache-Control", "private, no-cache").json({});
    });
    app.get("/plain", (_req, res) => {
      res.json({});
    });
    expect((await request(app).get("/view").expect(200)).headers["cache-control"]).toBe(
      "private, no-cache",
    );
    expect((await request(app).get("/plain").expect(200)).headers["cache-control"]).toBe(
      "no-store",
    );
  });

  it("lists sign-in methods and demo accounts", async () => {
    const res = await request(t.app).get("/api/auth-options").expect(200);
    expect(res.body.email).toEqual({ providerId: "nodemailer" });
    expect(res.body.institution.providerId).toBe("institution");
    expect(res.body.demoAccounts.map((a: { role: string }) => a.role)).toEqual([
      "owner",
      "analyst",
      "reviewer",
      "viewer",
    ]);
    expect(res.body.mailbox).toBe(true);
  });
});

describe("sign-in", () => {
  it("a new address signs in by e-mail link and /api/me returns it", async () => {
    const agent = await signInByEmail(t, "new.person@lab.example");
    const me = await agent.get("/api/me").expect(200);
    expect(me.body).toEqual({
      id: expect.any(String),
      email: "new.person@lab.example",
      name: null,
    });
    const mail = t.mail.latestTo("new.person@lab.example");
    expect(mail.subject).toBe("Your sign-in link for Covarion");
    expect(mail.html).toContain("Sign in to Covarion");
    expect(Date.parse(mail.sentAt)).not.toBeNaN();
    const studies = await agent.get("/api/studies").expect(200);
    expect(studies.body).toEqual([]);
  });

  it("the mailbox lists messages newest first", async () => {
    await signInByEmail(t, "first@lab.example");
    await signInByEmail(t, "second@lab.example");
    const res = await request(t.app).get("/api/dev/mail").expect(200);
    const order = (res.body as { to: string }[]).map((m) => m.to);
    expect(order.indexOf("second@lab.example")).toBeLessThan(order.indexOf("first@lab.example"));
    expect(res.body[0]).toEqual({
      id: expect.any(String),
      to: expect.any(String),
      subject: expect.any(String),
      text: expect.any(String),
      html: expect.any(String),
      sentAt: expect.any(String),
    });
  });

  it("a sign-in link works once", async () => {
    const agent = agentFor(t);
    const csrf = await agent.get("/api/auth/csrf");
    await agent
      .post("/api/auth/signin/nodemailer")
      .type("form")
      .send({ email: "once@lab.example", csrfToken: csrf.body.csrfToken })
      .expect(302);
    const link = pathOf(firstLink(t.mail.latestTo("once@lab.example").text));
    await agent.get(link).expect(302);
    const again = await agentFor(t).get(link).expect(302);
    expect(again.headers.location).toContain("error=Verification");
  });

  it("signs in through the institution's OpenID Connect provider", async () => {
    const agent = await signInByInstitution(t, "analyst@demo.covarion.test");
    const me = await agent.get("/api/me").expect(200);
    expect(me.body.email).toBe("analyst@demo.covarion.test");
    expect(me.body.name).toBe("Tomas Ferreira");
    const studies = await agent.get("/api/studies").expect(200);
    expect(studies.body).toHaveLength(1);
    expect(studies.body[0].role).toBe("analyst");
  });

  it("institution sign-in creates a person for a new address", async () => {
    const agent = await signInByInstitution(t, "New.Colleague@Uni.Example", "New Colleague");
    const me = await agent.get("/api/me").expect(200);
    expect(me.body).toMatchObject({ email: "new.colleague@uni.example", name: "New Colleague" });
  });

  it("demo sign-in gives a session cookie like Auth.js's, and rejects other addresses", async () => {
    const agent = agentFor(t);
    const res = await agent
      .post("/api/dev/demo-sign-in")
      .send({ email: "reviewer@demo.covarion.test" })
      .expect(200);
    const cookie = String(res.headers["set-cookie"]);
    expect(cookie).toMatch(/authjs\.session-token=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    expect((await agent.get("/api/me").expect(200)).body.email).toBe("reviewer@demo.covarion.test");
    await request(t.app)
      .post("/api/dev/demo-sign-in")
      .send({ email: "someone@else.example" })
      .expect(404);
  });

  it("signs out through Auth.js", async () => {
    const agent = await signInDemo(t, "viewer@demo.covarion.test");
    const csrf = await agent.get("/api/auth/csrf");
    await agent
      .post("/api/auth/signout")
      .type("form")
      .send({ csrfToken: csrf.body.csrfToken })
      .expect(302);
    await agent.get("/api/me").expect(401);
  });
});
