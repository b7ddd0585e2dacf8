/**
 * Covarion's configuration, parsed once at start-up from the environment.
 *
 * Every variable is documented in `.env.example`. Secrets that are not given
 * (the Auth.js secret, the fake identity provider's client secret and cookie
 * keys) are generated on first start into `<DATA_DIR>/secrets.json` (mode
 * 0600) and reused afterwards, so sessions survive a restart; that file lives
 * in the data directory and is never committed.
 *
 * `loadConfig` throws a `ConfigError` whose message names the variable and
 * what is wrong with it; `server/index.ts` prints it and exits.
 */
import { randomBytes } from "node:crypto";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { join, resolve } from "node:path";
import { z } from "zod";

export class ConfigError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ConfigError";
  }
}

const flag = z
  .enum(["1", "0", "true", "false", "on", "off", "yes", "no"])
  .transform((v) => v === "1" || v === "true" || v === "on" || v === "yes");

const positiveInt = z.coerce.number().int().min(1);

/** The largest MAX_UPLOAD_MB accepted: the largest upload size tested. */
const MAX_UPLOAD_MB_CEILING = 2048;

const envSchema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  PORT: z.coerce.number().int().min(1).max(65535).default(3000),
  HOST: z.string().min(1).default("127.0.0.1"),
  DATA_DIR: z.string().min(1).default("./data"),
  DATABASE_URL: z
    .string()
    .regex(
      /^postgres(ql)?:\/\/\S+$/,
      "a PostgreSQL address such as postgres://user@host:5432/covarion",
    )
    .optional(),
  PUBLIC_URL: z.url({ protocol: /^https?$/ }).optional(),
  DEMO: flag.optional(),
  TRUST_PROXY: z.string().optional(),
  AUTH_SECRET: z.string().min(32).optional(),
  MAIL_FROM: z.string().min(3).default("Covarion <no-reply@covarion.test>"),
  SMTP_URL: z.url({ protocol: /^smtps?$/ }).optional(),
  OIDC_ISSUER: z.url({ protocol: /^https?$/ }).optional(),
  OIDC_CLIENT_ID: z.string().min(1).optional(),
  OIDC_CLIENT_SECRET: z.string().min(1).optional(),
  OIDC_NAME: z.string().min(1).default("Institution"),
  BODY_LIMIT: z
    .string()
    .regex(/^\d+(b|kb|mb)$/i, "a size such as 1mb or 200kb")
    .default("1mb"),
  RATE_LIMIT_WINDOW_MINUTES: positiveInt.default(15),
  RATE_LIMIT_PER_ADDRESS: positiveInt.default(5),
  RATE_LIMIT_PER_IP: positiveInt.default(30),
  REQUEST_IDLE_TIMEOUT_SECONDS: z.coerce.number().positive().default(30),
  REQUEST_TIMEOUT_SECONDS: z.coerce.number().positive().default(600),
  MAX_UPLOAD_MB: z.coerce
    .number()
    .int()
    .min(1)
    .max(MAX_UPLOAD_MB_CEILING, `at most ${MAX_UPLOAD_MB_CEILING} (the largest size tested)`)
    .default(50),
  MAX_UPLOAD_COLUMNS: z.coerce.number().int().min(2).max(1_000_000).default(20_000),
  /** Server admins: e-mail addresses, comma-separated, who may read server-wide pages (the worker list). */
  ADMIN_EMAILS: z
    .string()
    .transform((text) =>
      text
        .split(",")
        .map((a) => a.trim().toLowerCase())
        .filter((a) => a.length > 0),
    )
    .pipe(z.array(z.email("a comma-separated list of e-mail addresses")))
    .optional(),
});

export type Env = Readonly<Record<string, string | undefined>>;

export interface Secrets {
  authSecret: string;
  identityClientSecret: string;
  identityCookieKeys: string[];
}

export interface Config {
  nodeEnv: "development" | "production" | "test";
  production: boolean;
  port: number;
  host: string;
  dataDir: string;
  /** Where the embedded database's files live: `<dataDir>/db` (unused when `databaseUrl` is set). */
  databaseDir: string;
  /** A PostgreSQL server to use instead of the embedded database (DATABASE_URL); several processes may share it. */
  databaseUrl: string | null;
  publicUrl: string;
  /** Demo people, demo study and one-tap demo sign-in. */
  demo: boolean;
  /** Local mail fake and fake identity provider, `/api/dev/*` routes (never in production). */
  devServices: boolean;
  trustProxy: boolean | number | string;
  mailFrom: string;
  smtpUrl: string | null;
  oidc: { issuer: string; clientId: string; clientSecret: string; name: string } | null;
  oidcName: string;
  bodyLimit: string;
  rateLimit: { windowMs: number; perAddress: number; perIp: number };
  /** Longest wait for headers or pause in a body, and longest time to receive a whole request (server/http/request-timeouts.ts). */
  requestTimeouts: { idleMs: number; totalMs: number };
  /** Uploaded files: most bytes received (MAX_UPLOAD_MB) and most columns in a header (MAX_UPLOAD_COLUMNS). */
  uploads: { maxBytes: number; maxColumns: number };
  /** Server admins' e-mail addresses, lower-case (ADMIN_EMAILS): they may read the worker list. */
  adminEmails: string[];
  secrets: Secrets;
}

/**
 * Parses the environment into a `Config`, creating `DATA_DIR` and its
 * secrets file when needed. Throws `ConfigError` naming the first bad
 * variable.
 */
export function loadConfig(env: Env = process.env): Config {
  const e = parseEnv(envSchema, env);
  const production = e.NODE_ENV === "production";
  const dataDir = resolve(e.DATA_DIR);
  try {
    mkdirSync(dataDir, { recursive: true });
  } catch (error) {
    throw new ConfigError(
      `Configuration error: DATA_DIR ${dataDir} cannot be created (${(error as Error).message}).`,
    );
  }
  const stored = loadOrCreateSecrets(dataDir);
  const secrets: Secrets = { ...stored, authSecret: e.AUTH_SECRET ?? stored.authSecret };

  if (production && !e.PUBLIC_URL) {
    throw new ConfigError(
      "Configuration error: PUBLIC_URL is required when NODE_ENV=production (sign-in links are built from it and requests addressed to another host are refused). See .env.example.",
    );
  }
  if (production && !e.SMTP_URL) {
    throw new ConfigError(
      "Configuration error: SMTP_URL is required when NODE_ENV=production (e-mail sign-in and invitations need a mail server). See .env.example.",
    );
  }
  if (production && e.DATABASE_URL && !e.AUTH_SECRET) {
    throw new ConfigError(
      "Configuration error: AUTH_SECRET is required when NODE_ENV=production and DATABASE_URL is set (every web process on the database must sign sessions and sign-in links with the same secret). See .env.example.",
    );
  }
  const oidcParts = [e.OIDC_ISSUER, e.OIDC_CLIENT_ID, e.OIDC_CLIENT_SECRET];
  if (oidcParts.some(Boolean) && !oidcParts.every(Boolean)) {
    throw new ConfigError(
      "Configuration error: OIDC_ISSUER, OIDC_CLIENT_ID and OIDC_CLIENT_SECRET must be given together. See .env.example.",
    );
  }
  if (e.REQUEST_TIMEOUT_SECONDS < e.REQUEST_IDLE_TIMEOUT_SECONDS) {
    throw new ConfigError(
      `Configuration error: REQUEST_TIMEOUT_SECONDS (${e.REQUEST_TIMEOUT_SECONDS}) must be at least REQUEST_IDLE_TIMEOUT_SECONDS (${e.REQUEST_IDLE_TIMEOUT_SECONDS}). See .env.example.`,
    );
  }
  const oidc =
    e.OIDC_ISSUER && e.OIDC_CLIENT_ID && e.OIDC_CLIENT_SECRET
      ? {
          issuer: e.OIDC_ISSUER,
          clientId: e.OIDC_CLIENT_ID,
          clientSecret: e.OIDC_CLIENT_SECRET,
          name: e.OIDC_NAME,
        }
      : null;

  return {
    nodeEnv: e.NODE_ENV,
    production,
    port: e.PORT,
    host: e.HOST,
    dataDir,
    databaseDir: join(dataDir, "db"),
    databaseUrl: e.DATABASE_URL ?? null,
    publicUrl: (
      e.PUBLIC_URL ?? `http://${e.HOST.includes(":") ? `[${e.HOST}]` : e.HOST}:${e.PORT}`
    ).replace(/\/+$/, ""),
    demo: e.DEMO ?? !production,
    devServices: !production,
    trustProxy: parseTrustProxy(e.TRUST_PROXY),
    mailFrom: e.MAIL_FROM,
    smtpUrl: e.SMTP_URL ?? null,
    oidc,
    oidcName: e.OIDC_NAME,
    bodyLimit: e.BODY_LIMIT,
    rateLimit: {
      windowMs: e.RATE_LIMIT_WINDOW_MINUTES * 60_000,
      perAddress: e.RATE_LIMIT_PER_ADDRESS,
      perIp: e.RATE_LIMIT_PER_IP,
    },
    requestTimeouts: {
      idleMs: Math.round(e.REQUEST_IDLE_TIMEOUT_SECONDS * 1000),
      totalMs: Math.round(e.REQUEST_TIMEOUT_SECONDS * 1000),
    },
    uploads: uploadLimitsOf(e),
    adminEmails: e.ADMIN_EMAILS ?? [],
    secrets,
  };
}

function uploadLimitsOf(e: { MAX_UPLOAD_MB: number; MAX_UPLOAD_COLUMNS: number }) {
  return { maxBytes: e.MAX_UPLOAD_MB * 1024 * 1024, maxColumns: e.MAX_UPLOAD_COLUMNS };
}

/**
 * The upload limits alone (MAX_UPLOAD_MB, MAX_UPLOAD_COLUMNS): the recipe
 * command reads its files under them, as the server reads uploads. Throws
 * `ConfigError` naming a bad variable.
 */
export function loadUploadLimits(env: Env = process.env): Config["uploads"] {
  return uploadLimitsOf(
    parseEnv(envSchema.pick({ MAX_UPLOAD_MB: true, MAX_UPLOAD_COLUMNS: true }), env),
  );
}

function parseEnv<S extends z.ZodType>(schema: S, env: Env): z.output<S> {
  const parsed = schema.safeParse(stripEmpty(env));
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const name = String(issue?.path[0] ?? "environment");
    throw new ConfigError(
      `Configuration error: ${name} ${describeIssue(issue)} (got ${JSON.stringify(env[name] ?? null)}). See .env.example.`,
    );
  }
  return parsed.data;
}

function stripEmpty(env: Env): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of Object.entries(env)) if (v !== undefined && v !== "") out[k] = v;
  return out;
}

function describeIssue(issue: z.core.$ZodIssue | undefined): string {
  if (!issue) return "is invalid";
  return `is invalid: ${issue.message}`;
}

function parseTrustProxy(value: string | undefined): boolean | number | string {
  if (value === undefined) return false;
  if (value === "true") return true;
  if (value === "false") return false;
  if (/^\d+$/.test(value)) return Number(value);
  return value;
}

const secretsSchema = z.object({
  authSecret: z.string().min(32),
  identityClientSecret: z.string().min(16),
  identityCookieKeys: z.array(z.string().min(16)).min(1),
});

/** Reads `<dataDir>/secrets.json`, creating it with fresh random values on first start. */
function loadOrCreateSecrets(dataDir: string): Secrets {
  const file = join(dataDir, "secrets.json");
  if (existsSync(file)) {
    let raw: unknown;
    try {
      raw = JSON.parse(readFileSync(file, "utf8"));
    } catch (error) {
      throw new ConfigError(
        `Configuration error: ${file} is not valid JSON (${(error as Error).message}); remove it to generate new secrets.`,
      );
    }
    const result = secretsSchema.safeParse(raw);
    if (!result.success) {
      throw new ConfigError(
        `Configuration error: ${file} field ${result.error.issues[0]?.path.join(".")} is invalid; remove the file to generate new secrets.`,
      );
    }
    return result.data;
  }
  const secrets: Secrets = {
    authSecret: randomBytes(32).toString("base64url"),
    identityClientSecret: randomBytes(24).toString("base64url"),
    identityCookieKeys: [randomBytes(24).toString("base64url")],
  };
  try {
    writeFileSync(file, `${JSON.stringify(secrets, null, 2)}\n`, { mode: 0o600, flag: "wx" });
  } catch (error) {
    // Another process created it between our check and our write: use theirs.
    if ((error as NodeJS.ErrnoException).code === "EEXIST") return loadOrCreateSecrets(dataDir);
    throw error;
  }
  return secrets;
}
