/**
 * Builds Covarion's Express app from its dependencies (supertest imports
 * this; server/index.ts listens). Order matters:
 *
 * 1. security headers (helmet, with a CSP the exported web app runs under;
 *    a Permissions-Policy; `Cache-Control: no-store` on /api answers unless
 *    the route sets its own), the host check (a request addressed to another host than PUBLIC_URL's
 *    is refused), compression, the same-origin check for state-changing
 *    /api requests;
 * 2. the rate limit on sign-in e-mail requests, then Auth.js at /api/auth
 *    (before the JSON parser: it reads its own bodies), which sees every
 *    request as made to PUBLIC_URL, so its links and redirects start there;
 * 3. the JSON parser (size-limited), the session lookup, one router per
 *    resource under /api, 404 JSON for unknown /api paths;
 * 4. the exported web build for every other GET;
 * 5. the one error middleware.
 */
import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { ExpressAuth } from "@auth/express";
import compression from "compression";
import express, { type Express } from "express";
import helmet from "helmet";
import type { Database } from "../db/client";
import { authConfig, emailProviderId, type InstitutionProvider } from "./auth/auth-config";
import { loadSession } from "./auth/session";
import type { Config } from "./config";
import type { CaughtMail } from "./dev/mail-fake";
import { apiNotFound, errorHandler } from "./http/errors";
import { hostGuard, pinToPublicUrl } from "./http/host-check";
import { limitByIpAndAddress } from "./http/rate-limits";
import { sameOrigin } from "./http/same-origin";
import { noStoreByDefault, setPermissionsPolicy } from "./http/security-headers";
import { serveWebBuild } from "./http/web-build";
import type { FitJobs } from "./jobs/fit-jobs";
import { createFitJobs } from "./services/fit-store";
import { activityRoutes } from "./routes/activity";
import { datasetRoutes } from "./routes/datasets";
import { plannerRoutes } from "./routes/planner";
import { reliabilityRoutes } from "./routes/reliability";
import type { RouteDeps } from "./routes/deps";
import { devRoutes } from "./routes/dev";
import { fitRoutes } from "./routes/fits";
import { fitExportRoutes } from "./routes/fit-exports";
import { fitFigureRoutes } from "./routes/fit-figures";
import { fitReportRoutes } from "./routes/fit-report";
import { fitSealingRoutes } from "./routes/fit-sealing";
import { invitationRoutes } from "./routes/invitations";
import { memberRoutes } from "./routes/members";
import { modelRoutes } from "./routes/models";
import { rosterRoutes } from "./routes/roster";
import { planRoutes } from "./routes/plans";
import { setAsideRoutes } from "./routes/set-asides";
import { studyRoutes } from "./routes/studies";
import { systemRoutes } from "./routes/system";
import { workerRoutes } from "./routes/workers";
import type { Mailer } from "./services/mailer";
import { FitNotices } from "./services/notices";
import { PreviewStore } from "./services/preview-store";
import { noticeRoutes } from "./routes/notices";

const root = join(dirname(fileURLToPath(import.meta.url)), "..");

export interface AppDeps {
  config: Config;
  db: Database;
  mailer: Mailer;
  /** The local mail fake (demo/development), shown at GET /api/dev/mail. */
  mailbox?: { messages(): CaughtMail[] } | null;
  /** The OpenID Connect provider for institution sign-in (the local fake or the configured one). */
  institution?: InstitutionProvider | null;
  clock?: () => Date;
  /** Directory of the exported web app (default: ./dist at the project root). */
  distDir?: string;
  log?: (error: unknown, context: string) => void;
  /**
   * The fit jobs (worker-thread pool). Default: a new one for this app,
   * available as `app.locals.fitJobs`; whoever starts the app closes it.
   */
  fitJobs?: FitJobs;
}

export const version: string = (
  JSON.parse(readFileSync(join(root, "package.json"), "utf8")) as { version: string }
).version;

export function createApp(deps: AppDeps): Express {
  const { config, db } = deps;
  const clock = deps.clock ?? (() => new Date());
  const log =
    deps.log ??
    ((error: unknown, context: string) => console.error(`[covarion] ${context}:`, error));
  const institution = deps.institution ?? null;
  const routeDeps: RouteDeps = {
    db,
    config,
    mailer: deps.mailer,
    clock,
    mailbox: config.devServices ? (deps.mailbox ?? null) : null,
    institution,
    version,
  };

  const fitJobs = deps.fitJobs ?? createFitJobs(db, { clock, log });
  // E-mail notices go out after a fit is done or sealed, never holding either up (services/notices.ts).
  const notices = new FitNotices({
    db,
    mailer: deps.mailer,
    publicUrl: config.publicUrl,
    clock,
    log,
  });
  fitJobs.subscribeAll((e) => {
    if (e.type === "status" && e.status === "done") notices.fitDone(e.fitId);
  });

  const app = express();
  app.locals.db = db;
  app.locals.fitJobs = fitJobs;
  app.locals.notices = notices;
  app.set("trust proxy", config.trustProxy);
  app.set("query parser", "simple");
  app.disable("x-powered-by");

  const https = config.publicUrl.startsWith("https:");
  const formTargets = ["'self'", ...(institution ? [new URL(institution.issuer).origin] : [])];
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: true,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          // 'unsafe-inline' stays: the fonts' @font-face rules are written into a <style> at run time (DEVELOPERS.md, Security).
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", "data:", "blob:"],
          fontSrc: ["'self'", "data:"],
          connectSrc: ["'self'"],
          formAction: formTargets,
          frameAncestors: ["'none'"],
          objectSrc: ["'none'"],
          upgradeInsecureRequests: https ? [] : null,
        },
      },
      strictTransportSecurity: https ? undefined : false,
    }),
  );
  app.use(setPermissionsPolicy);
  app.use("/api", noStoreByDefault);
  const hostPolicy = { publicUrl: config.publicUrl, production: config.production };
  app.use(hostGuard(hostPolicy));
  // API answers are made afresh for each request: the fastest gzip level (a finished fit's view of
  // 400 regions compresses in ~8 ms instead of ~19 ms, ~7 % larger). The web build keeps the default.
  const apiCompression = compression({ level: 1 });
  const fileCompression = compression();
  app.use((req, res, next) =>
    (req.path.startsWith("/api/") ? apiCompression : fileCompression)(req, res, next),
  );
  app.use("/api", sameOrigin(hostPolicy));

  const signInBody = [
    express.urlencoded({ extended: false, limit: "16kb" }),
    express.json({ limit: "16kb" }),
  ];
  const signInLimits = limitByIpAndAddress("sign-in e-mail", config.rateLimit, (req) => {
    const email = (req.body as { email?: unknown } | undefined)?.email;
    return typeof email === "string" && email.trim() ? email.trim().toLowerCase() : null;
  });
  app.post(`/api/auth/signin/${emailProviderId}`, ...signInBody, ...signInLimits);
  app.use(
    "/api/auth",
    pinToPublicUrl(config.publicUrl),
    ExpressAuth(
      authConfig({
        db,
        mailer: deps.mailer,
        institution,
        secret: config.secrets.authSecret,
        secureCookies: https,
        log,
      }),
    ),
  );

  app.use("/api", express.json({ limit: config.bodyLimit }), loadSession(db, clock));
  app.use("/api", systemRoutes(routeDeps));
  app.use("/api", workerRoutes(routeDeps));
  if (config.devServices) app.use("/api", devRoutes(routeDeps));
  app.use("/api", studyRoutes(routeDeps));
  app.use("/api", memberRoutes(routeDeps));
  app.use("/api", invitationRoutes(routeDeps));
  app.use("/api", activityRoutes(routeDeps));
  app.use("/api", datasetRoutes(routeDeps, new PreviewStore()));
  app.use("/api", rosterRoutes(routeDeps));
  app.use("/api", plannerRoutes(routeDeps));
  app.use("/api", reliabilityRoutes(routeDeps));
  app.use("/api", modelRoutes(routeDeps, fitJobs.data));
  app.use("/api", fitRoutes(routeDeps, fitJobs));
  app.use("/api", fitExportRoutes(routeDeps));
  app.use("/api", fitFigureRoutes(routeDeps));
  app.use("/api", fitReportRoutes(routeDeps, fitJobs));
  app.use("/api", fitSealingRoutes(routeDeps, fitJobs, notices));
  app.use("/api", noticeRoutes(routeDeps));
  app.use("/api", setAsideRoutes(routeDeps));
  app.use("/api", planRoutes(routeDeps));
  app.use("/api", apiNotFound);

  app.use(serveWebBuild(deps.distDir ?? join(root, "dist"), { demoPages: config.devServices }));
  app.use(errorHandler(log));
  return app;
}
