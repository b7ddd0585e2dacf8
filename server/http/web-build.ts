/**
 * Serves the exported web app (Expo web, output mode "single") from `dist`.
 *
 * Hashed bundles under /_expo/static get a year-long immutable cache; other
 * files a short cache; any other GET outside /api that is not a file answers
 * dist/index.html with 200, so deep links such as /studies load the app,
 * which routes on the client. Pages of the demo and development helpers
 * (the local mailbox) answer 404 when those helpers are off (production):
 * the same index.html, whose screen then shows "Page not found" because
 * its API answers 404 too. This is the one place that decides how paths
 * map to the build.
 */
import { existsSync } from "node:fs";
import { join } from "node:path";
import express, { type RequestHandler, Router } from "express";

/** Client routes that exist only beside the demo and development helpers. */
const demoOnlyPages = /^\/mailbox(?:\/.*)?$/i;

export interface WebBuildOptions {
  /** The demo and development helpers run (not production): their pages are served. */
  demoPages: boolean;
}

export function serveWebBuild(distDir: string, options: WebBuildOptions): Router {
  const router = Router();
  router.use(
    "/_expo/static",
    express.static(join(distDir, "_expo", "static"), {
      immutable: true,
      maxAge: "365d",
      index: false,
      fallthrough: false,
    }),
  );
  router.use(express.static(distDir, { maxAge: "5m", index: false }));
  if (!options.demoPages) router.get(demoOnlyPages, appShell(distDir, 404));
  router.get(/^(?!\/api(?:\/|$)).*/, appShell(distDir, 200));
  return router;
}

function appShell(distDir: string, status: 200 | 404): RequestHandler {
  const index = join(distDir, "index.html");
  return (_req, res, next) => {
    if (!existsSync(index)) {
      res
        .status(503)
        .type("text")
        .send(
          "The web app has not been built yet. Run `npm start` (it builds it) or `npm run build:web`.",
        );
      return;
    }
    res.status(status).set("Cache-Control", "no-cache");
    res.sendFile(index, (error) => {
      if (error) next(error);
    });
  };
}
