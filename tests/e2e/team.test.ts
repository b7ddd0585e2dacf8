/**
 * Team roles in the browser: an Owner invites a second person by e-mail;
 * that person accepts from the Mailbox link and sees the study read-only as
 * a Viewer. The Owner's Activity shows the invitation and the acceptance.
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

it("an Owner invites a Viewer, who accepts from the Mailbox and reads the study without edit controls", async () => {
  const owner = await openPage(e2e.browser, wide);
  const guest = await openPage(e2e.browser, phone);
  try {
    await signInByLink(owner.page, "pi@lab.example");
    await owner.page.getByTestId("new-study").click();
    await owner.page.getByTestId("study-name").fill("Load study, spring cohort");
    await owner.page.getByTestId("create-study").click();
    await owner.page.waitForURL(/\/studies\/[^/]+\/data$/);
    const studyPath = new URL(owner.page.url()).pathname.replace(/\/data$/, "");
    await owner.page.goto(`${e2e.server.url}${studyPath}/team`);
    await owner.page.getByTestId("invite-email").fill("guest@lab.example");
    await owner.page
      .getByTestId("invite-role")
      .getByRole("radio", { name: /^Viewer/ })
      .click();
    await owner.page.getByTestId("send-invitation").click();
    await owner.page.getByText("Invitation sent to guest@lab.example.").waitFor();
    await owner.page
      .getByTestId("pending-invitation")
      .filter({ hasText: "guest@lab.example" })
      .waitFor();
    await screenshot(owner.page, "team-wide");

    await signInByLink(guest.page, "guest@lab.example");
    await guest.page.goto(`${e2e.server.url}/mailbox`);
    const invitation = guest.page
      .getByTestId("mail-message")
      .filter({ hasText: "guest@lab.example" })
      .filter({ hasText: "Load study, spring cohort" })
      .first();
    await invitation.getByTestId("mail-link").first().click();
    await guest.page.getByTestId("accept-invitation").click();
    await guest.page.waitForURL(new RegExp(`${studyPath}`));
    await guest.page.goto(`${e2e.server.url}${studyPath}/team`);
    await guest.page.getByText("You: Viewer").waitFor();
    await guest.page.getByTestId("member-row").filter({ hasText: "guest@lab.example" }).waitFor();
    expect(await guest.page.getByTestId("invite").count()).toBe(0);
    expect(await guest.page.getByText("Study settings").count()).toBe(0);
    expect(await guest.page.getByRole("tab", { name: "Activity" }).count()).toBe(0);
    await screenshot(guest.page, "team-viewer-phone");

    await owner.page.goto(`${e2e.server.url}${studyPath}/activity`);
    await owner.page.getByText("invited guest@lab.example as viewer").waitFor();
    await owner.page.getByText("accepted an invitation as viewer").waitFor();
    await screenshot(owner.page, "activity-wide");
    expect(owner.errors).toEqual([]);
    expect(guest.errors).toEqual([]);
  } finally {
    await owner.context.close();
    await guest.context.close();
  }
});
