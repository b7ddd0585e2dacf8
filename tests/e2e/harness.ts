/**
 * Browser-test harness: starts the real server on a free port with a fresh
 * temporary DATA_DIR, and drives Debian's Chromium through playwright-core.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { mkdirSync, mkdtempSync, rmSync } from "node:fs";
import { createServer } from "node:net";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { chromium, type Browser, type Page } from "playwright-core";
import { projectRoot } from "../../scripts/web-build";

export const chromiumPath = "/usr/bin/chromium";
export const screenshotDir = join(projectRoot, "tests", "e2e", "screenshots");

export const phone = { width: 390, height: 844 } as const;
export const wide = { width: 1280, height: 800 } as const;

export interface RunningServer {
  url: string;
  dataDir: string;
  output: () => string;
  stop: () => Promise<void>;
}

export async function freePort(): Promise<number> {
  return new Promise((resolvePort, reject) => {
    const server = createServer();
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => {
      const address = server.address();
      const port = typeof address === "object" && address ? address.port : 0;
      server.close(() => resolvePort(port));
    });
  });
}

/** Starts `server/index.ts` as a child process and waits for /api/health. */
export async function startServer(
  options: { dataDir?: string; env?: Record<string, string> } = {},
): Promise<RunningServer> {
  const port = await freePort();
  const dataDir = options.dataDir ?? mkdtempSync(join(tmpdir(), "covarion-e2e-"));
  const url = `http://127.0.0.1:${port}`;
  let log = "";
  const child: ChildProcess = spawn(process.execPath, ["--import", "tsx", "server/index.ts"], {
    cwd: projectRoot,
    env: {
      ...process.env,
      PORT: String(port),
      HOST: "127.0.0.1",
      DATA_DIR: dataDir,
      NODE_ENV: "development",
      ...options.env,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  child.stdout?.on("data", (chunk: Buffer) => {
    log += chunk.toString();
  });
  child.stderr?.on("data", (chunk: Buffer) => {
    log += chunk.toString();
  });
  const deadline = Date.now() + 120_000;
  for (;;) {
    if (child.exitCode !== null)
      throw new Error(`The server exited early (code ${child.exitCode}):\n${log}`);
    try {
      const response = await fetch(`${url}/api/health`);
      if (response.ok) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      child.kill("SIGKILL");
      throw new Error(`The server did not answer /api/health within 120 s:\n${log}`);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return {
    url,
    dataDir,
    output: () => log,
    stop: async () => {
      if (child.exitCode === null) {
        const exited = new Promise((r) => child.once("exit", r));
        child.kill("SIGTERM");
        await Promise.race([exited, new Promise((r) => setTimeout(r, 15_000))]);
        if (child.exitCode === null) child.kill("SIGKILL");
      }
      if (!options.dataDir) rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: chromiumPath,
    headless: true,
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
}

/**
 * Answers that are states, not failures: 401 from /api/me is "signed out";
 * 409 from a study's /reliability is "no sessions to compare" (the screen
 * shows it as such).
 */
function expectedRefusal(status: number, path: string): boolean {
  return (
    (status === 401 && path === "/api/me") ||
    (status === 409 && /^\/api\/studies\/[^/]+\/reliability$/.test(path))
  );
}

/**
 * A fresh page (own cookies) at the given size that records page errors,
 * console errors and failed responses. A 401 from `/api/me` is the signed-out
 * answer, not an error; the browser's own "Failed to load resource" console
 * line is replaced by the response record, which names the address.
 */
export async function openPage(browser: Browser, viewport: { width: number; height: number }) {
  const context = await browser.newContext({ viewport });
  const page = await context.newPage();
  const errors: string[] = [];
  page.on("pageerror", (error) => errors.push(`pageerror: ${error.message}`));
  page.on("console", (message) => {
    if (message.type() === "error" && !message.text().startsWith("Failed to load resource"))
      errors.push(`console: ${message.text()}`);
  });
  page.on("response", (response) => {
    const path = new URL(response.url()).pathname;
    if (response.status() >= 400 && !expectedRefusal(response.status(), path)) {
      errors.push(`response: ${response.status()} ${response.request().method()} ${path}`);
    }
  });
  return { page, context, errors };
}

export async function screenshot(page: Page, name: string): Promise<void> {
  mkdirSync(screenshotDir, { recursive: true });
  await page.screenshot({ path: join(screenshotDir, `${name}.png`), fullPage: false });
}

/** A call to the running server's API as one demo person: JSON (or a multipart form) in, JSON out; throws on a non-2xx answer. */
export type DemoApi = (
  path: string,
  init?: { method?: string; body?: unknown | FormData },
) => Promise<unknown>;

/** Signs a demo person in through the demo sign-in route and returns an API caller carrying that session cookie. */
export async function demoApi(
  serverUrl: string,
  role: "owner" | "analyst" | "reviewer" | "viewer",
): Promise<DemoApi> {
  const signIn = await fetch(`${serverUrl}/api/dev/demo-sign-in`, {
    method: "POST",
    headers: { "Content-Type": "application/json", Origin: serverUrl },
    body: JSON.stringify({ email: `${role}@demo.covarion.test` }),
  });
  if (!signIn.ok) throw new Error(`demo sign-in answered ${signIn.status}`);
  const cookie = String(signIn.headers.get("set-cookie")).split(";")[0];
  return async (path, init = {}) => {
    const form = init.body instanceof FormData ? init.body : null;
    const res = await fetch(`${serverUrl}${path}`, {
      method: init.method ?? "GET",
      headers: {
        Cookie: cookie,
        Origin: serverUrl,
        ...(init.body !== undefined && !form ? { "Content-Type": "application/json" } : {}),
      },
      body: form ?? (init.body !== undefined ? JSON.stringify(init.body) : undefined),
    });
    if (!res.ok)
      throw new Error(
        `${init.method ?? "GET"} ${path} answered ${res.status}: ${await res.text()}`,
      );
    return res.json();
  };
}

/**
 * Runs a fit of a model and waits until it is done (every 250 ms, up to
 * `timeoutMs`); its id and final view. Throws when it fails, is cancelled
 * or runs out of time.
 */
export async function runFitToDone(
  api: DemoApi,
  studyId: string,
  modelId: string,
  timeoutMs = 120_000,
): Promise<{ id: string; view: Record<string, unknown> }> {
  const fit = (await api(`/api/studies/${studyId}/fits`, {
    method: "POST",
    body: { modelId },
  })) as { id: string };
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const view = (await api(`/api/fits/${fit.id}`)) as Record<string, unknown> & {
      status: string;
      error?: { message: string } | null;
    };
    if (view.status === "done") return { id: fit.id, view };
    if (view.status === "failed" || view.status === "cancelled" || Date.now() > deadline)
      throw new Error(`fit ${fit.id} ended ${view.status}: ${view.error?.message ?? ""}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}
