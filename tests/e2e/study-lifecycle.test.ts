/**
 * A study's life cycle in the browser: the Owner archives a study (a
 * read-only badge and notice, no write controls), unarchives it, deletes
 * it (the confirmation says it can be undone for 30 days), finds it under
 * Recently deleted on the Studies screen and restores it; the Activity
 * tells every step.
 */
import { expect, it } from "vitest";
import type { Page } from "playwright-core";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

async function signInByLink(page: Page, address: string): Promise<void> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByTestId("email-input").fill(address);
  await page.getByTestId("send-link").click();
  await page.getByText("Check your e-mail").waitFor();
  await page.goto(`${e2e.server.url}/mailbox`);
  const message = page
    .getByTestId("mail-message")
    .filter({ hasText: address })
    .filter({ hasText: "sign-in link" })
    .first();
  await message.getByTestId("mail-link").first().click();
  await page.waitForURL(/\/studies$/);
}

it("an Owner archives and unarchives a study, deletes it and restores it from Recently deleted", async () => {
  const owner = await openPage(e2e.browser, wide);
  const small = await openPage(e2e.browser, phone);
  try {
    const { page } = owner;
    await signInByLink(page, "keeper@lab.example");
    await page.getByTestId("new-study").click();
    await page.getByTestId("study-name").fill("Tidal memory cohort");
    await page.getByTestId("create-study").click();
    await page.waitForURL(/\/studies\/[^/]+\/data$/);
    const studyPath = new URL(page.url()).pathname.replace(/\/data$/, "");
    await page.getByTestId("upload").waitFor();

    await page.goto(`${e2e.server.url}${studyPath}/team`);
    await page.getByText("Study settings").waitFor();
    await page.getByTestId("archive-study-button").click();
    await page.getByTestId("archived-notice").waitFor();
    await page.getByText("Archived — read only").first().waitFor();
    await page.getByTestId("unarchive-study").waitFor();
    expect(await page.getByText("Study settings").count()).toBe(0);
    expect(await page.getByTestId("invite").count()).toBe(0);
    expect(await page.getByTestId("delete-study").count()).toBe(0);
    await screenshot(page, "study-archived-team-wide");
    await page.goto(`${e2e.server.url}${studyPath}/data`);
    await page.getByTestId("archived-notice").waitFor();
    await page.getByText("This study is archived: no data can be uploaded").waitFor();
    expect(await page.getByTestId("upload").count()).toBe(0);

    await page.goto(`${e2e.server.url}${studyPath}/team`);
    await page.getByTestId("unarchive-study").click();
    await page.getByTestId("archive-study-button").waitFor();
    expect(await page.getByTestId("archived-notice").count()).toBe(0);

    const deleteCard = page.getByTestId("delete-study");
    await deleteCard.getByText("You can undo this for 30 days").waitFor();
    await deleteCard.getByRole("textbox").fill("Tidal memory cohort");
    await deleteCard.getByRole("button", { name: "Delete study" }).click();
    await page.waitForURL(/\/studies$/);
    const deleted = page
      .getByTestId("deleted-study-card")
      .filter({ hasText: "Tidal memory cohort" });
    await deleted.getByText("can be restored until").waitFor();
    expect(
      await page.getByTestId("study-card").filter({ hasText: "Tidal memory cohort" }).count(),
    ).toBe(0);

    // On a phone the same list, one column, with a tap-sized Restore.
    await small.page.context().addCookies(await page.context().cookies());
    await small.page.goto(`${e2e.server.url}/studies`);
    const restoreOnPhone = small.page
      .getByTestId("deleted-study-card")
      .filter({ hasText: "Tidal memory cohort" })
      .getByTestId("restore-study");
    await restoreOnPhone.waitFor();
    expect((await restoreOnPhone.boundingBox())?.height).toBeGreaterThanOrEqual(44);
    await screenshot(small.page, "studies-recently-deleted-phone");

    await deleted.getByTestId("restore-study").click();
    await page.waitForURL(new RegExp(`${studyPath}$|${studyPath}/`));
    await page.getByText("Tidal memory cohort").first().waitFor();
    await page.goto(`${e2e.server.url}${studyPath}/activity`);
    await page.getByText("restored the deleted study").waitFor();
    await page.getByText(/deleted the study \(an Owner could restore it until/).waitFor();
    await page.getByText("unarchived the study").waitFor();
    await page.getByText("archived the study (read-only for everyone)").waitFor();
    await page.goto(`${e2e.server.url}/studies`);
    await page.getByTestId("study-card").filter({ hasText: "Tidal memory cohort" }).waitFor();
    expect(await page.getByTestId("recently-deleted").count()).toBe(0);
    expect(owner.errors).toEqual([]);
    expect(small.errors).toEqual([]);
  } finally {
    await owner.context.close();
    await small.context.close();
  }
});
