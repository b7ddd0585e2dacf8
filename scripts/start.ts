/**
 * `npm start`: builds the web app when dist/ is missing or older than its
 * sources (see scripts/web-build.ts), then starts the server, which prints
 * its address.
 */
import { ensureWebBuild } from "./web-build";

try {
  ensureWebBuild();
} catch (error) {
  console.error(`Covarion cannot start: ${(error as Error).message}`);
  process.exit(1);
}
await import("../server/index");
