/**
 * The report bundle and the e-mail notices as a person meets them:
 *
 * - the demo Reviewer turns their e-mail notices of the study off and on
 *   again on the Team screen (a switch row at least 44 px high);
 * - a fit the demo Analyst runs reaches the demo Reviewer's mailbox
 *   ("waits for approval", with a link to the fit);
 * - the demo Owner downloads the fit's report bundle from the publish
 *   panel; once the fit is sealed the panel shows the bundle's SHA-256,
 *   which is that of the bytes downloaded.
 */
import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import { unzipSync } from "fflate";
import { beforeAll, expect, it } from "vitest";
import { noticeSettingLabel } from "../../contract/notices";
import { type DemoApi, demoApi, openPage, phone, runFitToDone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
let owner: DemoApi;
let analyst: DemoApi;
let reviewer: DemoApi;

beforeAll(async () => {
  owner = await demoApi(e2e.server.url, "owner");
  analyst = await demoApi(e2e.server.url, "analyst");
  reviewer = await demoApi(e2e.server.url, "reviewer");
  const studies = (await owner("/api/studies")) as { id: string }[];
  studyId = studies[0].id;
});

async function signIn(page: import("playwright-core").Page, role: string): Promise<void> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: `Sign in as the demo ${role}` }).click();
  await page.waitForURL(/\/studies$/);
}

it("the Reviewer turns e-mail notices off and on again on the Team screen", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signIn(page, "reviewer");
    await page.goto(`${e2e.server.url}/studies/${studyId}/team`);
    const row = page.getByRole("switch", { name: noticeSettingLabel });
    await row.waitFor({ timeout: 60_000 });
    const box = await row.boundingBox();
    expect(box?.height ?? 0).toBeGreaterThanOrEqual(44);
    await expect(row.getAttribute("aria-checked")).resolves.toBe("true");
    await row.click();
    await expect
      .poll(async () => (await reviewer(`/api/studies/${studyId}/notices`)) as unknown)
      .toEqual({ enabled: false });
    await expect(row.getAttribute("aria-checked")).resolves.toBe("false");
    await row.evaluate((element) => element.scrollIntoView({ block: "center" }));
    await screenshot(page, "notices-off-phone");
    await row.click();
    await expect
      .poll(async () => (await reviewer(`/api/studies/${studyId}/notices`)) as unknown)
      .toEqual({ enabled: true });
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a finished fit e-mails the Reviewer; the Owner downloads its report, and sealed, sees the bundle's SHA-256", async () => {
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "Load effect, for the report",
      regionSelection: "anatomical-or-prior",
      spec: { kind: "one-sample" },
    },
  })) as { id: string };
  const { id: fitId } = await runFitToDone(analyst, studyId, model.id);
  // The Reviewer's notice, in the local mailbox, with a link to the fit.
  await expect
    .poll(
      async () =>
        ((await owner("/api/dev/mail")) as { to: string; subject: string; text: string }[]).some(
          (m) =>
            m.to === "reviewer@demo.covarion.test" &&
            m.subject.includes("waits for approval") &&
            m.text.includes(`/studies/${studyId}/fits/${fitId}`),
        ),
      { timeout: 30_000 },
    )
    .toBe(true);

  const { page, context, errors } = await openPage(e2e.browser, wide);
  try {
    await signIn(page, "owner");
    await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
    await page.getByTestId("publish-panel").waitFor({ timeout: 60_000 });
    const [download] = await Promise.all([
      page.waitForEvent("download"),
      page.getByTestId("download-report").click(),
    ]);
    expect(download.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-report.zip`);
    const first = readFileSync((await download.path()) as string);
    expect(Object.keys(unzipSync(new Uint8Array(first)))[0]).toBe("README.txt");
    await expect(page.getByTestId("report-hash").count()).resolves.toBe(0);

    await reviewer(`/api/fits/${fitId}/approve`, { method: "POST", body: {} });
    await owner(`/api/fits/${fitId}/seal`, { method: "POST", body: {} });
    await page.reload();
    const hash = page.getByTestId("report-hash");
    await hash
      .getByText(/SHA-256 of the report bundle: [0-9a-f]{64}$/)
      .waitFor({ timeout: 60_000 });
    const [sealedDownload] = await Promise.all([
      page.waitForEvent("download"),
      page.getByTestId("download-report").click(),
    ]);
    const sealedBytes = readFileSync((await sealedDownload.path()) as string);
    expect(Object.keys(unzipSync(new Uint8Array(sealedBytes))).at(-1)).toBe("seal.json");
    await expect(hash.textContent()).resolves.toBe(
      `SHA-256 of the report bundle: ${createHash("sha256").update(sealedBytes).digest("hex")}`,
    );
    await page
      .getByTestId("publish-panel")
      .evaluate((element) => element.scrollIntoView({ block: "start" }));
    await screenshot(page, "report-sealed-wide");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});
