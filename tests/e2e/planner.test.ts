/**
 * The Planner as a person uses it, at phone and wide sizes: the default
 * question answers in one sentence with a power curve and its method named.
 */
import { expect, it } from "vitest";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`plans a correlation study at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
      await page.waitForURL(/\/studies$/);
      await page.getByRole("link", { name: "Planner" }).click();
      await page.getByTestId("plan").click();
      const answer = page.getByTestId("planner-answer");
      await answer.waitFor();
      await expect(
        answer.getByText(/You need \d+ participants for 80% power/).count(),
      ).resolves.toBe(1);
      await expect(answer.getByText(/Method: Fisher z/).count()).resolves.toBe(1);
      await screenshot(page, `planner-${label}`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
