/**
 * The foundation as a person meets it: the app loads at phone and wide
 * sizes with no page errors, deep links work, and both ways of signing in
 * (e-mail link through the Mailbox, institution sign-in through the local
 * identity provider) lead to the Studies screen.
 */
import { describe, expect, it } from "vitest";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();

describe("serving the app", () => {
  it("answers the health check, the app and a deep link", async () => {
    const health = await fetch(`${e2e.server.url}/api/health`);
    expect(health.status).toBe(200);
    expect(await health.json()).toMatchObject({ ok: true });
    const root = await fetch(`${e2e.server.url}/`);
    expect(root.status).toBe(200);
    expect(await root.text()).toContain("<title>Covarion</title>");
    const deep = await fetch(`${e2e.server.url}/studies`);
    expect(deep.status).toBe(200);
    const studies = await fetch(`${e2e.server.url}/api/studies`);
    expect(studies.status).toBe(401);
    expect(await studies.json()).toMatchObject({
      error: { code: expect.any(String), message: expect.any(String) },
    });
  });
});

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  describe(`at ${label} size`, () => {
    it("signs in with an e-mail link from the Mailbox and shows the Studies screen", async () => {
      const { page, context, errors } = await openPage(e2e.browser, viewport);
      try {
        await page.goto(`${e2e.server.url}/studies`);
        await page.getByText("Sign in with an e-mail link").waitFor();
        await expect(page.getByText("Covarion").first().isVisible()).resolves.toBe(true);
        await screenshot(page, `sign-in-${label}`);
        const address = `new.person.${label}@lab.example`;
        await page.getByTestId("email-input").fill(address);
        await page.getByTestId("send-link").click();
        await page.getByText("Check your e-mail").waitFor();
        await page.goto(`${e2e.server.url}/mailbox`);
        const message = page.getByTestId("mail-message").filter({ hasText: address }).first();
        await message.waitFor();
        await screenshot(page, `mailbox-${label}`);
        await message.getByTestId("mail-link").first().click();
        await page.waitForURL(/\/studies$/);
        await page.getByRole("heading", { name: "Studies" }).waitFor();
        await screenshot(page, `studies-empty-${label}`);
        const me = await page.evaluate(async () => (await fetch("/api/me")).json());
        expect(me.email).toBe(address);
        expect(errors).toEqual([]);
      } finally {
        await context.close();
      }
    });

    it("signs in through the institution's identity provider as a demo person and lists the demo study", async () => {
      const { page, context, errors } = await openPage(e2e.browser, viewport);
      try {
        await page.goto(`${e2e.server.url}/sign-in`);
        await page.getByTestId("institution-sign-in").click();
        const owner = page.getByText("owner@demo.covarion.test").first();
        await owner.waitFor();
        await screenshot(page, `identity-provider-${label}`);
        await owner.click();
        await page.waitForURL(/\/studies$/, { timeout: 30_000 });
        await page.getByTestId("study-card").first().waitFor();
        await screenshot(page, `studies-${label}`);
        const me = await page.evaluate(async () => (await fetch("/api/me")).json());
        expect(me.email).toBe("owner@demo.covarion.test");
        expect(errors).toEqual([]);
      } finally {
        await context.close();
      }
    });
  });
}
