/**
 * Handing a fit to a paper as the demo Owner, at phone and wide sizes: open
 * a done fit the demo Analyst ran (through the API first) → the panel says
 * who may approve → the methods paragraph shows and copies → the region
 * table downloads as CSV → approve → seal → the Sealed badge with the hash
 * → the activity trail names both steps.
 *
 * "A second person signs off": on a fit the Owner ran, the Owner sees why
 * they may not approve it; they turn the setting off on the Team screen
 * (the activity trail says so, a Reviewer sees it read-only), approve and
 * seal it alone, and the panel and the methods paragraph say one person
 * signed off.
 */
import { readFileSync } from "node:fs";
import { beforeAll, expect, it } from "vitest";
import { singlePersonSignOffSentence } from "../../contract/methods-text";
import {
  approvalRefusalMessage,
  singlePersonSealNote,
  singlePersonWarning,
} from "../../contract/sign-off";
import { type DemoApi, demoApi as signInDemo, openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
const fitIds = new Map<string, string>();

type Api = DemoApi;

/** Calls the API as a demo person (a real session cookie from the demo sign-in route). */
function demoApi(role: "owner" | "analyst"): Promise<Api> {
  return signInDemo(e2e.server.url, role);
}

beforeAll(async () => {
  const owner = await demoApi("owner");
  const analyst = await demoApi("analyst");
  const studies = (await owner("/api/studies")) as { id: string }[];
  studyId = studies[0].id;
  // The Analyst runs the fits the Owner approves; the Owner runs the one they may not approve while the setting is on.
  for (const [label, api] of [
    ["phone", analyst],
    ["wide", analyst],
    ["own", owner],
  ] as const) {
    const model = (await api(`/api/studies/${studyId}/models`, {
      method: "POST",
      body: {
        name: `Accuracy with age, for the paper (${label})`,
        regionSelection: "anatomical-or-prior",
        spec: {
          kind: "association",
          predictor: "accuracy",
          covariates: ["age"],
          inference: "permutation",
          resamples: 1000,
          seed: 5,
          correction: "holm",
        },
      },
    })) as { id: string };
    const fit = (await api(`/api/studies/${studyId}/fits`, {
      method: "POST",
      body: { modelId: model.id },
    })) as { id: string };
    fitIds.set(label, fit.id);
  }
  for (const fitId of fitIds.values()) {
    const deadline = Date.now() + 90_000;
    for (;;) {
      const fit = (await owner(`/api/fits/${fitId}`)) as { status: string };
      if (fit.status === "done") break;
      if (fit.status === "failed" || Date.now() > deadline)
        throw new Error(`fit ${fitId} ended ${fit.status}`);
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
      await expect(page.getByTestId("publish-status").textContent()).resolves.toBe(
        "Not yet approved for sealing. Waiting for a Reviewer or Owner other than Tomas Ferreira to approve.",
      );
      await expect(page.getByTestId("sign-off-refusal").count()).resolves.toBe(0);

      // The methods paragraph, shown in full with its references, and copied.
      const methods = page.getByTestId("methods-text");
      await methods.waitFor();
      await page.getByTestId("toggle-methods").click();
      const text = (await methods.textContent()) ?? "";
      expect(text).toContain("Freedman–Lane procedure (Freedman & Lane 1983; Winkler et al. 2014)");
      expect(text).toContain(
        "1,000 random rearrangements were drawn with a seeded generator (seed 5)",
      );
      expect(text).toMatch(/Analyses were run in Covarion version \d+\.\d+\.\d+/);
      expect(text).toContain(
        "The brain table holds 2 sessions; values from session “1” were analysed.",
      );
      await page
        .getByTestId("methods-references")
        .getByText("Holm, S. (1979).", { exact: false })
        .waitFor();
      await page.getByTestId("copy-methods").click();
      await expect(page.getByTestId("copy-outcome").textContent()).resolves.toBe("Copied.");
      await page
        .getByTestId("copy-methods")
        .evaluate((element) => element.scrollIntoView({ block: "start" }));
      await screenshot(page, `publish-methods-${label}`);

      // The region table downloads as CSV with one row per region.
      const [download] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId("download-regions").click(),
      ]);
      expect(download.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-regions.csv`);
      const csv = readFileSync((await download.path()) as string, "utf8");
      const lines = csv.trimEnd().split("\r\n");
      expect(lines[0]).toBe(
        "region,n,estimate,se,statistic,df,p,p_adjusted,ci_low,ci_high,r,r_ci_low,r_ci_high,method,inference,correction",
      );
      expect(lines.length - 1).toBe(
        await page.getByTestId("region-table").locator('[role="row"][aria-selected]').count(),
      );
      const direct = await page.request.get(`${e2e.server.url}/api/fits/${fitId}/regions.csv`);
      expect(direct.status()).toBe(200);
      expect(direct.headers()["content-type"]).toMatch(/^text\/csv/);
      expect(await direct.text()).toBe(csv);

      // Approve, then seal: the Sealed badge carries the hash.
      await page.getByTestId("approve-fit").click();
      await page
        .getByTestId("publish-status")
        .getByText(/^Approved for sealing by Maren Lindqvist .*\. Waiting for an Owner to seal\.$/)
        .waitFor();
      await page.getByTestId("seal-fit").click();
      const badge = page.getByTestId("sealed-badge");
      await badge.waitFor();
      const sealed = (await page.request
        .get(`${e2e.server.url}/api/fits/${fitId}`)
        .then((r) => r.json())) as { seal: { sha256: string } };
      await expect(badge.textContent()).resolves.toContain(sealed.seal.sha256.slice(0, 12));
      await expect(page.getByTestId("seal-hash").textContent()).resolves.toContain(
        sealed.seal.sha256,
      );
      await expect(page.getByTestId("approve-fit").count()).resolves.toBe(0);
      await expect(page.getByTestId("seal-fit").count()).resolves.toBe(0);
      await page
        .getByTestId("publish-panel")
        .evaluate((element) => element.scrollIntoView({ block: "start" }));
      await screenshot(page, `publish-sealed-${label}`);

      await page.getByRole("tab", { name: "Activity" }).click();
      await page
        .getByText(
          `sealed the fit of ‘Accuracy with age, for the paper (${label})’ (SHA-256 ${sealed.seal.sha256.slice(0, 12)}…)`,
        )
        .first()
        .waitFor();
      await page
        .getByText(`approved the fit of ‘Accuracy with age, for the paper (${label})’ for sealing`)
        .first()
        .waitFor();
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}

it("A second person signs off: the Owner may not approve their own fit, turns the setting off, and signs off alone", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  const reviewer = await openPage(e2e.browser, wide);
  try {
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByRole("button", { name: "Sign in as the demo owner" }).click();
    await page.waitForURL(/\/studies$/);
    const fitId = fitIds.get("own") as string;
    await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
    await page.getByTestId("publish-panel").waitFor({ timeout: 60_000 });
    await expect(page.getByTestId("publish-status").textContent()).resolves.toBe(
      "Not yet approved for sealing. Waiting for a Reviewer or Owner other than you to approve.",
    );
    await expect(page.getByTestId("sign-off-refusal").textContent()).resolves.toContain(
      approvalRefusalMessage,
    );
    await expect(page.getByTestId("approve-fit").count()).resolves.toBe(0);
    await page
      .getByTestId("sign-off-refusal")
      .evaluate((element) => element.scrollIntoView({ block: "center" }));
    await screenshot(page, "publish-second-person-phone");

    // The Owner turns the setting off on the Team screen.
    await page.getByRole("tab", { name: "Team" }).click();
    const toggle = page.getByRole("switch", { name: "A second person signs off" });
    await expect(toggle.isChecked()).resolves.toBe(true);
    const saved = page.waitForResponse(
      (r) =>
        r.request().method() === "PATCH" && new URL(r.url()).pathname === `/api/studies/${studyId}`,
    );
    await toggle.click();
    expect((await saved).status()).toBe(200);
    await expect.poll(() => toggle.isChecked()).toBe(false);
    await page.getByRole("tab", { name: "Activity" }).click();
    await page.getByText("turned off “A second person signs off”").first().waitFor();

    // A Reviewer sees the setting, read-only.
    await reviewer.page.goto(`${e2e.server.url}/sign-in`);
    await reviewer.page.getByRole("button", { name: "Sign in as the demo reviewer" }).click();
    await reviewer.page.waitForURL(/\/studies$/);
    await reviewer.page.goto(`${e2e.server.url}/studies/${studyId}/team`);
    const state = reviewer.page.getByTestId("second-person-sign-off-state");
    await state.waitFor();
    await expect(state.textContent()).resolves.toContain("Off");
    await expect(
      reviewer.page.getByRole("switch", { name: "A second person signs off" }).count(),
    ).resolves.toBe(0);

    // Back on the fit: the Owner approves and seals it alone; the panel and the methods paragraph say so.
    await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
    await page.getByTestId("approve-fit").waitFor({ timeout: 60_000 });
    await page.getByText(singlePersonWarning).first().waitFor();
    await page.getByTestId("approve-fit").click();
    await page.getByTestId("seal-fit").click();
    await page.getByTestId("sealed-badge").waitFor();
    await expect(page.getByTestId("single-person-sign-off").textContent()).resolves.toBe(
      singlePersonSealNote,
    );
    await page.getByTestId("toggle-methods").click();
    await page
      .getByTestId("methods-text")
      .getByText(singlePersonSignOffSentence, { exact: false })
      .waitFor();
    await page
      .getByTestId("single-person-sign-off")
      .evaluate((element) => element.scrollIntoView({ block: "start" }));
    await screenshot(page, "publish-single-person-phone");
    expect(errors).toEqual([]);
    expect(reviewer.errors).toEqual([]);
  } finally {
    await context.close();
    await reviewer.context.close();
  }
});
