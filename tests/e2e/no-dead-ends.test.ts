/**
 * No dead ends, at phone size: a Viewer who opens a write route or a
 * role-limited read by its address sees a plain sentence naming their role
 * and a link back, never a form or a raw action code; an unknown study
 * shows "Study not found" with a link to the studies list.
 */
import { beforeAll, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { demoApi, openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;

async function signInAsDemo(
  page: Page,
  role: "owner" | "analyst" | "reviewer" | "viewer",
): Promise<void> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: `Sign in as the demo ${role}` }).click();
  await page.waitForURL(/\/studies$/);
}

beforeAll(async () => {
  const viewer = await demoApi(e2e.server.url, "viewer");
  studyId = ((await viewer("/api/studies")) as { id: string }[])[0].id;
});

for (const [route, sentence, back] of [
  ["models/new", "Your role in this study (Viewer) cannot build models.", "Back to Models"],
  [
    "activity",
    "Your role in this study (Viewer) cannot see the study's activity.",
    "Back to the study",
  ],
] as const) {
  it(`a Viewer opening ${route} by its address sees why, with a link back, and no input`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, phone);
    try {
      await signInAsDemo(page, "viewer");
      await page.goto(`${e2e.server.url}/studies/${studyId}/${route}`);
      const refusal = page.getByTestId("role-refusal");
      await refusal.getByText(sentence, { exact: true }).waitFor();
      expect(await page.locator("input, textarea, select").count()).toBe(0);
      expect(await page.getByRole("button", { name: "Try again" }).count()).toBe(0);
      expect(await page.getByText(/activity\.list|models\.write/).count()).toBe(0);
      await screenshot(page, `refusal-${route.replace("/", "-")}-phone`);
      await refusal.getByText(back).click();
      await page.waitForURL(new RegExp(`/studies/${studyId}/(models|data)$`));
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}

it("an unknown study shows Study not found with a link to the studies list", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(page, "viewer");
    const unknown = "00000000-0000-4000-8000-000000000000";
    await page.goto(`${e2e.server.url}/studies/${unknown}/data`);
    const notFound = page.getByTestId("study-not-found");
    await notFound.getByText("Study not found").waitFor();
    expect(await page.getByRole("button", { name: "Try again" }).count()).toBe(0);
    await screenshot(page, "study-not-found-phone");
    await notFound.getByText("Go to your studies").click();
    await page.waitForURL(/\/studies$/);
    // The one failed request is the study's own 404.
    expect(
      errors.filter((e) => !e.startsWith(`response: 404 GET /api/studies/${unknown}`)),
    ).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a cancelled fit offers Run again to an Analyst, which starts a new fit of the same model", async () => {
  const analyst = await demoApi(e2e.server.url, "analyst");
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: "Accuracy with age, cancelled",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "permutation",
        resamples: 5000,
        seed: 9,
        correction: "holm",
      },
    },
  })) as { id: string };
  const fit = (await analyst(`/api/studies/${studyId}/fits`, {
    method: "POST",
    body: { modelId: model.id },
  })) as { id: string };
  await analyst(`/api/fits/${fit.id}/cancel`, { method: "POST", body: {} });
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(page, "analyst");
    await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fit.id}`);
    const runAgain = page.getByTestId("fit-run-again");
    await runAgain.waitFor();
    await screenshot(page, "fit-run-again-phone");
    await runAgain.click();
    await page.waitForURL(
      (url) => /\/fits\/[^/]+$/.test(url.pathname) && !url.pathname.endsWith(fit.id),
    );
    const newId = new URL(page.url()).pathname.split("/").pop() as string;
    const created = (await analyst(`/api/fits/${newId}`)) as { model: { id: string } };
    expect(created.model.id).toBe(model.id);
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
  // Whoever may not run fits sees no Run again.
  const viewer = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(viewer.page, "viewer");
    await viewer.page.goto(`${e2e.server.url}/studies/${studyId}/fits/${fit.id}`);
    await viewer.page.getByText("This fit was cancelled before it finished.").waitFor();
    expect(await viewer.page.getByTestId("fit-run-again").count()).toBe(0);
  } finally {
    await viewer.context.close();
  }
});

it("the invitation page, opened while signed in as someone else, offers Sign out and continue, which comes back to it", async () => {
  const owner = await demoApi(e2e.server.url, "owner");
  await owner(`/api/studies/${studyId}/invitations`, {
    method: "POST",
    body: { email: "newcomer@lab.example", role: "viewer" },
  });
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(page, "analyst");
    await page.goto(`${e2e.server.url}/mailbox`);
    await page
      .getByTestId("mail-message")
      .filter({ hasText: "newcomer@lab.example" })
      .first()
      .getByTestId("mail-link")
      .first()
      .click();
    await page.waitForURL(/\/invitations\/[^/]+$/);
    const invitationPath = new URL(page.url()).pathname;
    await page
      .getByText(
        "You are signed in as analyst@demo.covarion.test, but this invitation is for newcomer@lab.example.",
        { exact: false },
      )
      .waitFor();
    expect(await page.getByTestId("accept-invitation").count()).toBe(0);
    await screenshot(page, "invitation-other-person-phone");
    await page.getByTestId("sign-out-and-continue").click();
    await page.getByText("Sign in as newcomer@lab.example to accept.").waitFor();
    expect(new URL(page.url()).pathname).toBe(invitationPath);
    await expect(page.getByTestId("email-input").inputValue()).resolves.toBe(
      "newcomer@lab.example",
    );
    const me = await page.request.get(`${e2e.server.url}/api/me`);
    expect(me.status()).toBe(401);
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a form's validation error reads as a sentence without a field path", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(page, "owner");
    await page.goto(`${e2e.server.url}/studies/${studyId}/team`);
    await page.getByTestId("invite-email").fill("not-an-address");
    await page.getByTestId("send-invitation").click();
    await page
      .getByTestId("invite")
      .getByText("Enter an e-mail address such as name@lab.example.")
      .waitFor();
    expect(await page.getByText("body.email").count()).toBe(0);
    await screenshot(page, "invite-validation-phone");
    // The one failed request is the refused invitation.
    expect(
      errors.filter((e) => !e.startsWith(`response: 400 POST /api/studies/${studyId}/invitations`)),
    ).toEqual([]);
  } finally {
    await context.close();
  }
});

it("the Mailbox shows the sign-in link inside the message text", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByTestId("email-input").fill("mailbox-reader@lab.example");
    await page.getByTestId("send-link").click();
    await page.getByText("Check your e-mail").waitFor();
    await page.goto(`${e2e.server.url}/mailbox`);
    const message = page
      .getByTestId("mail-message")
      .filter({ hasText: "mailbox-reader@lab.example" })
      .first();
    const link = message.getByTestId("mail-link");
    await link.waitFor();
    expect(await link.count()).toBe(1);
    // The link stands in the sentence that introduces it; no bare address and no dangling colon.
    const paragraph = (await link.locator("xpath=..").textContent()) ?? "";
    expect(paragraph).toContain("The link below signs you in.");
    expect(paragraph).toContain("Sign in to Covarion: Open the sign-in link");
    expect(paragraph).toContain("If you did not ask for this");
    expect(paragraph).not.toMatch(/https?:\/\//);
    await screenshot(page, "mailbox-inline-link-phone");
    await link.click();
    await page.waitForURL(/\/studies$/);
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("on the phone the navigation draws its icons and the app bar's, tabs' and chips' tap targets are at least 44 px", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(page, "owner");
    await page.goto(`${e2e.server.url}/studies/${studyId}/activity`);
    await page.getByRole("radio").first().waitFor();
    for (const name of ["studies", "planner", "mailbox"]) {
      const icon = page.getByTestId(`nav-icon-${name}`);
      await icon.waitFor();
      expect(await icon.evaluate((element) => element.tagName.toLowerCase())).toBe("svg");
    }
    const nav = page.getByRole("navigation");
    expect(await nav.textContent()).not.toMatch(/[▤◔✉]/);
    const targets = [
      page.getByTestId("sign-out"),
      ...(await page.getByRole("tab").all()),
      ...(await page.getByRole("radio").all()),
      ...(await nav.getByRole("link").all()),
    ];
    expect(targets.length).toBeGreaterThan(8);
    for (const target of targets) {
      const box = await target.boundingBox();
      expect(box, (await target.textContent().catch(() => null)) ?? "?").not.toBeNull();
      expect(box?.height ?? 0).toBeGreaterThanOrEqual(44);
      expect(box?.width ?? 0).toBeGreaterThanOrEqual(44);
    }
    await screenshot(page, "nav-icons-phone");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
  // The side rail at wide size draws the same icons.
  const wideView = await openPage(e2e.browser, wide);
  try {
    await signInAsDemo(wideView.page, "owner");
    const icon = wideView.page.getByTestId("nav-icon-planner");
    await icon.waitFor();
    expect(await icon.evaluate((element) => element.tagName.toLowerCase())).toBe("svg");
    await screenshot(wideView.page, "nav-icons-wide");
    expect(wideView.errors).toEqual([]);
  } finally {
    await wideView.context.close();
  }
});

// Last in the file: it removes the demo Viewer from the demo study.
it("removing a member asks to confirm and names the person", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signInAsDemo(page, "owner");
    await page.goto(`${e2e.server.url}/studies/${studyId}/team`);
    const row = page.getByTestId("member-row").filter({ hasText: "Jonah Adeyemi" });
    await row.getByTestId("remove-member").click();
    const confirm = row.getByTestId("remove-confirm");
    await confirm
      .getByText("Remove Jonah Adeyemi (Viewer) from this study?", { exact: false })
      .waitFor();
    await screenshot(page, "remove-member-confirm-phone");
    // Keep: nothing happens.
    await row.getByTestId("cancel-remove-member").click();
    expect(await row.getByTestId("remove-confirm").count()).toBe(0);
    expect(await page.getByTestId("member-row").filter({ hasText: "Jonah Adeyemi" }).count()).toBe(
      1,
    );
    // Confirm: the person leaves the list.
    await row.getByTestId("remove-member").click();
    await row.getByRole("button", { name: "Remove Jonah Adeyemi" }).click();
    await page
      .getByTestId("member-row")
      .filter({ hasText: "Jonah Adeyemi" })
      .waitFor({ state: "detached" });
    // The activity names who removed whom, and which fit was cancelled.
    await page.getByRole("tab", { name: "Activity" }).click();
    await page
      .getByTestId("activity-event")
      .filter({ hasText: "Maren Lindqvist removed Jonah Adeyemi (Viewer)" })
      .waitFor();
    await page
      .getByTestId("activity-event")
      .filter({ hasText: "Tomas Ferreira cancelled the fit of ‘Accuracy with age, cancelled’" })
      .waitFor();
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});
