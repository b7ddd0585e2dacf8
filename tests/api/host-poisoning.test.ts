/**
 * The request's Host header never decides where links and redirects point.
 *
 * Production (PUBLIC_URL https://covarion.example.org): sign-in links are
 * built from PUBLIC_URL alone, a request naming another host is refused
 * (421), and the same-origin check compares Origin with PUBLIC_URL, so
 * `Host: evil.example` with `Origin: http://evil.example` does not pass.
 * Demo and development: only loopback names (and PUBLIC_URL's host) are
 * answered, so a rebound DNS name cannot read the local mailbox.
 */
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import express from "express";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { OpenDatabase } from "../../db/client";
import { createApp } from "../../server/app";
import { loadConfig } from "../../server/config";
import { startServices, type Services } from "../../server/dev/dev-services";
import { startMailFake, type MailFake } from "../../server/dev/mail-fake";
import { errorHandler } from "../../server/http/errors";
import { sameOrigin } from "../../server/http/same-origin";
import {
  createTestApp,
  firstLink,
  openTemplateDatabase,
  pathOf,
  signInDemo,
  type TestApp,
} from "./helpers";

const publicUrl = "https://covarion.example.org";
const publicHost = "covarion.example.org";

describe("production: links and hosts come from PUBLIC_URL", () => {
  let smtp: MailFake;
  let services: Services;
  let database: OpenDatabase;
  let app: ReturnType<typeof createApp>;
  const dataDir = mkdtempSync(join(tmpdir(), "covarion-host-"));

  beforeAll(async () => {
    smtp = await startMailFake();
    const config = loadConfig({
      NODE_ENV: "production",
      DATA_DIR: dataDir,
      SMTP_URL: `smtp://127.0.0.1:${smtp.port}`,
      PUBLIC_URL: publicUrl,
    });
    services = await startServices(config);
    database = await openTemplateDatabase();
    app = createApp({
      config,
      db: database.db,
      mailer: services.mailer,
      institution: services.institution,
      log: () => {},
    });
  });
  afterAll(async () => {
    await (app?.locals.fitJobs as { close(): Promise<void> } | undefined)?.close();
    await services?.close();
    await smtp?.close();
    await database?.close();
    rmSync(dataDir, { recursive: true, force: true });
  });

  /** The CSRF token and the cookies that carry it, fetched with this Host header. */
  async function csrf(
    host: string,
  ): Promise<{ status: number; token: string | null; cookie: string }> {
    const res = await request(app).get("/api/auth/csrf").set("Host", host);
    const cookie = ([] as string[])
      .concat(res.headers["set-cookie"] ?? [])
      .map((c) => c.split(";")[0])
      .join("; ");
    return {
      status: res.status,
      token: (res.body as { csrfToken?: string }).csrfToken ?? null,
      cookie,
    };
  }

  /** Signs `email` in on the real host; returns the session cookie. */
  async function signIn(email: string): Promise<string> {
    const { token, cookie } = await csrf(publicHost);
    await request(app)
      .post("/api/auth/signin/nodemailer")
      .set("Host", publicHost)
      .set("Cookie", cookie)
      .type("form")
      .send({ email, csrfToken: token })
      .expect(302);
    const message = smtp.messages().find((m) => m.to === email);
    if (!message) throw new Error(`no mail to ${email}`);
    const back = await request(app)
      .get(pathOf(firstLink(message.text)))
      .set("Host", publicHost)
      .set("Cookie", cookie)
      .expect(302);
    const session = ([] as string[])
      .concat(back.headers["set-cookie"] ?? [])
      .find((c) => c.startsWith("__Secure-authjs.session-token="));
    if (!session) throw new Error("no session cookie");
    return session.split(";")[0] as string;
  }

  it("the probe of the report: an attacker's Host and Origin get no link to the attacker into the victim's e-mail", async () => {
    smtp.clear();
    const first = await csrf("attacker.example");
    // A server that refuses the host does not hand out a token either; take one from the real host then.
    const { token, cookie } = first.status === 200 ? first : await csrf(publicHost);
    const res = await request(app)
      .post("/api/auth/signin/nodemailer")
      .set("Host", "attacker.example")
      .set("Origin", "http://attacker.example")
      .set("Cookie", cookie)
      .type("form")
      .send({ email: "victim@example.org", csrfToken: token });
    expect(smtp.messages().filter((m) => m.text.includes("attacker.example"))).toEqual([]);
    expect(smtp.messages().filter((m) => m.to === "victim@example.org")).toEqual([]);
    expect(first.status).toBe(421);
    expect(res.status).toBe(421);
    expect(res.body.error.code).toBe("misdirected_request");
    expect(res.body.error.message).toContain(publicHost);
  });

  it("a forwarded host from an untrusted client changes nothing: the link still names PUBLIC_URL", async () => {
    smtp.clear();
    const { token, cookie } = await csrf(publicHost);
    await request(app)
      .post("/api/auth/signin/nodemailer")
      .set("Host", publicHost)
      .set("X-Forwarded-Host", "attacker.example")
      .set("X-Forwarded-Proto", "http")
      .set("Cookie", cookie)
      .type("form")
      .send({ email: "forwarded@example.org", csrfToken: token })
      .expect(302);
    const link = firstLink(
      smtp.messages().find((m) => m.to === "forwarded@example.org")?.text ?? "",
    );
    expect(link.startsWith(`${publicUrl}/api/auth/callback/nodemailer?`)).toBe(true);
  });

  it("a legitimate sign-in gets a link and redirects that start with PUBLIC_URL, and the link signs in", async () => {
    smtp.clear();
    const { token, cookie } = await csrf(publicHost);
    const res = await request(app)
      .post("/api/auth/signin/nodemailer")
      .set("Host", publicHost)
      .set("Origin", publicUrl)
      .set("Cookie", cookie)
      .type("form")
      .send({ email: "pi@lab.example", csrfToken: token, callbackUrl: `${publicUrl}/studies` })
      .expect(302);
    expect(String(res.headers.location).startsWith(`${publicUrl}/`)).toBe(true);
    const link = firstLink(smtp.messages().find((m) => m.to === "pi@lab.example")?.text ?? "");
    expect(link.startsWith(`${publicUrl}/api/auth/callback/nodemailer?`)).toBe(true);
    const back = await request(app)
      .get(pathOf(link))
      .set("Host", publicHost)
      .set("Cookie", cookie)
      .expect(302);
    expect(back.headers.location).toBe(`${publicUrl}/studies`);
  });

  it("accepts the public host with its default port or in capitals", async () => {
    await request(app).get("/api/health").set("Host", `${publicHost}:443`).expect(200);
    await request(app).get("/api/health").set("Host", publicHost.toUpperCase()).expect(200);
    await request(app).get("/api/health").set("Host", `${publicHost}:8443`).expect(421);
    await request(app).get("/api/health").set("Host", `${publicHost}.attacker.example`).expect(421);
  });

  it("behind a trusted proxy the forwarded host is the one checked", async () => {
    const config = loadConfig({
      NODE_ENV: "production",
      DATA_DIR: dataDir,
      SMTP_URL: `smtp://127.0.0.1:${smtp.port}`,
      PUBLIC_URL: publicUrl,
      TRUST_PROXY: "loopback",
    });
    const proxied = createApp({
      config,
      db: database.db,
      mailer: services.mailer,
      institution: null,
      log: () => {},
    });
    try {
      await request(proxied)
        .get("/api/health")
        .set("Host", "127.0.0.1:3000")
        .set("X-Forwarded-Host", publicHost)
        .set("X-Forwarded-Proto", "https")
        .expect(200);
      const res = await request(proxied)
        .get("/api/health")
        .set("Host", publicHost)
        .set("X-Forwarded-Host", "attacker.example")
        .expect(421);
      expect(res.body.error.code).toBe("misdirected_request");
    } finally {
      await (proxied.locals.fitJobs as { close(): Promise<void> }).close();
    }
  });

  it("refuses other hosts with JSON under /api and a plain refusal elsewhere", async () => {
    for (const host of ["attacker.example", "127.0.0.1:3000", "localhost"]) {
      const api = await request(app).get("/api/health").set("Host", host).expect(421);
      expect(api.body.error.code).toBe("misdirected_request");
      const page = await request(app).get("/sign-in").set("Host", host).expect(421);
      expect(page.headers["content-type"]).toMatch(/^text\/plain/);
      expect(page.text).toContain(publicHost);
    }
  });

  it("a signed-in person's cookie used with Host and Origin both evil.example is refused and changes nothing", async () => {
    const session = await signIn("owner@lab.example");
    await request(app).get("/api/me").set("Host", publicHost).set("Cookie", session).expect(200);
    const res = await request(app)
      .post("/api/studies")
      .set("Host", "evil.example")
      .set("Origin", "http://evil.example")
      .set("Cookie", session)
      .send({ name: "Planted by another site" });
    expect(res.status).toBe(421);
    const wrongOrigin = await request(app)
      .post("/api/studies")
      .set("Host", publicHost)
      .set("Origin", "http://evil.example")
      .set("Cookie", session)
      .send({ name: "Planted by another site" })
      .expect(403);
    expect(wrongOrigin.body.error.code).toBe("cross_origin");
    const studies = await request(app)
      .get("/api/studies")
      .set("Host", publicHost)
      .set("Cookie", session)
      .expect(200);
    expect((studies.body as { name: string }[]).map((s) => s.name)).not.toContain(
      "Planted by another site",
    );
    await request(app)
      .post("/api/studies")
      .set("Host", publicHost)
      .set("Origin", publicUrl)
      .set("Cookie", session)
      .send({ name: "Own study" })
      .expect(201);
  });
});

describe("same-origin check", () => {
  function guarded(production: boolean) {
    const app = express();
    app.use(sameOrigin({ publicUrl, production }));
    app.post("/x", (_req, res) => {
      res.json({ ok: true });
    });
    app.use(errorHandler(() => {}));
    return app;
  }

  it("compares Origin with PUBLIC_URL, not with the Host header", async () => {
    const res = await request(guarded(true))
      .post("/x")
      .set("Host", "evil.example")
      .set("Origin", "http://evil.example")
      .expect(403);
    expect(res.body.error.code).toBe("cross_origin");
    await request(guarded(true))
      .post("/x")
      .set("Host", "evil.example")
      .set("Origin", publicUrl)
      .expect(200);
    await request(guarded(true))
      .post("/x")
      .set("Host", "127.0.0.1:3000")
      .set("Origin", "http://127.0.0.1:3000")
      .expect(403);
  });

  it("outside production also accepts the page's own loopback origin", async () => {
    await request(guarded(false))
      .post("/x")
      .set("Host", "localhost:3000")
      .set("Origin", "http://localhost:3000")
      .expect(200);
    await request(guarded(false))
      .post("/x")
      .set("Host", "evil.example")
      .set("Origin", "http://evil.example")
      .expect(403);
    await request(guarded(false))
      .post("/x")
      .set("Host", "localhost:3000")
      .set("Origin", "http://localhost:4000")
      .expect(403);
  });
});

describe("demo and development: loopback names only (DNS rebinding)", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp({ seed: true });
  });
  afterAll(async () => {
    await t?.close();
  });

  it("refuses the local mailbox to a rebound name", async () => {
    const res = await request(t.app).get("/api/dev/mail").set("Host", "evil.example").expect(421);
    expect(res.body.error.code).toBe("misdirected_request");
    await request(t.app)
      .get("/api/dev/mail")
      .set("Host", `evil.example:${new URL(t.url).port}`)
      .expect(421);
    await request(t.app).get("/mailbox").set("Host", "evil.example").expect(421);
    await request(t.app)
      .post("/api/dev/demo-sign-in")
      .set("Host", "evil.example")
      .send({ email: "owner@demo.covarion.test" })
      .expect(421);
  });

  it("the local identity service answers loopback names only", async () => {
    const issuer = t.services.institution?.issuer ?? "";
    await request(issuer)
      .get("/.well-known/openid-configuration")
      .set("Host", "evil.example")
      .expect(421);
    await request(issuer)
      .get("/.well-known/openid-configuration")
      .set("Host", new URL(issuer).host)
      .expect(200);
    await request(issuer)
      .get("/.well-known/openid-configuration")
      .set("Host", `localhost:${new URL(issuer).port}`)
      .expect(200);
  });

  it("answers localhost, 127.0.0.1 and [::1] on any port", async () => {
    for (const host of ["localhost:3000", "127.0.0.1", "[::1]:8080", "LOCALHOST"]) {
      await request(t.app).get("/api/dev/mail").set("Host", host).expect(200);
    }
  });

  it("a signed-in page on localhost may post; another site may not", async () => {
    const agent = await signInDemo(t, "owner@demo.covarion.test");
    await agent
      .post("/api/studies")
      .set("Host", "localhost:3000")
      .set("Origin", "http://localhost:3000")
      .send({ name: "Local" })
      .expect(201);
    await agent
      .post("/api/studies")
      .set("Origin", "http://evil.example")
      .send({ name: "Other site" })
      .expect(403);
  });
});
