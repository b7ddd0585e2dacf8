/**
 * Tables and results sentences for a manuscript, as the demo Reviewer sees
 * them at phone (390 × 844) and wide (1280 × 800) sizes: a done fit's
 * publish panel offers the region table as Markdown, LaTeX and Word beside
 * the CSV; the results sentences list one sentence per region with its
 * symbols in italics and a Copy button; every button and link is at least
 * 44 px tall and nothing is cut off at the panel's right edge; the Word and
 * Markdown tables download under the fit's file names.
 */
import { readFileSync } from "node:fs";
import { beforeAll, expect, it } from "vitest";
import { demoApi, openPage, phone, runFitToDone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
let fitId: string;
let sentences: { region: string; text: string; runs: { text: string; italic: boolean }[] }[];

beforeAll(async () => {
  const analyst = await demoApi(e2e.server.url, "analyst");
  const studies = (await analyst("/api/studies")) as { id: string }[];
  studyId = studies[0].id;
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "Accuracy, for the manuscript",
      regionSelection: "anatomical-or-prior",
      spec: { kind: "association", predictor: "accuracy", covariates: ["age"], correction: "holm" },
    },
  })) as { id: string };
  fitId = (await runFitToDone(analyst, studyId, model.id)).id;
  sentences = (await analyst(`/api/fits/${fitId}/sentences`)) as typeof sentences;
});

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`the Reviewer downloads the tables and copies a results sentence at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo reviewer" }).click();
      await page.waitForURL(/\/studies$/);
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
      const panel = page.getByTestId("results-sentences");
      await panel.waitFor({ timeout: 60_000 });

      // The first sentence as the API writes it (runs joined), its symbols in italics.
      const first = page.getByTestId("sentence-text-0");
      await expect(first.textContent()).resolves.toBe(
        sentences[0].runs.map((r) => r.text).join(""),
      );
      expect(sentences[0].text).toMatch(/^partial r\(\d+\) = /);
      const styles = await first.evaluate((element) =>
        Array.from(element.children).map((c) => [
          c.textContent,
          getComputedStyle(c).fontStyle === "italic",
        ]),
      );
      expect(styles).toContainEqual(["r", true]);
      expect(styles).toContainEqual(["p", true]);
      expect(styles).toContainEqual(["partial ", false]);

      // Copy beside the sentence.
      await page.getByTestId("copy-sentence-0").click();
      await panel.getByText("Copied.").first().waitFor();

      // Tap targets of at least 44 px, nothing past the right edge of the page.
      const controls = [
        "download-regions",
        "download-regions-md",
        "download-regions-tex",
        "download-regions-docx",
        "copy-sentence-0",
        "copy-all-sentences",
        "toggle-sentences",
      ];
      for (const id of controls) {
        const control = page.getByTestId(id);
        await control.scrollIntoViewIfNeeded();
        const box = await control.boundingBox();
        expect(box, id).not.toBeNull();
        expect(box?.height ?? 0, id).toBeGreaterThanOrEqual(44);
        expect(box?.x ?? -1, id).toBeGreaterThanOrEqual(0);
        expect((box?.x ?? 0) + (box?.width ?? 0), id).toBeLessThanOrEqual(viewport.width);
      }
      const row = page.getByTestId("sentence-0");
      const clipped = await row.evaluate((element) => {
        const r = element.getBoundingClientRect();
        return {
          right: r.right,
          overflow: element.scrollWidth > element.clientWidth + 1,
        };
      });
      expect(clipped.overflow).toBe(false);
      expect(clipped.right).toBeLessThanOrEqual(viewport.width);
      await row.evaluate((element) => element.scrollIntoView({ block: "center" }));
      await screenshot(page, `manuscript-sentences-${label}`);

      // The Word and Markdown tables download under the fit's file names.
      const [docx] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId("download-regions-docx").click(),
      ]);
      expect(docx.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-regions.docx`);
      expect(
        readFileSync((await docx.path()) as string)
          .subarray(0, 2)
          .toString(),
      ).toBe("PK");
      const [md] = await Promise.all([
        page.waitForEvent("download"),
        page.getByTestId("download-regions-md").click(),
      ]);
      expect(md.suggestedFilename()).toBe(`fit-${fitId.slice(0, 8)}-regions.md`);
      const table = readFileSync((await md.path()) as string, "utf8");
      for (const s of sentences) expect(table).toContain(`| ${s.region.replace(/_/g, "\\_")} |`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}
