/**
 * Configuration: defaults, secrets generated once into DATA_DIR and reused,
 * and fail-fast messages that name the variable.
 */
import { mkdtempSync, readFileSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { ConfigError, loadConfig, loadUploadLimits } from "../../server/config";

const dirs: string[] = [];
function dataDir(): string {
  const dir = mkdtempSync(join(tmpdir(), "covarion-config-"));
  dirs.push(dir);
  return dir;
}
afterAll(() => {
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

describe("loadConfig", () => {
  it("applies the documented defaults", () => {
    const dir = dataDir();
    const config = loadConfig({ DATA_DIR: dir });
    expect(config).toMatchObject({
      port: 3000,
      host: "127.0.0.1",
      publicUrl: "http://127.0.0.1:3000",
      nodeEnv: "development",
      demo: true,
      devServices: true,
      databaseDir: join(dir, "db"),
      oidc: null,
      smtpUrl: null,
      requestTimeouts: { idleMs: 30_000, totalMs: 600_000 },
    });
  });

  it("uses PORT, HOST and PUBLIC_URL when given, and turns demo off in production unless asked", () => {
    const config = loadConfig({ DATA_DIR: dataDir(), PORT: "4100", HOST: "0.0.0.0" });
    expect(config.publicUrl).toBe("http://0.0.0.0:4100");
    expect(
      loadConfig({ DATA_DIR: dataDir(), PUBLIC_URL: "https://covarion.lab.example/" }).publicUrl,
    ).toBe("https://covarion.lab.example");
    const prod = loadConfig({
      DATA_DIR: dataDir(),
      NODE_ENV: "production",
      SMTP_URL: "smtp://mail.lab.example:587",
      PUBLIC_URL: "https://covarion.lab.example",
    });
    expect(prod).toMatchObject({ demo: false, devServices: false, production: true });
    expect(
      loadConfig({
        DATA_DIR: dataDir(),
        NODE_ENV: "production",
        SMTP_URL: "smtp://m.example",
        PUBLIC_URL: "https://c.example",
        DEMO: "on",
      }).demo,
    ).toBe(true);
  });

  it("generates secrets on first start into DATA_DIR (mode 600) and reuses them", () => {
    const dir = dataDir();
    const first = loadConfig({ DATA_DIR: dir });
    const second = loadConfig({ DATA_DIR: dir });
    expect(first.secrets).toEqual(second.secrets);
    expect(first.secrets.authSecret.length).toBeGreaterThanOrEqual(32);
    expect(statSync(join(dir, "secrets.json")).mode & 0o777).toBe(0o600);
    expect(JSON.parse(readFileSync(join(dir, "secrets.json"), "utf8")).authSecret).toBe(
      first.secrets.authSecret,
    );
    expect(loadConfig({ DATA_DIR: dir, AUTH_SECRET: "s".repeat(40) }).secrets.authSecret).toBe(
      "s".repeat(40),
    );
  });

  it("fails fast naming the variable", () => {
    expect(() => loadConfig({ DATA_DIR: dataDir(), PORT: "eighty" })).toThrow(ConfigError);
    expect(() => loadConfig({ DATA_DIR: dataDir(), PORT: "eighty" })).toThrow(
      /PORT is invalid.*"eighty"/,
    );
    expect(() => loadConfig({ DATA_DIR: dataDir(), PUBLIC_URL: "ftp://x" })).toThrow(/PUBLIC_URL/);
    expect(() =>
      loadConfig({ DATA_DIR: dataDir(), NODE_ENV: "production", PUBLIC_URL: "https://c.example" }),
    ).toThrow(/SMTP_URL is required/);
    // Sign-in links are built from PUBLIC_URL alone, so production cannot guess it from HOST and PORT.
    expect(() =>
      loadConfig({ DATA_DIR: dataDir(), NODE_ENV: "production", SMTP_URL: "smtp://m.example" }),
    ).toThrow(/PUBLIC_URL is required/);
    expect(() => loadConfig({ DATA_DIR: dataDir(), OIDC_ISSUER: "https://idp.example" })).toThrow(
      /must be given together/,
    );
    expect(() => loadConfig({ DATA_DIR: dataDir(), AUTH_SECRET: "short" })).toThrow(/AUTH_SECRET/);
    expect(() => loadConfig({ DATA_DIR: dataDir(), REQUEST_IDLE_TIMEOUT_SECONDS: "0" })).toThrow(
      /REQUEST_IDLE_TIMEOUT_SECONDS/,
    );
    expect(() =>
      loadConfig({
        DATA_DIR: dataDir(),
        REQUEST_IDLE_TIMEOUT_SECONDS: "60",
        REQUEST_TIMEOUT_SECONDS: "30",
      }),
    ).toThrow(
      /REQUEST_TIMEOUT_SECONDS \(30\) must be at least REQUEST_IDLE_TIMEOUT_SECONDS \(60\)/,
    );
    expect(
      loadConfig({
        DATA_DIR: dataDir(),
        REQUEST_IDLE_TIMEOUT_SECONDS: "0.5",
        REQUEST_TIMEOUT_SECONDS: "90",
      }).requestTimeouts,
    ).toEqual({ idleMs: 500, totalMs: 90_000 });
  });
  it("reads DATABASE_URL: a PostgreSQL address, and in production only with AUTH_SECRET", () => {
    expect(loadConfig({ DATA_DIR: dataDir() }).databaseUrl).toBeNull();
    const url = "postgres://covarion@db.example.org:5432/covarion";
    expect(loadConfig({ DATA_DIR: dataDir(), DATABASE_URL: url }).databaseUrl).toBe(url);
    expect(() => loadConfig({ DATA_DIR: dataDir(), DATABASE_URL: "mysql://x@y/z" })).toThrow(
      /DATABASE_URL is invalid: a PostgreSQL address/,
    );
    const production = {
      DATA_DIR: dataDir(),
      NODE_ENV: "production",
      PUBLIC_URL: "https://covarion.example.org",
      SMTP_URL: "smtp://mail.example.org",
      DATABASE_URL: url,
    };
    expect(() => loadConfig(production)).toThrow(/AUTH_SECRET is required .* DATABASE_URL/);
    expect(loadConfig({ ...production, AUTH_SECRET: "s".repeat(32) }).databaseUrl).toBe(url);
  });

  it("reads ADMIN_EMAILS: comma-separated addresses, trimmed and lower-cased; none by default", () => {
    expect(loadConfig({ DATA_DIR: dataDir() }).adminEmails).toEqual([]);
    expect(
      loadConfig({
        DATA_DIR: dataDir(),
        ADMIN_EMAILS: " IT-Admin@Lab.example, core@lab.example,, ",
      }).adminEmails,
    ).toEqual(["it-admin@lab.example", "core@lab.example"]);
    expect(() =>
      loadConfig({ DATA_DIR: dataDir(), ADMIN_EMAILS: "it-admin@lab.example; core" }),
    ).toThrow(/ADMIN_EMAILS is invalid: a comma-separated list of e-mail addresses/);
  });
});

describe("loadUploadLimits", () => {
  it("reads MAX_UPLOAD_MB and MAX_UPLOAD_COLUMNS alone, as loadConfig does", () => {
    expect(loadUploadLimits({})).toEqual(loadConfig({ DATA_DIR: dataDir() }).uploads);
    expect(loadUploadLimits({ MAX_UPLOAD_MB: "200", MAX_UPLOAD_COLUMNS: "50" })).toEqual({
      maxBytes: 200 * 1024 * 1024,
      maxColumns: 50,
    });
    expect(() => loadUploadLimits({ MAX_UPLOAD_MB: "4096" })).toThrow(
      /MAX_UPLOAD_MB is invalid: at most 2048/,
    );
  });
});
