/**
 * The region table and the fit page at phone (390×844) and wide (1280×800)
 * size, on the demo study and on invented studies with 10 and 400 regions
 * with long region names: the six key columns (region, estimate, 95% CI, p,
 * adjusted p, flags) have their headers and first rows' cells inside the
 * viewport with no sideways scroll of the page or the table; no header is
 * cut; a table wider than its box says so ("More columns →") and keeps its
 * first column in place; on a phone, tapping a region opens its detail as
 * its own view, within the first screen, with a way back to the table and
 * the row highlighted; on a wide screen the table spans the content width
 * and the detail follows in two columns.
 */
import type { Locator, Page } from "playwright-core";
import { beforeAll, expect, it } from "vitest";
import { type DemoApi, demoApi, openPage, phone, runFitToDone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let owner: DemoApi;
const fits: { label: string; studyId: string; fitId: string; estimate: string }[] = [];

const areas = [
  "anterior_insula",
  "posterior_superior_temporal_sulcus",
  "dorsolateral_prefrontal_cortex",
  "inferior_parietal_lobule",
  "ventral_striatum",
];

/** Long, realistic region names: "left_anterior_insula", then numbered once the areas run out. */
function regionNames(count: number): string[] {
  const names: string[] = [];
  for (let i = 0; names.length < count; i++) {
    const side = i % 2 === 0 ? "left" : "right";
    const area = areas[Math.floor(i / 2) % areas.length];
    const round = Math.floor(i / (2 * areas.length));
    names.push(round === 0 ? `${side}_${area}` : `${side}_${area}_${round + 1}`);
  }
  return names;
}

/** A brain table of 30 participants: region r's values have a mean that grows with r (invented numbers). */
function brainCsv(regions: readonly string[]): string {
  const lines = [`participant_id,${regions.join(",")}`];
  for (let i = 1; i <= 30; i++) {
    const values = regions.map((_, r) =>
      (((r % 7) - 2) * 0.05 + Math.sin(i * 1.7 + r * 0.31) * 0.4 + (i === 7 ? 1.5 : 0)).toFixed(4),
    );
    lines.push(`sub-${String(i).padStart(2, "0")},${values.join(",")}`);
  }
  return `${lines.join("\n")}\n`;
}

async function inventedFit(
  label: string,
  count: number,
  regionSelection: "anatomical-or-prior" | "same-data",
): Promise<void> {
  const study = (await owner("/api/studies", {
    method: "POST",
    body: { name: `${count} regions with long names` },
  })) as { id: string };
  const form = new FormData();
  form.set("kind", "brain");
  form.set(
    "file",
    new Blob([brainCsv(regionNames(count))], { type: "text/csv" }),
    `regions-${count}.csv`,
  );
  const preview = (await owner(`/api/studies/${study.id}/datasets`, {
    method: "POST",
    body: form,
  })) as { id: string };
  await owner(`/api/studies/${study.id}/datasets/${preview.id}/confirm`, {
    method: "POST",
    body: {},
  });
  const model = (await owner(`/api/studies/${study.id}/models`, {
    method: "POST",
    body: {
      name: `Task effect in ${count} regions`,
      regionSelection,
      spec: { kind: "one-sample", correction: "bh" },
    },
  })) as { id: string };
  fits.push({
    label,
    studyId: study.id,
    fitId: (await runFitToDone(owner, study.id, model.id)).id,
    estimate: "Mean",
  });
}

beforeAll(async () => {
  owner = await demoApi(e2e.server.url, "owner");
  const demoStudy = ((await owner("/api/studies")) as { id: string }[])[0].id;
  const model = (await owner(`/api/studies/${demoStudy}/models`, {
    method: "POST",
    body: {
      name: "Accuracy with age held constant",
      regionSelection: "anatomical-or-prior",
      spec: { kind: "association", predictor: "accuracy", covariates: ["age"], correction: "bh" },
    },
  })) as { id: string };
  fits.push({
    label: "demo",
    studyId: demoStudy,
    fitId: (await runFitToDone(owner, demoStudy, model.id)).id,
    estimate: "Slope",
  });
  // Regions chosen from the same data: the fit carries the long circularity caution.
  await inventedFit("10-regions", 10, "same-data");
  await inventedFit("400-regions", 400, "anatomical-or-prior");
});

async function signIn(page: Page): Promise<void> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: "Sign in as the demo owner" }).click();
  await page.waitForURL(/\/studies$/);
}

interface Box {
  x: number;
  y: number;
  width: number;
  height: number;
}

async function boxOf(locator: Locator): Promise<Box> {
  const box = await locator.boundingBox();
  if (!box) throw new Error("element has no box");
  return box;
}

/** Sideways overflow of the page and of every scrolling ancestor of the element (px beyond the box). */
async function sidewaysOverflow(table: Locator): Promise<{ what: string; by: number }[]> {
  return table.evaluate((element) => {
    const found: { what: string; by: number }[] = [];
    const doc = document.documentElement;
    if (doc.scrollWidth > doc.clientWidth + 1)
      found.push({ what: "page", by: doc.scrollWidth - doc.clientWidth });
    for (let node: HTMLElement | null = element as HTMLElement; node; node = node.parentElement) {
      if (node.scrollWidth > node.clientWidth + 1) {
        const style = getComputedStyle(node);
        if (style.overflowX === "auto" || style.overflowX === "scroll")
          found.push({
            what: node.getAttribute("data-testid") ?? node.tagName,
            by: node.scrollWidth - node.clientWidth,
          });
      }
    }
    for (const scroller of element.querySelectorAll<HTMLElement>("*")) {
      const style = getComputedStyle(scroller);
      if (
        (style.overflowX === "auto" || style.overflowX === "scroll") &&
        scroller.scrollWidth > scroller.clientWidth + 1
      )
        found.push({
          what: scroller.getAttribute("data-testid") ?? scroller.tagName,
          by: scroller.scrollWidth - scroller.clientWidth,
        });
    }
    return found;
  });
}

/**
 * Header cells whose words are cut or hidden: an element narrower than its
 * content, or text drawn beyond the cell's box on either side (right-aligned
 * text runs out to the left, which no scroll width shows).
 */
async function cutHeaders(table: Locator): Promise<string[]> {
  return table.locator('[role="columnheader"]').evaluateAll((headers) =>
    headers.flatMap((header) => {
      const parts = [header as HTMLElement, ...header.querySelectorAll<HTMLElement>("*")];
      const overflowing = parts.some(
        (el) => el.scrollWidth > el.clientWidth + 1 || el.scrollHeight > el.clientHeight + 1,
      );
      const range = document.createRange();
      range.selectNodeContents(header);
      const text = range.getBoundingClientRect();
      const box = header.getBoundingClientRect();
      const outside = text.left < box.left - 1 || text.right > box.right + 1;
      return overflowing || outside ? [header.textContent ?? ""] : [];
    }),
  );
}

/** Interactive elements inside the element (buttons, fields, choices, pressable rows) less than 44 px high. */
async function smallTargets(root: Locator): Promise<string[]> {
  return root.evaluate((element) =>
    [
      ...element.querySelectorAll<HTMLElement>(
        'button, input, [role="button"], [role="radio"], [role="checkbox"], [role="row"][aria-selected], [tabindex="0"]',
      ),
    ]
      .filter((el) => {
        const box = el.getBoundingClientRect();
        return box.width > 0 && box.height < 44;
      })
      .map(
        (el) =>
          `${el.getAttribute("aria-label") ?? el.textContent} (${Math.round(el.getBoundingClientRect().height)} px)`,
      ),
  );
}

function inside(box: Box, viewport: { width: number; height: number }): boolean {
  return (
    box.x >= 0 &&
    box.x + box.width <= viewport.width + 0.5 &&
    box.y >= 0 &&
    box.y + box.height <= viewport.height + 0.5
  );
}

async function checkKeyColumns(
  page: Page,
  viewport: { width: number; height: number },
  estimate: string,
): Promise<void> {
  const table = page.getByTestId("region-table");
  const headerRow = table.locator('[role="row"]').first();
  await headerRow.evaluate((row) => row.scrollIntoView({ block: "start" }));
  const headers = table.locator('[role="columnheader"]');
  const words = (await headers.allTextContents()).map((w) => w.replace(/[▲▼]/g, "").trim());
  expect(words.slice(0, 6)).toEqual(["Region", estimate, "95% CI", "p", "Adjusted p", "Flags"]);
  for (let i = 0; i < 6; i++) {
    const box = await boxOf(headers.nth(i));
    expect(
      inside(box, viewport),
      `header ${words[i]} inside the viewport: ${JSON.stringify(box)}`,
    ).toBe(true);
  }
  // The first rows' six key cells.
  const rows = table.locator('[role="row"][aria-selected]');
  for (let r = 0; r < 3; r++) {
    const cells = rows.nth(r).locator('[role="rowheader"], [role="cell"]');
    for (let c = 0; c < 6; c++) {
      const box = await boxOf(cells.nth(c));
      expect(
        box.x >= 0 && box.x + box.width <= viewport.width + 0.5,
        `row ${r + 1}, column ${words[c]} inside the viewport's width: ${JSON.stringify(box)}`,
      ).toBe(true);
      const text = await cells.nth(c).evaluate((el) => ({
        cut: [...el.querySelectorAll<HTMLElement>("*")].some(
          (t) => t.scrollWidth > t.clientWidth + 1,
        ),
      }));
      expect(text.cut, `row ${r + 1}, column ${words[c]} is not cut`).toBe(false);
    }
  }
  // No key cell on the page is cut (numbers of every length, long names, intervals).
  const cut = await rows.evaluateAll((all) =>
    all.flatMap((row) =>
      [...row.querySelectorAll<HTMLElement>('[role="rowheader"], [role="cell"]')]
        .slice(0, 6)
        .filter((cell) => {
          const range = document.createRange();
          range.selectNodeContents(cell);
          const text = range.getBoundingClientRect();
          const box = cell.getBoundingClientRect();
          return (
            text.left < box.left - 1 ||
            text.right > box.right + 1 ||
            [cell, ...cell.querySelectorAll<HTMLElement>("*")].some(
              (el) => el.scrollWidth > el.clientWidth + 1,
            )
          );
        })
        .map((cell) => cell.textContent ?? ""),
    ),
  );
  expect(cut).toEqual([]);
  expect(await sidewaysOverflow(table)).toEqual([]);
  expect(await cutHeaders(table)).toEqual([]);
  await expect(page.getByTestId("region-table-more-columns").count()).resolves.toBe(0);
}

for (const [size, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`the six key columns fit without scrolling sideways, headers whole, at ${size} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await signIn(page);
      for (const fit of fits) {
        await page.goto(`${e2e.server.url}/studies/${fit.studyId}/fits/${fit.fitId}`);
        await page.getByTestId("region-table").waitFor({ timeout: 60_000 });
        // The header and its N fit in the first screen.
        for (const id of ["fit-stage", "fit-plain-words", "fit-set-aside-count"]) {
          const box = await boxOf(page.getByTestId(id));
          expect(inside(box, viewport), `${id} in the first screen`).toBe(true);
        }
        if (fit.label === "10-regions") {
          // The long caution takes one line, with "more" for the rest.
          const caution = page.getByTestId("fit-circularity");
          const collapsed = await boxOf(caution);
          expect(inside(collapsed, viewport)).toBe(true);
          expect(collapsed.height).toBeLessThanOrEqual(48);
          await caution
            .getByRole("button", { name: "Read the whole caution on region selection" })
            .click();
          expect((await boxOf(caution)).height).toBeGreaterThan(collapsed.height);
          await caution
            .getByRole("button", { name: "Show less of the caution on region selection" })
            .click();
        }
        await screenshot(page, `region-layout-${fit.label}-top-${size}`);
        await checkKeyColumns(page, viewport, fit.estimate);
        await screenshot(page, `region-layout-${fit.label}-table-${size}`);
        if (size === "phone") {
          expect(await smallTargets(page.getByTestId("fit-regions"))).toEqual([]);
          // Every row, header and chooser button is a tap target of 44 px.
          for (const target of [
            page.getByTestId("region-table").locator('[role="row"]').first(),
            page.getByTestId("region-table").locator('[role="row"][aria-selected]').first(),
            page.getByTestId("region-columns-toggle"),
          ]) {
            expect((await boxOf(target)).height).toBeGreaterThanOrEqual(44);
          }
        } else {
          // The table spans the content width; the detail follows in two columns.
          const table = await boxOf(page.getByTestId("fit-regions"));
          const head = await boxOf(page.getByTestId("fit-header"));
          expect(Math.abs(table.width - head.width)).toBeLessThanOrEqual(1);
          const detail = page.getByTestId("region-detail");
          await detail.waitFor();
          const detailBox = await boxOf(detail);
          expect(detailBox.y).toBeGreaterThan(table.y + table.height - 1);
          await detail.evaluate((el) => el.scrollIntoView({ block: "start" }));
          await screenshot(page, `region-layout-${fit.label}-detail-wide`);
        }
      }
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}

it("on a phone, a tapped region opens as its own view within the first screen, with a way back to the highlighted row", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signIn(page);
    for (const fit of fits) {
      await page.goto(`${e2e.server.url}/studies/${fit.studyId}/fits/${fit.fitId}`);
      const table = page.getByTestId("region-table");
      await table.waitFor({ timeout: 60_000 });
      // On the 400-region fit, a region from the table's second page.
      if (fit.label === "400-regions") {
        await table.getByRole("button", { name: "Next page" }).click();
        await expect
          .poll(() => table.getByTestId("region-table-range").textContent())
          .toMatch(/^rows 26–50 /);
      }
      const row = table.locator('[role="row"][aria-selected]').nth(1);
      const region = ((await row.locator('[role="rowheader"]').textContent()) ?? "").trim();
      await row.click();
      await page.waitForURL(/\/regions\/[^/]+$/);
      const detail = page.getByTestId("region-detail");
      await detail.waitFor({ timeout: 60_000 });
      await expect(detail.getByRole("heading").first().textContent()).resolves.toBe(region);
      const summary = await boxOf(page.getByTestId("region-summary"));
      expect(
        inside(summary, phone),
        `summary in the first screen: ${JSON.stringify(summary)}`,
      ).toBe(true);
      const back = await boxOf(page.getByTestId("region-back"));
      expect(inside(back, phone)).toBe(true);
      expect(back.height).toBeGreaterThanOrEqual(44);
      await screenshot(page, `region-layout-${fit.label}-detail-phone`);
      // The participant diagnostics are wider than a phone: the table says so and keeps its first column.
      const diagnostics = page.getByTestId("diagnostics-table");
      if ((await diagnostics.count()) > 0) {
        await diagnostics.scrollIntoViewIfNeeded();
        const more = page.getByTestId("diagnostics-table-more-columns");
        await more.waitFor();
        expect(await smallTargets(diagnostics)).toEqual([]);
        expect((await boxOf(more)).height).toBeGreaterThanOrEqual(44);
        const pinned = diagnostics.locator('[role="rowheader"]').first();
        const before = await boxOf(pinned);
        await more.click();
        await expect
          .poll(() =>
            page
              .getByTestId("diagnostics-table-scroller")
              .evaluate((el) => (el as HTMLElement).scrollLeft),
          )
          .toBeGreaterThan(0);
        const after = await boxOf(pinned);
        expect(Math.abs(after.x - before.x)).toBeLessThanOrEqual(1);
        await screenshot(page, `region-layout-${fit.label}-diagnostics-phone`);
      }
      await page.getByTestId("region-back").click();
      await page.waitForURL(/\/fits\/[^/?]+\?region=/);
      await table.waitFor();
      const highlighted = table.locator('[role="row"][aria-selected="true"]');
      await expect(highlighted.count()).resolves.toBe(1);
      await expect(highlighted.locator('[role="rowheader"]').textContent()).resolves.toBe(region);
      // The table opens at that row's page with the row in sight.
      await expect
        .poll(async () => inside(await boxOf(highlighted), phone), { message: "row in sight" })
        .toBe(true);
      await screenshot(page, `region-layout-${fit.label}-back-phone`);
    }
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("more columns come through the chooser, remembered for the person; a table wider than a phone says so and keeps the region in place", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  const fit = fits[0];
  try {
    await signIn(page);
    await page.goto(`${e2e.server.url}/studies/${fit.studyId}/fits/${fit.fitId}`);
    const table = page.getByTestId("region-table");
    await table.waitFor({ timeout: 60_000 });
    await page.getByTestId("region-columns-toggle").click();
    for (const name of ["N", "Statistic", "df", "r", "95% CI of r"])
      await page.getByTestId("region-columns").getByRole("checkbox", { name, exact: true }).click();
    const more = page.getByTestId("region-table-more-columns");
    await more.waitFor();
    const headers = await table.locator('[role="columnheader"]').allTextContents();
    expect(headers).toEqual(
      expect.arrayContaining(["N", "Statistic", "df", "r", "95% CI of r"].map((h) => h)),
    );
    expect(await cutHeaders(table)).toEqual([]);
    await screenshot(page, "region-layout-chooser-phone");
    const pinned = table.locator('[role="rowheader"]').first();
    const before = await boxOf(pinned);
    await more.click();
    await expect
      .poll(() =>
        page.getByTestId("region-table-scroller").evaluate((el) => (el as HTMLElement).scrollLeft),
      )
      .toBeGreaterThan(0);
    expect(Math.abs((await boxOf(pinned)).x - before.x)).toBeLessThanOrEqual(1);
    await screenshot(page, "region-layout-scrolled-phone");
    // Remembered: the person's preference holds the chosen columns, and a new visit shows them.
    await expect
      .poll(
        async () => ((await owner("/api/me/preferences")) as { preferences: object }).preferences,
      )
      .toEqual({ "region-table.columns": ["n", "statistic", "df", "r", "rInterval"] });
    await page.reload();
    await table.waitFor({ timeout: 60_000 });
    await expect
      .poll(() => table.locator('[role="columnheader"]').allTextContents())
      .toContain("Statistic");
    expect(errors).toEqual([]);
  } finally {
    await owner("/api/me/preferences/region-table.columns", { method: "PUT", body: { value: [] } });
    await context.close();
  }
});

it("on a phone the reliability table shows the ICC values and their intervals, and tables wider than the screen say so", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signIn(page);
    await page.goto(`${e2e.server.url}/studies/${fits[0].studyId}/data`);
    const reliability = page.getByTestId("brain-reliability-table");
    await reliability.waitFor({ timeout: 60_000 });
    await reliability
      .locator('[role="row"]')
      .first()
      .evaluate((row) => row.scrollIntoView());
    const headers = reliability.locator('[role="columnheader"]');
    const words = (await headers.allTextContents()).map((w) => w.replace(/[▲▼]/g, "").trim());
    expect(words.slice(0, 5)).toEqual(["Region", "ICC(3,1)", "95% CI", "ICC(2,1)", "95% CI"]);
    for (let i = 0; i < 5; i++)
      expect(inside(await boxOf(headers.nth(i)), phone), `${words[i]} in view`).toBe(true);
    const firstRow = reliability.locator('[role="row"]').nth(1);
    const cells = firstRow.locator('[role="rowheader"], [role="cell"]');
    for (let c = 0; c < 5; c++) {
      const box = await boxOf(cells.nth(c));
      expect(box.x >= 0 && box.x + box.width <= phone.width + 0.5, `cell ${words[c]}`).toBe(true);
    }
    expect(await cells.nth(2).textContent()).toMatch(/^-?\d\.\d\d to -?\d\.\d\d$|unbounded/);
    expect(await cutHeaders(reliability)).toEqual([]);
    await screenshot(page, "region-layout-reliability-phone");
    // Every table wider than its box signals it; none that fits does.
    for (const id of ["brain-reliability-table", "roster-table"]) {
      const scroller = page.getByTestId(`${id}-scroller`);
      if ((await scroller.count()) === 0) continue;
      await scroller.scrollIntoViewIfNeeded();
      const wider = await scroller.evaluate((el) => el.scrollWidth > el.clientWidth + 1);
      await expect
        .poll(() => page.getByTestId(`${id}-more-columns`).count(), { message: id })
        .toBe(wider ? 1 : 0);
    }
    await page.getByTestId("roster-table").scrollIntoViewIfNeeded();
    await screenshot(page, "region-layout-roster-phone");
    for (const id of ["brain-reliability-table", "roster-table"])
      expect(await smallTargets(page.getByTestId(id)), id).toEqual([]);
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});
