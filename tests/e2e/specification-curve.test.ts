/**
 * A specification curve fit in the browser, at phone and wide size: run
 * through the API on the demo study (invented data), its fit page shows the
 * summary, the sorted estimates with their choices, and the joint test;
 * the study's plan names one specification, which the curve marks and
 * can select; the selected specification opens as an ordinary fit of its
 * own model (reused the second time), whose header lists what the model's
 * rule left out; the page does not scroll sideways and logs no errors.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { demoApi, openPage, phone, runFitToDone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

let studyId: string;
let fitId: string;
let count: number;

beforeAll(async () => {
  const analyst = await demoApi(e2e.server.url, "analyst");
  studyId = ((await analyst("/api/studies")) as { id: string }[])[0].id;
  await analyst(`/api/studies/${studyId}/plans`, {
    method: "POST",
    body: {
      plan: {
        title: "Accuracy and the left insula",
        models: [
          {
            name: "accuracy, robust",
            spec: {
              kind: "association",
              predictor: "accuracy",
              regions: ["L_insula"],
              estimator: "huber",
              covariates: ["age"],
            },
            regionSelection: "anatomical-or-prior",
            direction: "positive",
          },
        ],
        correction: "none",
        exclusionRules: [{ column: "mean_fd", op: ">", value: 0.2, reason: "motion" }],
        missing: "keep",
      },
    },
  });
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "Accuracy in the left insula, every reasonable analysis",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "specification-curve",
        regions: ["L_insula"],
        predictor: "accuracy",
        inference: "permutation",
        resamples: 49,
        seed: 3,
        specifications: {
          estimators: ["ols", "huber"],
          covariateSets: [[], ["age"]],
          exclusionRules: [{ column: "mean_fd", op: ">", value: 0.2, reason: "motion" }],
        },
      },
    },
  })) as { id: string };
  const done = await runFitToDone(analyst, studyId, model.id, 100_000);
  fitId = done.id;
  count = (done.view.result as { summary: { count: number } }).summary.count;
}, 120_000);

describe("specification curve fit page", () => {
  for (const [label, viewport] of [
    ["phone", phone],
    ["wide", wide],
  ] as const) {
    it(`shows the summary, the curve and the joint test at ${label} size`, async () => {
      // 2 estimators × 2 covariate sets × the rule on or off.
      expect(count).toBe(8);
      const { page, context, errors } = await openPage(e2e.browser, viewport);
      try {
        await page.goto(`${e2e.server.url}/sign-in`);
        await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
        await page.waitForURL(/\/studies$/);
        await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
        await page.getByTestId("specification-curve-view").waitFor();
        await screenshot(page, `curve-${label}-top`);
        await expect(page.getByTestId("curve-summary").isVisible()).resolves.toBe(true);
        // The median estimate and the shares in the first screen, below the study's one-line name.
        const words = await page.getByTestId("curve-summary-words").boundingBox();
        expect(words, "summary in the first screen").not.toBeNull();
        expect((words?.y ?? 0) + (words?.height ?? 0)).toBeLessThanOrEqual(viewport.height - 56);
        await expect(page.getByTestId("study-name").innerText()).resolves.not.toContain("\n");
        await expect(page.getByTestId("curve-planned").innerText()).resolves.toMatch(
          /plan's specification \(model "accuracy, robust"\).* of 8 in estimate order/,
        );
        await expect(page.getByTestId("curve-planned-mark").count()).resolves.toBe(1);
        const columns = page.getByTestId("curve-columns");
        await columns.scrollIntoViewIfNeeded();
        await page.getByRole("button", { name: "Show the planned one" }).click();
        await expect(page.getByTestId("curve-selected").innerText()).resolves.toMatch(
          /the plan's[\s\S]*Huber; covariates: age; rules applied: motion/,
        );
        await screenshot(page, `curve-${label}-columns`);
        await expect(columns.locator("svg").first().isVisible()).resolves.toBe(true);
        await page.getByTestId("curve-joint-test").scrollIntoViewIfNeeded();
        await expect(page.getByTestId("curve-joint-test").innerText()).resolves.toMatch(/49/);
        await screenshot(page, `curve-${label}-joint`);
        // A curve has no region rows: no region table and no results sentences to hand over.
        await page.getByTestId("publish-panel").waitFor();
        await expect(page.getByTestId("download-regions").count()).resolves.toBe(0);
        const sideways = await page.evaluate(
          () => document.documentElement.scrollWidth - document.documentElement.clientWidth,
        );
        expect(sideways).toBeLessThanOrEqual(0);
        expect(errors).toEqual([]);
      } finally {
        await context.close();
      }
    });
  }

  // The phone opens the specification (a new model and fit); the wide screen reuses both.
  let opened: string | null = null;
  for (const [label, viewport] of [
    ["phone", phone],
    ["wide", wide],
  ] as const) {
    it(`opens a specification as an ordinary fit at ${label} size`, async () => {
      const { page, context, errors } = await openPage(e2e.browser, viewport);
      try {
        await page.goto(`${e2e.server.url}/sign-in`);
        await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
        await page.waitForURL(/\/studies$/);
        await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
        await page.getByTestId("specification-curve-view").waitFor();
        await page.getByRole("button", { name: "Show the planned one" }).click();
        const button = page.getByTestId("curve-open-specification");
        await button.scrollIntoViewIfNeeded();
        const box = await button.boundingBox();
        expect(box?.height ?? 0).toBeGreaterThanOrEqual(44);
        expect((box?.x ?? 0) + (box?.width ?? 0)).toBeLessThanOrEqual(viewport.width);
        await screenshot(page, `curve-${label}-open`);
        await button.click();
        await page.waitForURL(
          (url) => /\/fits\/[^/]+$/.test(url.pathname) && !url.pathname.endsWith(fitId),
        );
        const target = new URL(page.url()).pathname.split("/").pop() as string;
        if (opened === null) opened = target;
        else expect(target).toBe(opened);
        await page.getByTestId("fit-header").waitFor();
        await expect(page.getByTestId("fit-header").innerText()).resolves.toMatch(
          /specification \d+/,
        );
        const toggle = page.getByTestId("fit-rule-exclusions-toggle");
        await page.waitForFunction(
          () =>
            document.querySelector('[data-testid="fit-stage"]')?.textContent?.includes("done") ??
            false,
          undefined,
          { timeout: 60_000 },
        );
        await expect(toggle.innerText()).resolves.toMatch(
          /Left out by this model's rules: [1-9]\d* participants?/,
        );
        await toggle.click();
        await expect(page.getByTestId("fit-rule-exclusion").innerText()).resolves.toMatch(
          /rule: mean_fd > 0\.2 \(motion\)[\s\S]*participant[\s\S]*sub-/,
        );
        // The plan's specification, fitted with the plan's rule as the model's: as planned.
        await expect(page.getByTestId("fit-plan").innerText()).resolves.toMatch(/As planned/);
        await screenshot(page, `curve-${label}-opened-fit`);
        // The models list says the opened model's rule; a new model started from it lists the rule with Remove.
        await page.goto(`${e2e.server.url}/studies/${studyId}/models`);
        const card = page.getByTestId("model-card").filter({ hasText: "· specification" });
        await expect(card.getByTestId("model-card-rules").innerText()).resolves.toContain(
          "mean_fd > 0.2 (motion)",
        );
        await card.getByTestId("model-copy").click();
        await page.getByTestId("model-rules").waitFor();
        await expect(page.getByTestId("model-rule").innerText()).resolves.toContain(
          "mean_fd > 0.2 (motion)",
        );
        const remove = page.getByRole("button", { name: "Remove the rule mean_fd > 0.2 (motion)" });
        const removeBox = await remove.boundingBox();
        expect(removeBox?.height ?? 0).toBeGreaterThanOrEqual(44);
        expect((removeBox?.x ?? 0) + (removeBox?.width ?? 0)).toBeLessThanOrEqual(viewport.width);
        await page.getByTestId("model-rules").scrollIntoViewIfNeeded();
        await screenshot(page, `curve-${label}-model-rules`);
        await remove.click();
        await expect(page.getByTestId("model-rules").count()).resolves.toBe(0);
        const sideways = await page.evaluate(
          () => document.documentElement.scrollWidth - document.documentElement.clientWidth,
        );
        expect(sideways).toBeLessThanOrEqual(0);
        expect(errors).toEqual([]);
      } finally {
        await context.close();
      }
    }, 120_000);
  }
});
