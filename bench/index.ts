/**
 * `npm run bench`: runs every suite in bench/suites (each a module whose
 * default export is an async function printing its own figures), one after
 * another, so the figures are not disturbed by each other. Pass suite names
 * to run only those: `npm run bench -- stats intake`.
 */
import { readdirSync } from "node:fs";
import { basename, dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import os from "node:os";

const here = dirname(fileURLToPath(import.meta.url));
const wanted = process.argv.slice(2);
const suites = readdirSync(join(here, "suites"))
  .filter((f) => f.endsWith(".ts"))
  .sort()
  .filter((f) => wanted.length === 0 || wanted.includes(basename(f, ".ts")));

console.log(
  `Covarion benchmarks — Node ${process.version}, ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? "unknown CPU"}`,
);
for (const file of suites) {
  console.log(`\n== ${basename(file, ".ts")} ==`);
  const mod = (await import(pathToFileURL(join(here, "suites", file)).href)) as {
    default: () => Promise<void>;
  };
  await mod.default();
}
