/**
 * Builds the exported web app into dist/ when it is missing or older than
 * any of its sources. Used by `npm start` and by the browser tests.
 */
import { spawnSync } from "node:child_process";
import { existsSync, readdirSync, statSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";

export const projectRoot = resolve(dirname(fileURLToPath(import.meta.url)), "..");

const sources = [
  "app",
  "components",
  "hooks",
  "assets",
  "public",
  "contract",
  "app.json",
  "package.json",
  "package-lock.json",
];

function newestMtime(path: string): number {
  if (!existsSync(path)) return 0;
  const stat = statSync(path);
  if (!stat.isDirectory()) return stat.mtimeMs;
  let newest = stat.mtimeMs;
  for (const entry of readdirSync(path)) newest = Math.max(newest, newestMtime(join(path, entry)));
  return newest;
}

/** True when dist/index.html is missing or older than a web source. */
export function webBuildIsStale(root = projectRoot): boolean {
  const index = join(root, "dist", "index.html");
  if (!existsSync(index)) return true;
  const built = statSync(index).mtimeMs;
  return sources.some((source) => newestMtime(join(root, source)) > built);
}

/** Exports the web app when stale; throws if the export fails. */
export function ensureWebBuild(
  root = projectRoot,
  log: (line: string) => void = console.log,
): void {
  if (!webBuildIsStale(root)) return;
  log("Building the web app (expo export)…");
  const result = spawnSync("npx", ["expo", "export", "--platform", "web", "--output-dir", "dist"], {
    cwd: root,
    stdio: ["ignore", "inherit", "inherit"],
    env: { ...process.env, CI: "1", EXPO_NO_TELEMETRY: "1" },
  });
  if (result.status !== 0)
    throw new Error(`The web export failed with exit code ${result.status}.`);
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  ensureWebBuild();
}
