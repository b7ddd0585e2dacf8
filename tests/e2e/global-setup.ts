/**
 * Browser tests need Debian's Chromium and the exported web build. Installs
 * Chromium with apt when it is missing (CI runs as root) and builds the web
 * export when it is stale.
 */
import { execSync } from "node:child_process";
import { existsSync } from "node:fs";
import { ensureWebBuild } from "../../scripts/web-build";
import { chromiumPath } from "./harness";

export default function setup(): void {
  if (!existsSync(chromiumPath)) {
    console.log("Installing Debian's chromium for the browser tests…");
    execSync(
      "apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium",
      { stdio: "inherit" },
    );
  }
  ensureWebBuild();
}
