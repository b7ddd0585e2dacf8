/**
 * Set-asides as the demo Analyst sees them, at phone and wide sizes: in a
 * fit's region detail, tap a participant, read the individual caution, set
 * them aside with a reason → the card now says "Set aside on … by …" with
 * Restore and no second Set aside button → the study's Set aside section
 * (under Data) lists them → restore there with a reason → they move to the
 * history with who restored them and why → Activity says who did what to
 * whom.
 */
import type { Page } from "playwright-core";
import { expect, it } from "vitest";
import { openPage, phone, screenshot as saveScreenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

const analyst = "Tomas Ferreira";

/** A finished one-sample fit of the demo study, made through the API as the signed-in page's person. */
async function demoFit(page: Page, label: string): Promise<{ studyId: string; fitId: string }> {
  const api = page.request;
  const studies = (await (await api.get(`${e2e.server.url}/api/studies`)).json()) as {
    id: string;
    name: string;
  }[];
  const study = studies.find((s) => s.name.endsWith("(demo)"));
  if (!study) throw new Error(`no demo study among ${studies.map((s) => s.name).join(", ")}`);
  const model = await api.post(`${e2e.server.url}/api/studies/${study.id}/models`, {
    data: {
      name: `Load effect, set-aside check (${label})`,
      regionSelection: "anatomical-or-prior",
      spec: { kind: "one-sample" },
    },
  });
  expect(model.status(), await model.text()).toBe(201);
  const fit = await api.post(`${e2e.server.url}/api/studies/${study.id}/fits`, {
    data: { modelId: ((await model.json()) as { id: string }).id },
  });
  expect(fit.status(), await fit.text()).toBe(202);
  const fitId = ((await fit.json()) as { id: string }).id;
  await expect
    .poll(
      async () =>
        (
          (await (await api.get(`${e2e.server.url}/api/fits/${fitId}`)).json()) as {
            status: string;
          }
        ).status,
      { timeout: 90_000, interval: 250 },
    )
    .toBe("done");
  return { studyId: study.id, fitId };
}

for (const [label, viewport, participant] of [
  ["phone", phone, "sub-30"],
  ["wide", wide, "sub-31"],
] as const) {
  it(`sets aside from the region detail and restores from the study's Set aside section at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await page.goto(`${e2e.server.url}/sign-in`);
      await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
      await page.waitForURL(/\/studies$/);
      const { studyId, fitId } = await demoFit(page, label);
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fitId}`);
      // A phone opens a region as its own view: tap the first region.
      if (label === "phone")
        await page
          .getByTestId("region-table")
          .locator('[role="row"][aria-selected]')
          .first()
          .click({ timeout: 60_000 });
      const detail = page.getByTestId("region-detail");
      await detail.waitFor({ timeout: 60_000 });
      const region = ((await detail.getByRole("heading").first().textContent()) ?? "").trim();
      expect(region).toMatch(/\w/);

      // Tap the participant (through the diagnostics table's search: the same selection as a tap on the plot).
      const table = page.getByTestId("diagnostics-table");
      await table.getByLabel("Search Participant diagnostics").fill(participant);
      await table.locator('[role="row"]', { hasText: participant }).last().click();
      const card = page.getByTestId("participant-card");
      await card.waitFor();
      await expect(card.getByRole("heading").first().textContent()).resolves.toBe(participant);
      await expect(card.getByTestId("individual-caution").textContent()).resolves.toBe(
        "Not a basis for decisions about this individual.",
      );
      await expect(
        card.getByText(/reasons decided before looking at results/).count(),
      ).resolves.toBe(1);
      const why = `Mean framewise displacement above the preregistered limit (${label})`;
      await card.getByTestId("set-aside-reason").fill(why);
      await card.getByTestId("set-aside").click();

      // The card now says who set them aside, when and why, with Restore — never a second Set aside button.
      const line = card.getByTestId("participant-set-aside");
      await line.waitFor();
      await expect(line.textContent()).resolves.toMatch(
        new RegExp(
          `Set aside from ${region}Set aside on \\d{1,2} \\w{3} \\d{4} by ${analyst}: ${escapeRegExp(why)}$`,
        ),
      );
      await expect(card.getByTestId("set-aside").count()).resolves.toBe(0);
      await expect(card.getByTestId("set-aside-reason").count()).resolves.toBe(0);
      await expect(
        card.getByRole("button", { name: `Restore ${participant}` }).count(),
      ).resolves.toBe(1);
      await card.scrollIntoViewIfNeeded();
      await screenshot(page, `set-aside-card-${label}`);

      // The study's Set aside section lists them under Data.
      await page.getByRole("tab", { name: "Data" }).click();
      const section = page.getByTestId("set-aside-section");
      await section.waitFor();
      const row = section.getByTestId("set-aside-row").filter({ hasText: participant });
      await row.waitFor();
      await expect(row.textContent()).resolves.toContain(`${region}Set aside on`);
      await expect(row.textContent()).resolves.toContain(`by ${analyst}: ${why}`);
      await row.scrollIntoViewIfNeeded();
      await screenshot(page, `set-aside-section-${label}`);

      // Restore asks for a reason first.
      await row.getByRole("button", { name: `Restore ${participant}` }).click();
      const confirm = row.getByTestId("restore-confirm");
      await expect(confirm.getAttribute("aria-disabled")).resolves.toBe("true");
      const back = `Motion rechecked on the raw series: within the limit (${label})`;
      await row.getByTestId("restore-reason").fill(back);
      await confirm.click();
      await expect
        .poll(() => section.getByTestId("set-aside-row").filter({ hasText: participant }).count())
        .toBe(0);

      // …and stays as history: who restored, when and why.
      await section.getByTestId("set-aside-history-toggle").click();
      const history = section.getByTestId("set-aside-history-row").filter({ hasText: why });
      await history.waitFor();
      await expect(history.textContent()).resolves.toMatch(
        new RegExp(`Restored on \\d{1,2} \\w{3} \\d{4} by ${analyst}: ${escapeRegExp(back)}$`),
      );
      await history.scrollIntoViewIfNeeded();
      await screenshot(page, `set-aside-history-${label}`);

      // Activity says who did what to whom.
      await page.getByRole("tab", { name: "Activity" }).click();
      const events = page.getByTestId("activity-event");
      await events
        .filter({ hasText: `${analyst} restored ${participant} to ${region}: ‘${back}’` })
        .waitFor();
      await events
        .filter({ hasText: `${analyst} set aside ${participant} from ${region}: ‘${why}’` })
        .waitFor();
      await screenshot(page, `set-aside-activity-${label}`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}

/** A screenshot after the page has painted what was just scrolled into view. */
async function screenshot(page: Page, name: string): Promise<void> {
  await page.evaluate(
    () => new Promise((done) => requestAnimationFrame(() => requestAnimationFrame(done))),
  );
  await saveScreenshot(page, name);
}

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
}
