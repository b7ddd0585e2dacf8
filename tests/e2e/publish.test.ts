/**
 * Handing a fit to a paper as the demo Owner, at phone and wide sizes: open
 * a done fit (run through the API first) → the methods paragraph shows and
 * copies → the region table downloads as CSV → approve → seal → the Sealed
 * badge with the hash → the activity trail names both steps.
 */
import { readFileSync } from "node:fs";
import { beforeAll, expect, it } from "vitest";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
const fitIds = new Map<string, string>();

/** Calls the API as the demo Owner (a real session cookie from the demo sign-in route). */
async function ownerApi(): Promise<(path: string, init?: { method?: string; body?: unknown }) => Promise<unknown>> {
  const signIn = await fetch(`${e2e.server.url}/api/dev/demo-sign-in`, {
    method: "POST",
    headers: { "Content-Type": "application/json", Origin: e2e.server.url },
    body: JSON.stringify({ email: "owner@demo.covarion.test" }),
  });
  if (!signIn.ok) throw new Error(`demo sign-in answered ${signIn.status}`);
  const cookie = String(signIn.headers.get("set-cookie")).split(";")[0];
  return async (path, init = {}) => {
    const res = await fetch(`${e2e.server.url}${path}`, {
      method: init.method ?? "GET",
      headers: { Cookie: cookie, Origin: e2e.server.url, ...(init.body !== undefined ? { "Content-Type": "application/json" } : {}) },
      body: init.body !== undefined ? JSON.stringify(init.body) : undefined,
    });
    if (!res.ok) throw new Error(`${init.method ?? "GET"} ${path} answered ${res.status}: ${await res.text()}`);
    return res.json();
  };
}

beforeAll(async () => {
  const api = await ownerApi();
  const studies = (await api("/api/studies")) as { id: string }[];
  studyId = studies[0].id;
  for (const label of ["phone", "wide"]) {
    const model = (await api(`/api/studies/${studyId}/models`, {
      method: "POST",
      body: {
        name: `Accuracy with age, for the paper (${label})`,
        regionSelection: "anatomical-or-prior",
        spec: { kind: "association", predictor: "accuracy", covariates: ["age"], inference: "permutation", resamples: 1000, seed: 5, correction: "holm" },
      },
    })) as { id: string };
    const fit = (await api(`/api/studies/${studyId}/fits`, { method: "POST", body: { modelId: model.id } })) as { id: string };
    fitIds.set(label, fit.id);
  }
  for (const fitId of fitIds.values()) {
    const deadline = Date.now() + 90_000;
    for (;;) {
      const fit = (await api(`/api/fits/${fitId}`)) as { status: string };
      if (fit.status === "done") break;
      if (fit.status === "failed" || Date.now() > deadline) throw new Error(`fit ${fitId} ended ${fit.status}`);
      await new Promise((r) => setTimeout(r, 250));
    }
  }
});

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`the Owner reads the methods, downloads the region table, approves and seals at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo owner" }).click();
      await page.waitForURL(/\/studies$/);
      const fitId = fitIds.get(label) as string;
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
      const panel = page.getByTestId("publish-panel");
      await panel.waitFor({ timeout: 60_000 });
      await expect(page.getByTestId("publish-status").textContent()).resolves.toBe("Not yet approved for sealing.");

      // The methods paragraph, shown in full with its references, and copied.
      const methods = page.getByTestId("methods-text");
      await methods.waitFor();
      await page.getByTestId("toggle-methods").click();
      const text = (await methods.textContent()) ?? "";
      expect(text).toContain("Freedman–Lane procedure (Freedman & Lane 1983; Winkler et al. 2014)");
      expect(text).toContain("1,000 random rearrangements were drawn with a seeded generator (seed 5)");
      expect(text).toMatch(/Analyses were run in Covarion version \d+\.\d+\.\d+/);
      expect(text).toContain("The brain table holds 2 sessions; values from session “1” were analysed.");
      await page.getByTestId("methods-references").getByText("Holm, S. (1979).", { exact: false }).waitFor();
      await page.getByTestId("copy-methods").click();
      await expect(page.getByTestId("copy-outcome").textContent()).resolves.toBe("Copied.");
      await page.getByTestId("copy-methods").evaluate((element) => element.scrollIntoView({ block: "start" }));
      await screenshot(page, `publish-methods-${label}`);

      // The region table downloads as CSV with one row per region.
      const [download] = await Promise.all([page.waitForEvent("download"), page.getByTestId("download-regions").click()]);
      expect(download.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-regions.csv`);
      const csv = readFileSync((await download.path()) as string, "utf8");
      const lines = csv.trimEnd().split("\r\n");
      expect(lines[0]).toBe("region,n,estimate,se,statistic,df,p,p_adjusted,ci_low,ci_high,r,r_ci_low,r_ci_high,method,inference,correction");
      expect(lines.length - 1).toBe(await page.getByTestId("region-table").locator('[role="row"][aria-selected]').count());
      const direct = await page.request.get(`${e2e.server.url}/api/fits/${fitId}/regions.csv`);
      expect(direct.status()).toBe(200);
      expect(direct.headers()["content-type"]).toMatch(/^text\/csv/);
      expect(await direct.text()).toBe(csv);

      // Approve, then seal: the Sealed badge carries the hash.
      await page.getByTestId("approve-fit").click();
      await page.getByTestId("publish-status").getByText(/^Approved for sealing by /).waitFor();
      await page.getByTestId("seal-fit").click();
      const badge = page.getByTestId("sealed-badge");
      await badge.waitFor();
      const sealed = (await page.request.get(`${e2e.server.url}/api/fits/${fitId}`).then((r) => r.json())) as { seal: { sha256: string } };
      await expect(badge.textContent()).resolves.toContain(sealed.seal.sha256.slice(0, 12));
      await expect(page.getByTestId("seal-hash").textContent()).resolves.toContain(sealed.seal.sha256);
      await expect(page.getByTestId("approve-fit").count()).resolves.toBe(0);
      await expect(page.getByTestId("seal-fit").count()).resolves.toBe(0);
      await page.getByTestId("publish-panel").evaluate((element) => element.scrollIntoView({ block: "start" }));
      await screenshot(page, `publish-sealed-${label}`);

      await page.getByRole("tab", { name: "Activity" }).click();
      await page.getByText(`sealed a fit (SHA-256 ${sealed.seal.sha256.slice(0, 12)}…)`).first().waitFor();
      await page.getByText("approved a fit for sealing").first().waitFor();
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
