/**
 * A prediction fit on the demo study, at phone and wide sizes: the demo
 * Analyst creates a prediction of "accuracy" from every region with "age"
 * as a confound (5 folds, 2 repeats, 99 permutations) and runs it through
 * the API. In the browser the fit shows the held-out scores in words and as
 * tiles, and the caution on reading a prediction, in its first screen; the
 * observed against predicted plot, the learning curve and the weight dot
 * chart are drawn, each with its Figure row (SVG, two PNGs, caption; the
 * weights SVG downloads); nothing scrolls sideways and the page logs no errors.
 * The model form offers the kind with its own plain-words question and
 * fields.
 */
import { readFileSync } from "node:fs";
import { beforeAll, expect, it } from "vitest";
import type { PredictionBlock } from "../../contract/prediction";
import { demoApi, openPage, phone, runFitToDone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
let fitId: string;
let block: PredictionBlock;

beforeAll(async () => {
  const analyst = await demoApi(e2e.server.url, "analyst");
  studyId = ((await analyst("/api/studies")) as { id: string }[])[0].id;
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "Accuracy predicted from all regions",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "prediction",
        predictor: "accuracy",
        covariates: ["age"],
        folds: 5,
        repeats: 2,
        resamples: 99,
        seed: 7,
      },
    },
  })) as { id: string };
  const done = await runFitToDone(analyst, studyId, model.id, 100_000);
  fitId = done.id;
  block = (done.view.result as { prediction: PredictionBlock }).prediction;
}, 120_000);

/** True when the element's box lies within the viewport's height (seen without scrolling). */
async function inFirstScreen(
  page: Awaited<ReturnType<typeof openPage>>["page"],
  testId: string,
  height: number,
): Promise<boolean> {
  const box = await page.getByTestId(testId).first().boundingBox();
  return box !== null && box.y >= 0 && box.y + box.height <= height;
}

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`a prediction fit shows scores, caution and plots at ${label} size`, async () => {
    expect(block.folds).toBe(5);
    expect(block.repeats).toBe(2);
    expect(block.permutation?.resamples).toBe(99);
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
      await page.waitForURL(/\/studies$/);
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
      await page.getByTestId("prediction-view").waitFor();
      await screenshot(page, `prediction-${label}-top`);

      const sentence = await page.getByTestId("prediction-sentence").innerText();
      expect(sentence).toMatch(
        /^Predicted in people the model had not seen \(2 repeats of 5-fold cross-validation\): r = /,
      );
      expect(sentence).toMatch(/r = [−\d.n/a]+ \(p (=|<) [\d.]+\), r² = /);
      // The scores in the first screen (above a phone's 56-px bar of sections); the caution
      // beside them on a wide screen, within the second screen on a phone.
      for (const id of ["score-r", "score-r2", "score-mae"])
        expect(
          await inFirstScreen(page, id, viewport.height - 56),
          `${id} in the first screen`,
        ).toBe(true);
      const reach = label === "phone" ? 2 * viewport.height : viewport.height;
      expect(await inFirstScreen(page, "prediction-caution", reach), "caution within reach").toBe(
        true,
      );
      await expect(page.getByTestId("score-r").innerText()).resolves.toContain("p ");
      await expect(page.getByTestId("prediction-caution").innerText()).resolves.toContain(
        "held-out scores",
      );
      // No region table for a prediction fit.
      expect(await page.getByTestId("fit-regions").count()).toBe(0);

      for (const id of ["observed-predicted-plot", "learning-curve-plot", "weight-dot-plot"]) {
        const plot = page.getByTestId(id);
        await plot.scrollIntoViewIfNeeded();
        await expect(plot.locator("svg").first().isVisible()).resolves.toBe(true);
      }
      // Each plot's Figure row: four links, at least 44 px tall, inside the viewport's width.
      for (const name of ["observed-predicted", "learning-curve", "weights"])
        for (const link of ["svg", "png-89", "png-183", "caption"]) {
          const control = page.getByTestId(`figure-${name}-${link}`);
          await control.scrollIntoViewIfNeeded();
          const box = await control.boundingBox();
          expect(box, `${name}-${link}`).not.toBeNull();
          expect(box?.height ?? 0, `${name}-${link}`).toBeGreaterThanOrEqual(44);
          expect(box?.x ?? -1, `${name}-${link}`).toBeGreaterThanOrEqual(0);
          expect((box?.x ?? 0) + (box?.width ?? 0), `${name}-${link}`).toBeLessThanOrEqual(
            viewport.width,
          );
        }
      const [download] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId("figure-weights-svg").click(),
      ]);
      expect(download.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-weights-89mm.svg`);
      const svgText = readFileSync((await download.path()) as string, "utf8");
      expect(svgText.match(/class="weight-row"/g)?.length).toBe(block.regions.length);
      const dots = await page.getByTestId("weight-dot-plot").locator("svg circle").count();
      expect(dots).toBe(Math.min(30, block.regions.length));
      await page.getByTestId("prediction-scores").scrollIntoViewIfNeeded();
      await screenshot(page, `prediction-${label}-scores`);
      await page.getByTestId("observed-predicted-plot").scrollIntoViewIfNeeded();
      await screenshot(page, `prediction-${label}-plots`);
      await page.getByTestId("learning-curve-plot").scrollIntoViewIfNeeded();
      await screenshot(page, `prediction-${label}-curve`);
      await page.getByTestId("weight-dot-plot").scrollIntoViewIfNeeded();
      await screenshot(page, `prediction-${label}-weights`);
      await expect(page.getByTestId("prediction-lambda").innerText()).resolves.toMatch(
        /^Penalty chosen inside each training fold by cross-validation: /,
      );

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

it("the model form offers a prediction with its own fields", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
    await page.waitForURL(/\/studies$/);
    await page.goto(`${e2e.server.url}/studies/${studyId}/models/new`);
    await page.getByTestId("model-kind").getByRole("radio", { name: "Predicts a trait" }).click();
    await page.getByTestId("model-predictor").getByRole("radio", { name: "accuracy" }).click();
    await expect(page.getByTestId("model-question").innerText()).resolves.toBe(
      "How well do these regions predict accuracy in people the model has not seen?",
    );
    for (const id of ["model-folds", "model-penalty", "model-inference", "model-resamples"])
      await expect(page.getByTestId(id).isVisible()).resolves.toBe(true);
    for (const id of ["model-estimator", "model-correction"])
      expect(await page.getByTestId(id).count()).toBe(0);
    await page.getByTestId("model-folds").getByRole("radio", { name: "Leave one out" }).click();
    expect(await page.getByTestId("model-repeats").count()).toBe(0);
    await screenshot(page, "prediction-form-phone");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});
