/**
 * Serving the exported web app: hashed bundles with a long immutable cache
 * and compression, index.html for client-side deep links, JSON 404 for
 * unknown /api paths even though every other path answers the app, and
 * 404 for the demo-only pages (the local mailbox) in production.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { OpenDatabase } from "../../db/client";
import { createApp } from "../../server/app";
import { loadConfig } from "../../server/config";
import { startServices, type Services } from "../../server/dev/dev-services";
import { createTestApp, openTemplateDatabase, type TestApp } from "./helpers";

const dist = mkdtempSync(join(tmpdir(), "covarion-dist-"));
const prodDataDir = mkdtempSync(join(tmpdir(), "covarion-dist-prod-"));
let t: TestApp;
let prod: { app: ReturnType<typeof createApp>; services: Services; database: OpenDatabase };
beforeAll(async () => {
  mkdirSync(join(dist, "_expo", "static", "js", "web"), { recursive: true });
  writeFileSync(
    join(dist, "index.html"),
    '<!DOCTYPE html><html><head><title>Covarion</title></head><body><div id="root"></div></body></html>',
  );
  writeFileSync(
    join(dist, "_expo", "static", "js", "web", "entry-0123abcd.js"),
    `console.log(${JSON.stringify("x".repeat(5000))});`,
  );
  writeFileSync(join(dist, "favicon.ico"), "icon");
  t = await createTestApp({ seed: false, distDir: dist });
  const config = loadConfig({
    NODE_ENV: "production",
    DATA_DIR: prodDataDir,
    SMTP_URL: "smtp://127.0.0.1:9",
    PUBLIC_URL: "https://covarion.lab.example",
  });
  const services = await startServices(config);
  const database = await openTemplateDatabase();
  prod = {
    app: createApp({
      config,
      db: database.db,
      mailer: services.mailer,
      institution: null,
      distDir: dist,
      log: () => {},
    }),
    services,
    database,
  };
});
afterAll(async () => {
  await t?.close();
  await (prod?.app.locals.fitJobs as { close(): Promise<void> } | undefined)?.close();
  await prod?.services.close();
  await prod?.database.close();
  rmSync(dist, { recursive: true, force: true });
  rmSync(prodDataDir, { recursive: true, force: true });
});

describe("web build", () => {
  it("serves hashed bundles compressed, with a year-long immutable cache", async () => {
    const res = await request(t.app)
      .get("/_expo/static/js/web/entry-0123abcd.js")
      .set("Accept-Encoding", "gzip")
      .expect(200);
    expect(res.headers["cache-control"]).toBe("public, max-age=31536000, immutable");
    expect(res.headers["content-encoding"]).toBe("gzip");
    await request(t.app).get("/_expo/static/js/web/missing.js").expect(404);
  });

  it("serves other files with a short cache", async () => {
    const res = await request(t.app).get("/favicon.ico").expect(200);
    expect(res.headers["cache-control"]).toBe("public, max-age=300");
  });

  it("answers index.html for the root and deep links", async () => {
    for (const path of ["/", "/studies", "/studies/abc/fits", "/invitations/some-token"]) {
      const res = await request(t.app).get(path).expect(200);
      expect(res.text).toContain("<title>Covarion</title>");
      expect(res.headers["cache-control"]).toBe("no-cache");
    }
  });

  it("answers the local mailbox page outside production", async () => {
    const res = await request(t.app).get("/mailbox").expect(200);
    expect(res.text).toContain("<title>Covarion</title>");
  });

  it("answers 404 for the local mailbox page in production, and the app for other pages", async () => {
    for (const path of ["/mailbox", "/mailbox/", "/Mailbox", "/mailbox/anything"]) {
      const res = await request(prod.app).get(path).set("Host", "covarion.lab.example").expect(404);
      expect(res.text).toContain("<title>Covarion</title>");
      expect(res.headers["cache-control"]).toBe("no-cache");
    }
    await request(prod.app).get("/studies").set("Host", "covarion.lab.example").expect(200);
    await request(prod.app).get("/mailboxes").set("Host", "covarion.lab.example").expect(200);
  });

  it("keeps JSON 404 for unknown API paths", async () => {
    const res = await request(t.app).get("/api/studies-typo").expect(404);
    expect(res.body.error.code).toBe("not_found");
  });
});
