/**
 * In production the demo and development helpers do not exist: the mail
 * fake's list, one-tap demo sign-in and the fake identity provider are gone,
 * and their paths answer 404 like any unknown route. E-mail goes to the
 * configured SMTP server (here a local SMTP catcher standing in for it).
 */
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { OpenDatabase } from "../../db/client";
import { seedDemo } from "../../db/seed";
import { createApp } from "../../server/app";
import { loadConfig } from "../../server/config";
import { startServices, type Services } from "../../server/dev/dev-services";
import { startMailFake, type MailFake } from "../../server/dev/mail-fake";
import { openTemplateDatabase } from "./helpers";

let smtp: MailFake;
let services: Services;
let database: OpenDatabase;
let app: ReturnType<typeof createApp>;
/** Production answers only requests addressed to PUBLIC_URL's host. */
const host = "covarion.lab.example";
const dataDir = mkdtempSync(join(tmpdir(), "covarion-prod-"));

beforeAll(async () => {
  smtp = await startMailFake();
  const config = loadConfig({
    NODE_ENV: "production",
    DATA_DIR: dataDir,
    SMTP_URL: `smtp://127.0.0.1:${smtp.port}`,
    PUBLIC_URL: "https://covarion.lab.example",
  });
  services = await startServices(config);
  database = await openTemplateDatabase();
  await seedDemo(database.db, { now: new Date() });
  app = createApp({
    config,
    db: database.db,
    mailer: services.mailer,
    mailbox: services.mailFake,
    institution: services.institution,
    log: () => {},
  });
});
afterAll(async () => {
  await services?.close();
  await smtp?.close();
  await database?.close();
  rmSync(dataDir, { recursive: true, force: true });
});

describe("production mode", () => {
  it("starts no local fakes", () => {
    expect(services.mailFake).toBeNull();
    expect(services.identityFake).toBeNull();
    expect(services.institution).toBeNull();
  });

  it("answers 404 for the mailbox and demo sign-in", async () => {
    expect(
      (await request(app).get("/api/dev/mail").set("Host", host).expect(404)).body.error.code,
    ).toBe("not_found");
    await request(app)
      .post("/api/dev/demo-sign-in")
      .set("Host", host)
      .send({ email: "owner@demo.covarion.test" })
      .expect(404);
  });

  it("offers e-mail sign-in only, with no demo accounts", async () => {
    const res = await request(app).get("/api/auth-options").set("Host", host).expect(200);
    expect(res.body).toEqual({
      email: { providerId: "nodemailer" },
      institution: null,
      demoAccounts: [],
      mailbox: false,
    });
  });

  it("sends the sign-in e-mail through the configured SMTP server and sets HSTS", async () => {
    // Secure cookies are not replayed over plain http by a cookie jar, so carry them by hand (as a browser on https would).
    const csrf = await request(app).get("/api/auth/csrf").set("Host", host).expect(200);
    const cookie = ([] as string[])
      .concat(csrf.headers["set-cookie"] ?? [])
      .map((c) => c.split(";")[0])
      .join("; ");
    const res = await request(app)
      .post("/api/auth/signin/nodemailer")
      .set("Host", host)
      .set("Cookie", cookie)
      .type("form")
      .send({ email: "pi@lab.example", csrfToken: csrf.body.csrfToken })
      .expect(302);
    expect(res.headers.location).not.toContain("error=");
    expect(smtp.messages()[0]).toMatchObject({
      to: "pi@lab.example",
      subject: "Your sign-in link for Covarion",
    });
    expect(res.headers["strict-transport-security"]).toBeDefined();
  });
});

describe("cookies behind https", () => {
  it("marks Auth.js cookies Secure when PUBLIC_URL is https", async () => {
    const res = await request(app).get("/api/auth/csrf").set("Host", host).expect(200);
    const cookies = ([] as string[]).concat(res.headers["set-cookie"] ?? []);
    expect(cookies.length).toBeGreaterThan(0);
    for (const c of cookies) {
      expect(c).toMatch(/; Secure/i);
      expect(c).toMatch(/HttpOnly/i);
      expect(c).toMatch(/SameSite=Lax/i);
    }
  });
});
