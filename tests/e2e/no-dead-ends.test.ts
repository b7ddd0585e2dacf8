/**
 * No dead ends, at phone size: a Viewer who opens a write route or a
 * role-limited read by its address sees a plain sentence naming their role
 * and a link back, never a form or a raw action code; an unknown study
 * shows "Study not found" with a link to the studies list.
 */
import { beforeAll, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { openPage, phone, screenshot } from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;

async function signInAsDemo(page: Page, role: "owner" | "analyst" | "reviewer" | "viewer"): Promise<void> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: `Sign in as the demo ${role}` }).click();
  await page.waitForURL(/\/studies$/);
}

beforeAll(async () => {
  const signIn = await fetch(`${e2e.server.url}/api/dev/demo-sign-in`, {
    method: "POST",
    headers: { "Content-Type": "application/json", Origin: e2e.server.url },
    body: JSON.stringify({ email: "viewer@demo.covarion.test" }),
  });
  if (!signIn.ok) throw new Error(`demo sign-in answered ${signIn.status}`);
  const cookie = String(signIn.headers.get("set-cookie")).split(";")[0];
  const res = await fetch(`${e2e.server.url}/api/studies`, { headers: { Cookie: cookie } });
  studyId = ((await res.json()) as { id: string }[])[0].id;
});

for (const [route, sentence, back] of [
  ["models/new", "Your role in this study (Viewer) cannot build models.", "Back to Models"],
  ["activity", "Your role in this study (Viewer) cannot see the study's activity.", "Back to the study"],
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
    expect(errors.filter((e) => !e.startsWith(`response: 404 GET /api/studies/${unknown}`))).toEqual([]);
  } finally {
    await context.close();
  }
});
