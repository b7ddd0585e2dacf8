/**
 * API test helpers: a real Covarion app (real migrations, real local mail
 * and identity fakes, real Auth.js) listening on a free 127.0.0.1 port, and
 * ways to sign people in through the real flows.
 */
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { eq } from "drizzle-orm";
import request from "supertest";
import { inject } from "vitest";
import { randomBytes } from "node:crypto";
import {
  openDatabase,
  openServerDatabase,
  type Database,
  type EmbeddedDatabase,
  type OpenDatabase,
} from "../../db/client";
import { migrateDatabase } from "../../db/migrate";
import { demoPeople, demoStudy, seedDemo } from "../../db/seed";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { studies, users } from "../../db/schema";
import { currentVersions } from "../../server/services/datasets";
import { createApp } from "../../server/app";
import { loadConfig, type Config } from "../../server/config";
import { startServices, type Services } from "../../server/dev/dev-services";
import type { CaughtMail } from "../../server/dev/mail-fake";
import { applyRequestTimeouts } from "../../server/http/request-timeouts";

export type Agent = ReturnType<typeof request.agent>;

export interface TestApp {
  /** The Express app (for `request(app)`). */
  app: ReturnType<typeof createApp>;
  /** Base URL of the listening server, e.g. http://127.0.0.1:41234. */
  url: string;
  db: Database;
  config: Config;
  services: Services;
  mail: {
    messages(): CaughtMail[];
    /** The newest message to `to` (throws when none). */
    latestTo(to: string): CaughtMail;
  };
  /** Moves the app's clock (invitation expiry). */
  advanceClock(ms: number): void;
  close(): Promise<void>;
}

export interface TestAppOptions {
  /** Seed the demo people and study (default true). */
  seed?: boolean;
  /** Extra environment (e.g. RATE_LIMIT_PER_ADDRESS). */
  env?: Record<string, string>;
  /** Open the database in this directory instead of memory. */
  dataDir?: string;
  /** Serve the web build from this directory (default: the project's dist). */
  distDir?: string;
}

/** Opens a database copied from the migrated template the global setup built. */
export async function openTemplateDatabase(dataDir?: string): Promise<EmbeddedDatabase> {
  const template = new Blob([readFileSync(inject("dbTemplate"))]);
  const database = await openDatabase({ dataDir, loadDataDir: template });
  await migrateDatabase(database.db);
  return database;
}

/**
 * In the `api-pg` project (tests/api/pg-global-setup.ts): a fresh database
 * on the test PostgreSQL server, copied from the migrated template, dropped
 * again on close. Elsewhere: null.
 */
export async function openServerTestDatabase(): Promise<OpenDatabase | null> {
  const postgres = inject("postgres");
  if (!postgres) return null;
  const { createDatabase, dropDatabase } = await import("../support/postgres-server");
  const name = `covarion_test_${randomBytes(6).toString("hex")}`;
  const database = await openServerDatabase(
    await createDatabase(postgres.adminUrl, name, postgres.template),
  );
  await migrateDatabase(database.db);
  return {
    ...database,
    async close() {
      await database.close();
      await dropDatabase(postgres.adminUrl, name);
    },
  };
}

export async function createTestApp(options: TestAppOptions = {}): Promise<TestApp> {
  const server: Server = createServer();
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const dataDir = mkdtempSync(join(tmpdir(), "covarion-api-"));
  const config = loadConfig({
    NODE_ENV: "test",
    DATA_DIR: dataDir,
    PUBLIC_URL: url,
    RATE_LIMIT_PER_ADDRESS: "1000",
    RATE_LIMIT_PER_IP: "1000",
    ...options.env,
  });
  applyRequestTimeouts(server, config.requestTimeouts);
  const database =
    (options.dataDir ? null : await openServerTestDatabase()) ??
    (await openTemplateDatabase(options.dataDir));
  let offset = 0;
  const clock = () => new Date(Date.now() + offset);
  if (options.seed !== false) await seedDemo(database.db, { now: clock() });
  const services = await startServices(config);
  const errors: unknown[] = [];
  const app = createApp({
    config,
    db: database.db,
    mailer: services.mailer,
    mailbox: services.mailFake,
    institution: services.institution,
    clock,
    distDir: options.distDir,
    log: (error) => errors.push(error),
  });
  server.on("request", app);
  const mailFake = services.mailFake;
  if (!mailFake) throw new Error("the mail fake did not start");
  return {
    app,
    url,
    db: database.db,
    config,
    services,
    mail: {
      messages: () => mailFake.messages(),
      latestTo(to) {
        const found = mailFake.messages().find((m) => m.to === to);
        if (!found)
          throw new Error(
            `no message to ${to}; mailbox: ${
              mailFake
                .messages()
                .map((m) => m.to)
                .join(", ") || "empty"
            }`,
          );
        return found;
      },
    },
    advanceClock(ms) {
      offset += ms;
    },
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await (app.locals.fitJobs as { close(): Promise<void> } | undefined)?.close();
      await services.close();
      await database.close();
      rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

/** The first http(s) link in a text. */
export function firstLink(text: string): string {
  const match = text.match(/https?:\/\/[^\s<>"')]+/);
  if (!match) throw new Error(`no link in: ${text}`);
  return match[0];
}

/** Path and query of an absolute URL (agents are bound to the app's base URL). */
export function pathOf(url: string): string {
  const u = new URL(url);
  return `${u.pathname}${u.search}`;
}

/** A fresh agent on the app, holding its own cookies. */
export function agentFor(t: TestApp): Agent {
  return request.agent(t.url);
}

/**
 * Signs `email` in through the real e-mail-link flow: CSRF token, POST to
 * Auth.js, read the link from the mail fake, follow it. Returns the agent
 * holding the session cookie.
 */
export async function signInByEmail(t: TestApp, email: string): Promise<Agent> {
  const agent = agentFor(t);
  const csrf = await agent.get("/api/auth/csrf").expect(200);
  const token = (csrf.body as { csrfToken: string }).csrfToken;
  const started = await agent
    .post("/api/auth/signin/nodemailer")
    .type("form")
    .send({ email, csrfToken: token, callbackUrl: `${t.url}/studies` });
  if (started.status !== 302 || String(started.headers.location).includes("error=")) {
    throw new Error(`e-mail sign-in did not start: ${started.status} ${started.headers.location}`);
  }
  const link = firstLink(t.mail.latestTo(email.toLowerCase()).text);
  const followed = await agent.get(pathOf(link));
  if (followed.status !== 302 || String(followed.headers.location) !== `${t.url}/studies`) {
    throw new Error(
      `the sign-in link did not sign in: ${followed.status} ${followed.headers.location}`,
    );
  }
  return agent;
}

/** Signs a demo person in through the demo one-tap route (a real database session). */
export async function signInDemo(t: TestApp, email: string): Promise<Agent> {
  const agent = agentFor(t);
  await agent.post("/api/dev/demo-sign-in").send({ email }).expect(200);
  return agent;
}

/** Signs `email` in through the fake institution's OpenID Connect flow. */
export async function signInByInstitution(
  t: TestApp,
  email: string,
  name?: string,
): Promise<Agent> {
  const agent = agentFor(t);
  const issuer = t.services.institution?.issuer;
  if (!issuer) throw new Error("no identity provider");
  const idp = request.agent(issuer);
  const csrf = await agent.get("/api/auth/csrf").expect(200);
  const started = await agent
    .post("/api/auth/signin/institution")
    .type("form")
    .send({
      csrfToken: (csrf.body as { csrfToken: string }).csrfToken,
      callbackUrl: `${t.url}/studies`,
    })
    .expect(302);
  const authorize = String(started.headers.location);
  if (!authorize.startsWith(issuer))
    throw new Error(`expected a redirect to the identity provider, got ${authorize}`);
  const toInteraction = await idp.get(pathOf(authorize)).expect(303);
  const interaction = String(toInteraction.headers.location);
  const loginPage = await idp.get(interaction).expect(200);
  if (!loginPage.text.includes("Institution sign-in"))
    throw new Error("the identity provider's login page did not show");
  const login = await idp
    .post(`${interaction}/login`)
    .type("form")
    .send(name ? { email, name } : { email })
    .expect(303);
  let location = String(login.headers.location);
  for (let hop = 0; hop < 5 && location.startsWith(issuer); hop++) {
    const next = await idp.get(pathOf(location));
    location = String(next.headers.location);
  }
  if (!location.startsWith(`${t.url}/api/auth/callback/institution`))
    throw new Error(`expected a redirect back to Covarion, got ${location}`);
  const done = await agent.get(pathOf(location));
  if (done.status !== 302 || String(done.headers.location) !== `${t.url}/studies`) {
    throw new Error(`institution sign-in did not finish: ${done.status} ${done.headers.location}`);
  }
  return agent;
}

/** The id of the person with this address. */
export async function userIdOf(db: Database, email: string): Promise<string> {
  const [row] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
  if (!row) throw new Error(`no person ${email}`);
  return row.id;
}

/** The seeded demo study with its demo tables confirmed (seeded now when missing), and its id. */
export async function demoStudyWithData(t: TestApp): Promise<string> {
  const [study] = await t.db.select().from(studies).where(eq(studies.name, demoStudy.name));
  const { brain } = await currentVersions(t.db, study.id);
  if (!brain) {
    const ownerId = await userIdOf(t.db, demoPeople[0].email);
    await seedDemoDatasets(t.db, { studyId: study.id, uploadedBy: ownerId, now: new Date() });
  }
  return study.id;
}

/** The session cookie of a demo person signed in through the demo route ("name=value"). */
export async function demoCookie(t: TestApp, email: string): Promise<string> {
  const res = await request(t.url).post("/api/dev/demo-sign-in").send({ email }).expect(200);
  return String(res.headers["set-cookie"]).split(";")[0];
}

/** Polls a fit until its status is one of `wanted`; its view then. Throws after `timeoutMs`. */
export async function waitForFitStatus(
  t: TestApp,
  cookie: string,
  fitId: string,
  wanted: readonly string[] = ["done", "failed", "cancelled"],
  timeoutMs = 120_000,
): Promise<Record<string, unknown>> {
  const start = Date.now();
  for (;;) {
    const res = await request(t.url).get(`/api/fits/${fitId}`).set("Cookie", cookie).expect(200);
    if (wanted.includes(res.body.status)) return res.body;
    if (Date.now() - start > timeoutMs) throw new Error(`fit ${fitId} stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** Supertest parser that keeps a response body as bytes: `.buffer(true).parse(binaryBody)`. */
export function binaryBody(
  res: request.Response,
  done: (error: Error | null, body: Buffer) => void,
): void {
  const stream = res as unknown as NodeJS.ReadableStream;
  const chunks: Buffer[] = [];
  stream.on("data", (c: Buffer) => chunks.push(c));
  stream.on("end", () => done(null, Buffer.concat(chunks)));
}
