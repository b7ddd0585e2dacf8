/**
 * Figure downloads on the fit screen, as the demo Reviewer sees them at
 * phone (390 × 844) and wide (1280 × 800) sizes: the forest plot and each
 * region plot (scatter, influence, null distribution of a permutation fit)
 * carry SVG, PNG 1 col, PNG 2 col and Caption links, each at least 44 px
 * tall and inside the page's width; the SVG and the two-column PNG download
 * under the fit's file names, the PNG 2,161 px wide.
 */
import { readFileSync } from "node:fs";
import { PNG } from "pngjs";
import { beforeAll, expect, it } from "vitest";
import { demoApi, openPage, phone, runFitToDone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
let fitId: string;
let region: string;

beforeAll(async () => {
  const analyst = await demoApi(e2e.server.url, "analyst");
  const studies = (await analyst("/api/studies")) as { id: string }[];
  studyId = studies[0].id;
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "Accuracy, for figures",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        inference: "permutation",
        resamples: 500,
        seed: 3,
      },
    },
  })) as { id: string };
  fitId = (await runFitToDone(analyst, studyId, model.id)).id;
  const fit = (await analyst(`/api/fits/${fitId}`)) as {
    result: { regions: { region: string }[] };
  };
  region = fit.result.regions[0].region;
});

const kinds = ["scatter", "influence", "null"] as const;
const links = ["svg", "png-89", "png-183", "caption"] as const;

async function checkRow(
  page: import("playwright-core").Page,
  id: string,
  viewport: { width: number },
) {
  for (const link of links) {
    const control = page.getByTestId(`${id}-${link}`);
    await control.scrollIntoViewIfNeeded();
    const box = await control.boundingBox();
    expect(box, `${id}-${link}`).not.toBeNull();
    expect(box?.height ?? 0, `${id}-${link}`).toBeGreaterThanOrEqual(44);
    expect(box?.x ?? -1, `${id}-${link}`).toBeGreaterThanOrEqual(0);
    expect((box?.x ?? 0) + (box?.width ?? 0), `${id}-${link}`).toBeLessThanOrEqual(viewport.width);
  }
}

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`the Reviewer downloads figures beside each plot at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo reviewer" }).click();
      await page.waitForURL(/\/studies$/);
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
      await page.getByTestId("forest-plot").waitFor({ timeout: 60_000 });
      await checkRow(page, "figure-forest", viewport);
      await page.getByTestId("figure-forest").scrollIntoViewIfNeeded();
      await screenshot(page, `figures-forest-${label}`);

      await page.goto(
        `${e2e.server.url}/studies/${studyId}/fits/${fitId}/regions/${encodeURIComponent(region)}`,
      );
      await page.getByTestId("scatter-plot").waitFor({ timeout: 60_000 });
      for (const kind of kinds) await checkRow(page, `figure-${region}-${kind}`, viewport);
      await page.getByTestId(`figure-${region}-scatter`).scrollIntoViewIfNeeded();
      await screenshot(page, `figures-region-${label}`);

      const [svg] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId(`figure-${region}-scatter-svg`).click(),
      ]);
      expect(svg.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-${region}-scatter-89mm.svg`);
      const text = readFileSync((await svg.path()) as string, "utf8");
      expect(text.startsWith("<svg")).toBe(true);
      expect(text).toContain('width="89mm"');
      const [png] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId(`figure-${region}-null-png-183`).click(),
      ]);
      expect(png.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-${region}-null-183mm.png`);
      expect(PNG.sync.read(readFileSync((await png.path()) as string)).width).toBe(2161);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
