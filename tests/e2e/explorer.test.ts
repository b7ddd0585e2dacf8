/**
 * The explorer path as the demo Analyst, at phone and wide sizes: open the
 * demo study → new association model with a covariate and permutation
 * inference → run → watch progress → sort the region table by adjusted p →
 * open a region → one mark per participant, flagged ones distinct → set one
 * aside with a reason → refit → Activity shows it.
 */
import { expect, it } from "vitest";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`runs, inspects, sets aside and refits at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
      await page.waitForURL(/\/studies$/);
      await page.getByTestId("study-card").first().click();
      await page.getByRole("tab", { name: "Models" }).click();
      await page.getByTestId("new-model").click();
      await page.getByTestId("model-name").fill(`Accuracy with age, permutation (${label})`);
      await page.getByTestId("model-predictor").getByRole("radio", { name: "accuracy" }).click();
      await page.getByTestId("model-covariates").getByRole("checkbox", { name: "age" }).click();
      await page.getByTestId("model-inference").getByRole("radio", { name: "Permutation" }).click();
      await page
        .getByTestId("region-selection")
        .getByRole("radio", { name: /From anatomy or prior literature/ })
        .click();
      await screenshot(page, `model-form-${label}`);
      await page.getByTestId("save-and-run").click();
      await page.waitForURL(/\/fits\/[^/]+$/);
      const fitUrl = page.url();
      // progress while it runs (it may already have finished on a fast machine)
      await page.getByTestId("fit-progress").or(page.getByTestId("region-table")).first().waitFor();
      await screenshot(page, `fit-progress-${label}`);
      await page.getByTestId("region-table").waitFor({ timeout: 90_000 });
      await expect(page.getByTestId("fit-plain-words").textContent()).resolves.toMatch(
        /permutation inference/,
      );
      // numbers sort descending first; press again for ascending (smallest adjusted p on top)
      const adjusted = page.getByRole("button", { name: /^Adjusted p, / });
      for (
        let presses = 0;
        presses < 2 &&
        (await page.locator('[role="columnheader"][aria-sort="ascending"]').count()) === 0;
        presses++
      )
        await adjusted.click();
      await expect(
        page.locator('[role="columnheader"][aria-sort="ascending"]').count(),
      ).resolves.toBe(1);
      await screenshot(page, `fit-regions-${label}`);
      // open the region at the top of the sorted table
      await page.getByTestId("region-table").locator('[role="row"][aria-selected]').first().click();
      const plot = page.getByTestId("scatter-plot");
      await plot.waitFor();
      const marks = plot.locator('[role="button"][aria-label*=": "]');
      const summary = await page.getByTestId("region-summary").textContent();
      const n = Number(/N = (\d+)/.exec(summary ?? "")?.[1]);
      expect(n).toBeGreaterThan(50);
      await expect(marks.count()).resolves.toBe(n);
      // the participant diagnostics come from the API a page at a time: 50 rows, then the rest
      const range = page.getByTestId("diagnostics-table-range");
      await expect.poll(() => range.textContent()).toBe(`rows 1–50 of ${n}`);
      await page
        .getByTestId("diagnostics-table")
        .getByRole("button", { name: "Next page" })
        .click();
      await expect.poll(() => range.textContent()).toBe(`rows 51–${n} of ${n}`);
      await screenshot(page, `region-detail-${label}`);
      // the influence view draws the flags' own cut-offs: the line at 4/n, and no curve at Cook's distance 0.5 or 1
      const influence = page.getByTestId("influence-view");
      await influence.scrollIntoViewIfNeeded();
      const cookCut = influence.locator('[data-testid="influence-cut-influence"]');
      await expect(cookCut.count()).resolves.toBe(1);
      await expect(cookCut.getAttribute("aria-label")).resolves.toBe(
        `4/n = ${Number((4 / n).toPrecision(3))}`,
      );
      await expect(influence.locator("svg").first().getAttribute("aria-label")).resolves.toContain(
        `influence cut-off 4/n = ${Number((4 / n).toPrecision(3))}`,
      );
      await expect(
        influence.locator('[data-testid="influence-cut-leverage"]').count(),
      ).resolves.toBe(1);
      const drawnText = (await influence.locator("text").allTextContents()).join(" | ");
      expect(drawnText).not.toMatch(/D = (0\.5|1)\b/);
      expect(await influence.textContent()).not.toMatch(/contour/i);
      await expect(
        influence.locator('[role="button"][aria-label*="Cook\'s distance"]').count(),
      ).resolves.toBe(n);
      await screenshot(page, `influence-view-${label}`);
      // the planted high-leverage and outlying participants are flagged in at least one region; choose a flagged mark when this one has any
      const flagged = plot.locator('[role="button"][aria-label*="flagged"]');
      const target = (await flagged.count()) > 0 ? flagged.first() : marks.first();
      const targetLabel = (await target.getAttribute("aria-label")) ?? "";
      const participant = targetLabel.split(":")[0];
      await target.click();
      await page.getByTestId("participant-card").waitFor();
      await page
        .getByTestId("set-aside-reason")
        .fill("Mean framewise displacement above the preregistered limit");
      await page.getByTestId("set-aside").click();
      await page.getByText("Set aside and logged.").waitFor();
      await page.getByTestId("region-preview").waitFor();
      await screenshot(page, `set-aside-${label}`);
      await page.getByTestId("refit").click();
      await page.waitForURL(
        (url) => /\/fits\/[^/]+$/.test(url.pathname) && url.toString() !== fitUrl,
      );
      await page.getByTestId("region-table").waitFor({ timeout: 90_000 });
      await page.getByRole("tab", { name: "Activity" }).click();
      await page.getByText(`set aside ${participant} from`).first().waitFor();
      await page
        .getByText("Mean framewise displacement above the preregistered limit")
        .first()
        .waitFor();
      await screenshot(page, `activity-${label}`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
