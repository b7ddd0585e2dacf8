/**
 * The Planner as a person uses it, at phone and wide sizes: the default
 * question answers in one sentence with a power curve and its method named;
 * the curve's figure links sit beside it, each at least 44 px tall and inside
 * the page's width, and the SVG and the two-column PNG download.
 */
import { readFileSync } from "node:fs";
import { PNG } from "pngjs";
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
      for (const link of ["svg", "png-89", "png-183", "caption"]) {
        const box = await page.getByTestId(`figure-power-curve-${link}`).boundingBox();
        expect(box?.height ?? 0, link).toBeGreaterThanOrEqual(44);
        expect((box?.x ?? 0) + (box?.width ?? 0), link).toBeLessThanOrEqual(viewport.width);
      }
      await page.getByTestId("figure-power-curve").scrollIntoViewIfNeeded();
      await screenshot(page, `planner-${label}`);
      const [svg] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId("figure-power-curve-svg").click(),
      ]);
      expect(svg.suggestedFilename()).toBe("planner-power-curve-89mm.svg");
      const text = readFileSync((await svg.path()) as string, "utf8");
      expect(text.startsWith("<svg")).toBe(true);
      expect(text).toContain('class="power-point"');
      const [png] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId("figure-power-curve-png-183").click(),
      ]);
      expect(png.suggestedFilename()).toBe("planner-power-curve-183mm.png");
      expect(PNG.sync.read(readFileSync((await png.path()) as string)).width).toBe(2161);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
