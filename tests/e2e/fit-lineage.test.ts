/**
 * Every fit shows what it left out and why, at phone and wide sizes. The
 * demo Analyst runs a model, sets two participants aside (one from every
 * region, one from one region) and runs it again, then sets a third aside
 * (through the API). In the browser: the fits list shows each fit's stage,
 * N, set-aside count and "Refit of …" with what changed; the refit's
 * header shows N and "Set aside: 2" in the first screen, the disclosure
 * lists each participant with scope, reason, who and when; the notice that
 * newer set-asides exist offers Refit, which starts a fit and opens it.
 * A Viewer of a restricted study sees the count and the reasons, no ids.
 */
import { beforeAll, expect, it } from "vitest";
import {
  type DemoApi,
  openPage,
  phone,
  runFitToDone,
  screenshot,
  demoApi as signInDemo,
  wide,
} from "./harness";
import { sharedServerAndBrowser } from "./session";

const e2e = sharedServerAndBrowser();
let studyId: string;
let firstId: string;
let refitId: string;
let owner: Api;
/** The fit the phone's Refit made: the wide Refit re-runs it (the model's latest done fit). */
let phoneRefitId: string | null = null;

type Api = DemoApi;

/** Calls the API as a demo person (a real session cookie from the demo sign-in route). */
function demoApi(role: "owner" | "analyst"): Promise<Api> {
  return signInDemo(e2e.server.url, role);
}

const modelName = "Load effect in the frontal regions";
const reasons = {
  asleep: "Fell asleep during the second run (scan operator's note)",
  artefact: "Signal dropout over the left frontal lobe (quality check before analysis)",
  motion: "Mean framewise displacement above 0.5 mm (motion check before analysis)",
};

beforeAll(async () => {
  owner = await demoApi("owner");
  const analyst = await demoApi("analyst");
  studyId = ((await owner("/api/studies")) as { id: string }[])[0].id;
  const model = (await analyst(`/api/studies/${studyId}/models`, {
    method: "POST",
    body: {
      name: modelName,
      regionSelection: "anatomical-or-prior",
      spec: { kind: "one-sample", regions: ["L_dlpfc", "R_dlpfc", "dACC"] },
    },
  })) as { id: string };
  firstId = (await runFitToDone(analyst, studyId, model.id, 90_000)).id;
  await analyst(`/api/studies/${studyId}/set-asides`, {
    method: "POST",
    body: { participant: "sub-12", reason: reasons.asleep },
  });
  await analyst(`/api/studies/${studyId}/set-asides`, {
    method: "POST",
    body: { participant: "sub-20", region: "L_dlpfc", reason: reasons.artefact },
  });
  refitId = (await runFitToDone(analyst, studyId, model.id, 90_000)).id;
  await analyst(`/api/studies/${studyId}/set-asides`, {
    method: "POST",
    body: { participant: "sub-33", reason: reasons.motion },
  });
});

async function signIn(page: Awaited<ReturnType<typeof openPage>>["page"], role: string) {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: `Sign in as the demo ${role}` }).click();
  await page.waitForURL(/\/studies$/);
}

/** True when the element's box ends within the viewport's height (seen without scrolling). */
async function inFirstScreen(
  page: Awaited<ReturnType<typeof openPage>>["page"],
  testId: string,
  height: number,
): Promise<boolean> {
  const box = await page.getByTestId(testId).first().boundingBox();
  return box !== null && box.y >= 0 && box.y + box.height <= height;
}

for (const [label, viewport] of [
  ["phone", phone],
  ["wide", wide],
] as const) {
  it(`the fits list shows stage, N, set-asides and lineage at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await signIn(page, "analyst");
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits`);
      const rows = page.getByTestId("fit-row");
      await rows.first().waitFor({ timeout: 60_000 });
      const refitRow = rows
        .filter({ hasText: "Set aside: sub-12 (all regions), sub-20 (L_dlpfc)" })
        .first();
      const text = (await refitRow.textContent()) ?? "";
      expect(text).toContain(modelName);
      await expect(refitRow.getByTestId("fit-row-stage").textContent()).resolves.toBe("done");
      expect(text).toMatch(/N = \d+(–\d+)?/);
      expect(text).toContain("Set aside: 2");
      expect(text).toContain(`Refit of ${modelName}`);
      expect(text).toContain("Newer data or set-asides exist");
      const firstRow = rows
        .filter({ hasNotText: "Refit of" })
        .filter({ hasText: modelName })
        .first();
      expect(await firstRow.textContent()).toContain("Set aside: 0");
      // Each row is a tap target of at least 44 px.
      const box = await refitRow.boundingBox();
      expect(box?.height ?? 0).toBeGreaterThanOrEqual(44);
      await screenshot(page, `fit-lineage-list-${label}`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });

  it(`a refit's header shows N, what it set aside and why, and offers Refit when newer set-asides exist at ${label} size`, async () => {
    const { page, context, errors } = await openPage(e2e.browser, viewport);
    try {
      await signIn(page, "analyst");
      await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${refitId}`);
      await page.getByTestId("fit-set-aside-count").waitFor({ timeout: 60_000 });
      await expect(page.getByTestId("fit-plain-words").textContent()).resolves.toMatch(
        /^N = \d+–\d+ per region/,
      );
      await expect(page.getByTestId("fit-set-aside-count").textContent()).resolves.toBe(
        "Set aside: 2",
      );
      for (const id of [
        "fit-plain-words",
        "fit-set-aside-toggle",
        "fit-refit-of",
        "fit-stale",
        "fit-refit",
      ]) {
        expect(await inFirstScreen(page, id, viewport.height), `${id} in the first screen`).toBe(
          true,
        );
      }
      // Collapsed at first; open lists each participant, scope, reason, who and when.
      await expect(page.getByTestId("fit-set-aside-list").count()).resolves.toBe(0);
      await page.getByTestId("fit-set-aside-toggle").click();
      const items = page.getByTestId("fit-set-aside-item");
      await expect(items.count()).resolves.toBe(2);
      const first = (await items.nth(0).textContent()) ?? "";
      expect(first).toContain("sub-12 · all regions");
      expect(first).toContain(reasons.asleep);
      expect(first).toMatch(/Set aside by Tomas Ferreira on \d+ \w+ \d{4}/);
      const second = (await items.nth(1).textContent()) ?? "";
      expect(second).toContain("sub-20 · L_dlpfc");
      expect(second).toContain(reasons.artefact);
      await expect(page.getByTestId("fit-refit-of").textContent()).resolves.toContain(
        `Refit of ${modelName}`,
      );
      const stale = (await page.getByTestId("fit-stale").textContent()) ?? "";
      expect(stale).toContain("Newer data or set-asides exist");
      expect(stale).toContain("Set-asides changed since this fit: sub-33 (all regions) added");
      await screenshot(page, `fit-lineage-header-${label}`);

      // Refit starts a new fit of the model and opens it; it re-runs this one and is current.
      await page.getByTestId("fit-refit").click();
      await page.waitForURL(
        (url) => /\/fits\/[^/]+$/.test(url.pathname) && !url.pathname.endsWith(refitId),
        { timeout: 30_000 },
      );
      const newId = new URL(page.url()).pathname.split("/").pop() as string;
      const created = (await owner(`/api/fits/${newId}`)) as { refitOf: string; changes: string[] };
      if (label === "phone") {
        expect(created.refitOf).toBe(refitId);
        expect(created.changes).toEqual(["Set aside: sub-33 (all regions)"]);
        phoneRefitId = newId;
      } else {
        // The model's latest done fit is the phone's refit, which already set sub-33 aside.
        expect(created.refitOf).toBe(phoneRefitId);
        expect(created.changes).toEqual([]);
      }
      await expect(page.getByTestId("fit-set-aside-count").textContent()).resolves.toBe(
        "Set aside: 3",
      );
      await page.getByTestId("fit-refit-of").waitFor();
      await page.getByTestId("region-table").waitFor({ timeout: 90_000 });
      await expect(page.getByTestId("fit-stale").count()).resolves.toBe(0);
      await expect(page.getByTestId("fit-stage").textContent()).resolves.toBe("done");
      await screenshot(page, `fit-lineage-refit-${label}`);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
}

it("a Viewer of a restricted study sees the count and the reasons without participant ids", async () => {
  await owner(`/api/studies/${studyId}`, { method: "PATCH", body: { restricted: true } });
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signIn(page, "viewer");
    await page.goto(`${e2e.server.url}/studies/${studyId}/fits/${refitId}`);
    await page.getByTestId("fit-set-aside-toggle").waitFor({ timeout: 60_000 });
    await expect(page.getByTestId("fit-set-aside-count").textContent()).resolves.toBe(
      "Set aside: 2",
    );
    await page.getByTestId("fit-set-aside-toggle").click();
    const list = (await page.getByTestId("fit-set-aside-list").textContent()) ?? "";
    expect(list).toContain(reasons.asleep);
    expect(list).toContain(reasons.artefact);
    expect(list).toContain("A participant · all regions");
    expect(list).toContain("Tomas Ferreira");
    // No Refit for a Viewer, and no participant id anywhere in the header.
    await expect(page.getByTestId("fit-refit").count()).resolves.toBe(0);
    expect((await page.getByTestId("fit-header").textContent()) ?? "").not.toMatch(/sub-\d/);
    await screenshot(page, "fit-lineage-viewer-phone");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
    await owner(`/api/studies/${studyId}`, { method: "PATCH", body: { restricted: false } });
  }
});

it("a fit with fewer than 20 participants in a region shows the small-sample caution on one line, with more", async () => {
  // An invented study of 12 participants in two regions, uploaded by the Owner.
  const study = (await owner("/api/studies", {
    method: "POST",
    body: { name: "Twelve participants" },
  })) as { id: string };
  const lines = ["participant_id,L_insula,R_insula"];
  for (let i = 1; i <= 12; i++)
    lines.push(
      `p${String(i).padStart(2, "0")},${(0.1 * i - 0.4).toFixed(2)},${(0.3 - 0.05 * i).toFixed(2)}`,
    );
  const form = new FormData();
  form.set("kind", "brain");
  form.set("file", new Blob([`${lines.join("\n")}\n`], { type: "text/csv" }), "twelve.csv");
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
      name: "Insula load effect",
      regionSelection: "anatomical-or-prior",
      spec: { kind: "one-sample" },
    },
  })) as { id: string };
  const fit = (await owner(`/api/studies/${study.id}/fits`, {
    method: "POST",
    body: { modelId: model.id },
  })) as { id: string };
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await signIn(page, "owner");
    await page.goto(`${e2e.server.url}/studies/${study.id}/fits/${fit.id}`);
    const caution = page.getByTestId("fit-small-sample");
    await caution.waitFor({ timeout: 90_000 });
    expect(await inFirstScreen(page, "fit-small-sample", phone.height)).toBe(true);
    const collapsed = (await caution.boundingBox())?.height ?? 0;
    expect(await caution.textContent()).toContain("Fewer than 20 participants in 2 of 2 regions");
    await expect(page.getByTestId("fit-plain-words").textContent()).resolves.toMatch(
      /^N = 12 per region/,
    );
    await expect(page.getByTestId("fit-set-aside-count").textContent()).resolves.toContain(
      "Set aside: 0",
    );
    await caution.getByRole("button", { name: "Read the whole small-sample caution" }).click();
    expect((await caution.boundingBox())?.height ?? 0).toBeGreaterThan(collapsed);
    await screenshot(page, "fit-lineage-small-sample-phone");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("the first fit, made before the set-asides, says newer set-asides exist", async () => {
  const first = (await owner(`/api/fits/${firstId}`)) as { stale: boolean; staleReasons: string[] };
  expect(first.stale).toBe(true);
  expect(first.staleReasons[0]).toContain("sub-12 (all regions) added");
});
