/**
 * The analysis plan in the browser: the Analyst registers a plan on the
 * Models screen from a saved model, with an exclusion rule; everyone then
 * reads it there (title, rule, hash, "before any data" or not), and a fit
 * of the planned model says "As planned" in its header.
 */
import { expect, it } from "vitest";
import { demoApi, openPage, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

it("registers a plan on the Models screen and a fit of it reads As planned", async () => {
  const api = await demoApi(e2e.server.url, "analyst");
  const studies = (await api("/api/studies")) as { id: string }[];
  const studyId = studies[0].id;
  const model = (await api(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "accuracy in the prefrontal cortex",
      spec: { kind: "association", predictor: "accuracy", regions: ["L_dlpfc"] },
      regionSelection: "anatomical-or-prior",
    },
  })) as { id: string };
  const { page, context, errors } = await openPage(e2e.browser, wide);
  try {
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
    await page.waitForURL(/\/studies$/);
    await page.goto(`${e2e.server.url}/studies/${studyId}/models`);
    const card = page.getByTestId("plan-card");
    await expect.poll(() => card.textContent()).toContain("No plan yet");
    await page.getByTestId("plan-new").click();
    await page.getByTestId("plan-title").fill("Accuracy and prefrontal activity");
    await page
      .getByTestId("plan-model-accuracy in the prefrontal cortex")
      .getByRole("radio", { name: "Positive" })
      .click();
    await page.getByTestId("plan-add-rule").click();
    const rule = page.getByTestId("plan-rule-row");
    await rule.getByLabel("Column").fill("mean_fd");
    await rule.getByRole("radio", { name: ">", exact: true }).click();
    await rule.getByLabel("Value").fill("0.5");
    await rule.getByLabel("Reason").fill("motion");
    await page.getByTestId("plan-submit").click();
    const current = page.getByTestId("plan-current");
    await expect.poll(() => current.textContent()).toContain("Accuracy and prefrontal activity");
    const text = await current.textContent();
    expect(text).toContain("mean_fd > 0.5 — motion");
    expect(text).toContain("data had already been confirmed");
    expect(text).toMatch(/SHA-256 [0-9a-f]{12}…/);
    await screenshot(page, "plan-card-wide");

    const fit = (await api(`/api/studies/${studyId}/fits`, {
      method: "POST",
      body: { modelId: model.id },
    })) as { id: string };
    await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fit.id}`);
    await expect.poll(() => page.getByTestId("fit-plan").textContent()).toContain("As planned");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});
