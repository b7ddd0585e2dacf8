/**
 * Serves the exported web app (Expo web, output mode "single") from `dist`.
 *
 * Hashed bundles under /_expo/static get a year-long immutable cache; other
 * files a short cache; any other GET outside /api that is not a file answers
 * dist/index.html with 200, so deep links such as /studies load the app,
 * which routes on the client. This is the one place that decides how paths
 * map to the build.
 */
import { existsSync } from "node:fs";
import { join } from "node:path";
import express, { type RequestHandler, Router } from "express";

export function serveWebBuild(distDir: string): Router {
  const router = Router();
  router.use(
    "/_expo/static",
    express.static(join(distDir, "_expo", "static"), { immutable: true, maxAge: "365d", index: false, fallthrough: false }),
  );
  router.use(express.static(distDir, { maxAge: "5m", index: false }));
  router.get(/^(?!\/api(?:\/|$)).*/, appShell(distDir));
  return router;
}

function appShell(distDir: string): RequestHandler {
  const index = join(distDir, "index.html");
  return (_req, res, next) => {
    if (!existsSync(index)) {
      res
        .status(503)
        .type("text")
        .send("The web app has not been built yet. Run `npm start` (it builds it) or `npm run build:web`.");
      return;
    }
    res.set("Cache-Control", "no-cache");
    res.sendFile(index, (error) => {
      if (error) next(error);
    });
  };
}
