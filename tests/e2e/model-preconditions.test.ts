/**
 * The model form says, before anything is saved or run, what only the
 * study's data can decide (the per-region preconditions of fit-rules.ts),
 * and follows the choices made: at phone and wide sizes.
 */
import { expect, it } from "vitest";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`shows the data-dependent preconditions before Run at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
      await page.waitForURL(/\/studies$/);
      await page.getByTestId("study-card").first().click();
      await page.getByRole("tab", { name: "Models" }).click();
      await page.getByTestId("new-model").click();
      await page.getByTestId("model-predictor").getByRole("radio", { name: "accuracy" }).click();
      await page.getByTestId("model-covariates").getByRole("checkbox", { name: "age" }).click();
      const notice = page.getByTestId("model-data-preconditions");
      await expect
        .poll(() => notice.textContent())
        .toContain(
          "Every region needs at least 3 participants with a contrast value and a value for accuracy and age",
        );
      await expect(notice.textContent()).resolves.toContain("Only when the fit runs:");
      // Two groups: the group rule and the minimum per group follow the choice.
      await page
        .getByTestId("model-kind")
        .getByRole("radio", { name: "Two groups differ" })
        .click();
      await expect
        .poll(() => notice.textContent())
        .toContain("Each of the two groups needs at least 2 participants in every region.");
      await expect(page.getByTestId("model-data-problems").count()).resolves.toBe(0);
      await notice.scrollIntoViewIfNeeded();
      await screenshot(page, `model-preconditions-${label}`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
