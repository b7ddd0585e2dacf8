/**
 * The real server and the browser one test file shares: started before the
 * file's tests, stopped after them. Read `.server` and `.browser` inside
 * hooks and tests (not at the top of the file: they do not exist yet).
 */
import type { Browser } from "playwright-core";
import { afterAll, beforeAll } from "vitest";
import { launchBrowser, type RunningServer, startServer } from "./harness";

export interface E2eSession {
  readonly server: RunningServer;
  readonly browser: Browser;
}

/** Registers the file's start and stop hooks; call at the top level of a test file, before its own hooks. */
export function sharedServerAndBrowser(): E2eSession {
  let server: RunningServer | undefined;
  let browser: Browser | undefined;
  beforeAll(async () => {
    server = await startServer();
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });
  const started = <T>(value: T | undefined, what: string): T => {
    if (value === undefined)
      throw new Error(`the ${what} is not started yet: read it inside a hook or test`);
    return value;
  };
  return {
    get server() {
      return started(server, "server");
    },
    get browser() {
      return started(browser, "browser");
    },
  };
}
