/**
 * Reliability of the measures in the browser. On the demo study (whose brain
 * table has a second session for some participants) the Data section shows
 * the reliability per region with its method named; the demo Analyst states
 * a trait's reliability with its source (a missing source is refused beside
 * its field, before any request); a Viewer reads the stated value.
 */
import { expect, it } from "vitest";
import type { Page } from "playwright-core";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

async function openDemoData(page: Page, role: "analyst" | "viewer"): Promise<void> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: `Sign in as the demo ${role}` }).click();
  await page.waitForURL(/\/studies$/);
  await page.getByRole("link", { name: new RegExp(`\\(demo\\), your role: ${role}`) }).click();
  await page.waitForURL(/\/studies\/[^/]+\/data$/);
}

it("the demo Analyst reads the reliability per region and states a trait's reliability with its source (phone)", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await openDemoData(page, "analyst");
    const table = page.getByTestId("brain-reliability-table");
    await table.waitFor();
    await table.scrollIntoViewIfNeeded();
    await expect(table.getByText("L_dlpfc", { exact: true }).count()).resolves.toBe(1);
    await expect(
      page
        .getByTestId("brain-reliability")
        .getByText(/sessions 1, 2 · 16 participants with two or more sessions/)
        .count(),
    ).resolves.toBe(1);
    await expect(page.getByTestId("brain-reliability-method").textContent()).resolves.toMatch(
      /^Shrout & Fleiss \(1979\) intraclass correlations across sessions\. ICC\(3,1\): consistency of sessions/,
    );
    await screenshot(page, "reliability-phone-table");

    const form = page.getByTestId("trait-reliabilities");
    await form.scrollIntoViewIfNeeded();
    await form.getByTestId("trait-add").click();
    const row = form.getByTestId("trait-row-0");
    await row.getByRole("radio", { name: "accuracy" }).click();
    await row.getByTestId("trait-reliability-0").fill("0.82");
    await form.getByTestId("trait-save").click();
    await form.getByText(/^Say where the value comes from/).waitFor();
    await row.getByTestId("trait-source-0").fill("test–retest r = .82, task manual");
    await form.getByTestId("trait-save").click();
    await form.getByTestId("trait-saved").waitFor();
    await screenshot(page, "reliability-phone-traits");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a Viewer reads the stated trait reliability and the region table on a wide screen", async () => {
  const { page, context, errors } = await openPage(e2e.browser, wide);
  try {
    await openDemoData(page, "viewer");
    const list = page.getByTestId("trait-reliability-list");
    await list.waitFor();
    await expect(list.textContent()).resolves.toBe(
      "accuracy: 0.82 — test–retest r = .82, task manual",
    );
    await expect(page.getByTestId("trait-add").count()).resolves.toBe(0);
    await page.getByTestId("brain-reliability-table").scrollIntoViewIfNeeded();
    await screenshot(page, "reliability-wide");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});
