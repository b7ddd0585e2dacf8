/**
 * The Data section in the browser. At phone size the demo Analyst uploads
 * both demo files through the form, sees each preview with its detected
 * types, confirms them, sees the join report with the near miss reported
 * and not merged, confirms the mapping, and reads the roster and its CSV
 * export. Refusals are shown as lists naming row and column, and store
 * nothing. At wide size the same section reads well side by side.
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { expect, it } from "vitest";
import type { Page } from "playwright-core";
import { projectRoot } from "../../scripts/web-build";
import { openPage, phone, screenshot, wide } from "./harness";
import { sharedServerAndBrowser } from "./session";

const brainFile = join(projectRoot, "assets", "demo", "harbour-bay_lantern-3-vs-1_brain-table.csv");
const sheetFile = join(projectRoot, "assets", "demo", "harbour-bay_participants.tsv");

const e2e = sharedServerAndBrowser();

/** Signs in as the demo Analyst and opens the demo study, which opens on its Data section. */
async function openDemoData(page: Page): Promise<string> {
  await page.goto(`${e2e.server.url}/sign-in`);
  await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
  await page.waitForURL(/\/studies$/);
  await page.getByRole("link", { name: /\(demo\), your role: analyst/ }).click();
  await page.waitForURL(/\/studies\/[^/]+\/data$/);
  await page.getByTestId("versions-brain").getByTestId("version-facts").waitFor();
  return new URL(page.url()).pathname.replace(/\/data$/, "");
}

async function chooseKind(page: Page, kind: "Brain table" | "Participant sheet"): Promise<void> {
  await page
    .getByTestId("upload-kind")
    .getByRole("radio", { name: new RegExp(`^${kind}`) })
    .click();
}

it("the demo Analyst uploads both demo files at phone size, confirms them, maps the near miss and reads the roster", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    const studyPath = await openDemoData(page);
    // The seeded demo data are version 1 of each kind.
    await expect(
      page.getByTestId("versions-brain").getByText("version 1 · current").count(),
    ).resolves.toBe(1);
    await screenshot(page, "data-phone-start");

    // Brain table: preview with detected types, nothing stored yet.
    const upload = page.getByTestId("upload");
    await chooseKind(page, "Brain table");
    await upload.getByTestId("upload-file").setInputFiles(brainFile);
    await upload.getByText("harbour-bay_lantern-3-vs-1_brain-table.csv ·").waitFor();
    await upload.getByTestId("upload-submit").click();
    const preview = page.getByTestId("upload-preview");
    await preview.waitFor();
    await expect(preview.getByTestId("preview-summary").innerText()).resolves.toMatch(
      /Brain table · comma-separated · 87 rows · 22 columns · 71 participants/,
    );
    await preview.getByText("Layout: wide · 10 regions · sessions 1, 2").waitFor();
    const columns = preview.getByTestId("preview-columns");
    await expect(
      columns
        .getByRole("radio", { name: "L_dlpfc: number (region) (detected)" })
        .getAttribute("aria-checked"),
    ).resolves.toBe("true");
    await expect(
      columns
        .getByRole("radio", { name: "L_dlpfc: category (not used)" })
        .getAttribute("aria-checked"),
    ).resolves.toBe("false");
    await columns.getByText("standard error").first().waitFor();
    await preview.getByTestId("preview-rows").getByText("sub-01").first().waitFor();
    await preview.getByTestId("preview-summary").scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-preview-brain");
    await columns.scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-preview-brain-types");
    await expect(
      page.getByTestId("versions-brain").getByText("version 1 · current").count(),
    ).resolves.toBe(1);
    await preview.getByTestId("confirm-upload").click();
    await page.getByTestId("upload-stored").getByText("as version 2 of the brain table").waitFor();
    await page.getByTestId("versions-brain").getByText("version 2 · current").waitFor();
    await page.getByTestId("older-brain").getByText("Version 1 ·").waitFor();

    // Participant sheet: detected types, including a numeric column with a missing value.
    await chooseKind(page, "Participant sheet");
    await upload.getByTestId("upload-file").setInputFiles(sheetFile);
    await upload.getByTestId("upload-submit").click();
    await preview.waitFor();
    await expect(preview.getByTestId("preview-summary").innerText()).resolves.toMatch(
      /Participant sheet · tab-separated · 71 rows · 8 columns · 71 participants/,
    );
    const sheetColumns = preview.getByTestId("preview-columns");
    for (const [column, detected] of [
      ["group", "category"],
      ["age", "number"],
      ["sex", "category"],
      ["accuracy", "number"],
      ["symptom_score", "number"],
    ] as const) {
      await expect(
        sheetColumns
          .getByRole("radio", { name: `${column}: ${detected} (detected)` })
          .getAttribute("aria-checked"),
      ).resolves.toBe("true");
    }
    await preview.getByText("No problems found in the file.").waitFor();
    await sheetColumns.scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-preview-sheet");
    await preview.getByTestId("confirm-upload").click();
    await page
      .getByTestId("upload-stored")
      .getByText("as version 2 of the participant sheet")
      .waitFor();

    // Join report: the near miss 7 / sub-07 is reported and not merged.
    const report = page.getByTestId("join-report");
    await report.getByText("(version 2) with the participant sheet").waitFor();
    await expect(report.getByTestId("count-matched").innerText()).resolves.toMatch(
      /^69\s+matched$/,
    );
    await expect(report.getByTestId("count-near-misses").innerText()).resolves.toMatch(
      /^1\s+near misses$/,
    );
    const nearMiss = report.getByTestId("near-miss");
    await expect(nearMiss.innerText()).resolves.toMatch(
      /Brain table 7 and sheet sub-07: same number written with different leading zeros/,
    );
    await expect(report.getByTestId("only-in-brain-table").innerText()).resolves.toMatch(/\b7\b/);
    await expect(report.getByTestId("only-in-sheet").innerText()).resolves.toMatch(/sub-07/);
    await report
      .getByTestId("join-rule")
      .getByText(/never matched automatically/)
      .waitFor();
    await nearMiss.scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-join-report");

    // Confirming the mapping records it; the pair is then matched.
    await nearMiss.getByTestId("start-mapping").click();
    await nearMiss
      .getByText("Record that brain-table id 7 and sheet id sub-07 are the same participant?")
      .waitFor();
    await nearMiss.getByTestId("confirm-mapping").click();
    await report
      .getByTestId("mapping")
      .filter({ hasText: "Brain table 7 = sheet sub-07 · recorded" })
      .waitFor();
    await expect(report.getByTestId("count-matched").innerText()).resolves.toMatch(
      /^70\s+matched$/,
    );
    await expect(report.getByTestId("near-miss").count()).resolves.toBe(0);
    await report.getByTestId("mapping").scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-mapping");

    // Roster: 70 matched + sub-71 only in the brain table + sub-72 only in the sheet.
    const roster = page.getByTestId("roster-table");
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "rows 1–25 of 72",
    );
    await roster.getByRole("textbox", { name: "Search Roster" }).fill("sub-07");
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "row 1 of 1 (of 72 in all)",
    );
    const row = roster.getByRole("row").filter({ hasText: "sub-07" });
    await expect(row.innerText()).resolves.toMatch(
      /7[\s\S]*matched[\s\S]*confirmed mapping[\s\S]*sub-07/,
    );
    await roster.getByRole("textbox", { name: "Search Roster" }).fill("");
    await roster.getByRole("textbox", { name: "Filter status" }).fill("only");
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "rows 1–2 of 2 (of 72 in all)",
    );
    await roster.scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-roster");

    // Export: the CSV the link downloads.
    const href = await page.getByTestId("roster-csv").getAttribute("href");
    expect(href).toBe(`/api${studyPath}/roster.csv`);
    const csv = await context.request.get(`${e2e.server.url}${href}`);
    expect(csv.status()).toBe(200);
    const lines = (await csv.text()).trim().split(/\r?\n/);
    expect(lines[0]).toBe(
      "participant,brain_table_id,participant_sheet_id,status,matched_by,sessions,group,age,sex,accuracy,rt_ms,symptom_score,mean_fd",
    );
    expect(lines).toHaveLength(73);
    expect(lines.some((l) => l.startsWith("7,7,sub-07,matched,mapping,"))).toBe(true);

    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("refused files and refused confirmations are listed by row and column, and store nothing", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    const studyPath = await openDemoData(page);
    const upload = page.getByTestId("upload");

    // A brain table with a typo in one cell: 422 at upload, the list names row and column.
    const text = readFileSync(brainFile, "utf8").split("\n");
    const cells = text[3].split(",");
    cells[10] = "O.42";
    text[3] = cells.join(",");
    await chooseKind(page, "Brain table");
    await upload.getByTestId("upload-file").setInputFiles({
      name: "brain-typo.csv",
      mimeType: "text/csv",
      buffer: Buffer.from(text.join("\n")),
    });
    await upload.getByTestId("upload-submit").click();
    const problems = upload.getByTestId("upload-problems");
    await problems.waitFor();
    await expect(problems.getByTestId("problem").first().innerText()).resolves.toMatch(
      /brain-typo\.csv row 4, column L_insula: "O\.42" is not a number/,
    );
    await screenshot(page, "data-phone-refused-upload");
    await expect(
      page.getByTestId("versions-brain").getByText("version 2 · current").count(),
    ).resolves.toBe(1);

    // A sheet confirmed with a text column typed as numbers: 422 at confirmation, nothing stored; Cancel discards.
    await chooseKind(page, "Participant sheet");
    await upload.getByTestId("upload-file").setInputFiles(sheetFile);
    await upload.getByTestId("upload-submit").click();
    const preview = page.getByTestId("upload-preview");
    await preview
      .getByTestId("preview-columns")
      .getByRole("radio", { name: "group: number" })
      .click();
    await preview.getByTestId("confirm-upload").click();
    const refused = preview.getByTestId("confirm-problems");
    await refused.waitFor();
    await expect(refused.getByTestId("problem").first().innerText()).resolves.toMatch(
      /harbour-bay_participants\.tsv row 2, column group: "patient" is not a number/,
    );
    await expect(refused.getByTestId("problem").count()).resolves.toBe(5);
    await refused.getByRole("button", { name: "Show all 71 problems listed" }).click();
    await refused.getByTestId("problem").nth(70).waitFor();
    await expect(refused.getByTestId("problem").count()).resolves.toBe(71);
    await refused.getByRole("button", { name: "Show fewer" }).click();
    await refused.scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-refused-confirm");
    await preview.getByTestId("cancel-upload").click();
    await upload.getByTestId("upload-submit").waitFor();
    await expect(page.getByTestId("upload-preview").count()).resolves.toBe(0);
    await page.reload();
    await page.getByTestId("versions-participants").getByText("version 2 · current").waitFor();
    await expect(
      page.getByTestId("older-participants").getByTestId("older-version").count(),
    ).resolves.toBe(1);

    // Only the two refusals answered with an error status.
    const base = `/api${studyPath}/datasets`;
    expect(errors).toHaveLength(2);
    expect(errors[0]).toBe(`response: 422 POST ${base}`);
    expect(errors[1]).toMatch(new RegExp(`^response: 422 POST ${base}/[0-9a-f-]{36}/confirm$`));
  } finally {
    await context.close();
  }
});

it("columns that may hold direct identifiers must be dropped or kept with a written reason before Confirm", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    const studyPath = await openDemoData(page);
    // The demo sheet with two invented identifier-like columns added.
    const lines = readFileSync(sheetFile, "utf8").trimEnd().split("\n");
    const withIdentifiers = lines
      .map((line, k) => {
        const id = line.split("\t")[0];
        return k === 0 ? `${line}\tname\temail` : `${line}\tPerson ${id}\t${id}@invented.example`;
      })
      .join("\n");
    const upload = page.getByTestId("upload");
    await chooseKind(page, "Participant sheet");
    await upload.getByTestId("upload-file").setInputFiles({
      name: "participants-with-contacts.tsv",
      mimeType: "text/tab-separated-values",
      buffer: Buffer.from(`${withIdentifiers}\n`),
    });
    await upload.getByTestId("upload-submit").click();
    const preview = page.getByTestId("upload-preview");
    const flagged = preview.getByTestId("identifier-column");
    await flagged.first().waitFor();
    await expect(flagged.count()).resolves.toBe(2);
    const confirm = preview.getByTestId("confirm-upload");
    await expect(confirm.getAttribute("aria-disabled")).resolves.toBe("true");
    await preview
      .getByTestId("undecided")
      .getByText("Column name: choose to drop it or keep it with a reason.")
      .waitFor();
    await flagged
      .filter({ hasText: "name:" })
      .getByRole("radio", { name: /^Drop it/ })
      .click();
    const email = flagged.filter({ hasText: "email:" });
    await email.getByRole("radio", { name: /^Keep it/ }).click();
    await preview
      .getByTestId("undecided")
      .getByText("Column email: write why it is kept.")
      .waitFor();
    await expect(confirm.getAttribute("aria-disabled")).resolves.toBe("true");
    await email
      .getByRole("textbox", { name: "Why email is kept" })
      .fill("Invented contact codes for this test, not real addresses");
    await expect(preview.getByTestId("undecided").count()).resolves.toBe(0);
    await preview.getByTestId("identifier-columns").scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-identifiers");
    await confirm.click();
    await page
      .getByTestId("upload-stored")
      .getByText("as version 3 of the participant sheet")
      .waitFor();
    const facts = page.getByTestId("versions-participants").getByTestId("version-facts").first();
    await facts.getByText("Dropped at upload (never stored): name.").waitFor();
    await facts
      .getByText(
        "Kept email although it may hold direct identifiers. Reason: Invented contact codes for this test, not real addresses",
      )
      .waitFor();

    const csv = await context.request.get(`${e2e.server.url}/api${studyPath}/roster.csv`);
    const header = (await csv.text()).split("\r\n")[0].split(",");
    expect(header).toContain("email");
    expect(header).not.toContain("name");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a brain-table column that would be left out needs a choice before Confirm, and is recorded as dropped", async () => {
  const { page, context, errors } = await openPage(e2e.browser, phone);
  try {
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
    await page.waitForURL(/\/studies$/);
    await page.getByTestId("new-study").click();
    await page.getByTestId("study-name").fill("Left-out column check");
    await page.getByTestId("create-study").click();
    await page.waitForURL(/\/studies\/[^/]+\/data$/);
    const upload = page.getByTestId("upload");
    await chooseKind(page, "Brain table");
    // Invented values: a scanner label column among two regions.
    const text =
      "participant_id,scanner,left_area,right_area\nsub-01,north,0.1,0.2\nsub-02,south,0.3,0.1\nsub-03,north,0.2,0.4\n";
    await upload.getByTestId("upload-file").setInputFiles({
      name: "brain-with-scanner.csv",
      mimeType: "text/csv",
      buffer: Buffer.from(text),
    });
    await upload.getByTestId("upload-submit").click();
    const preview = page.getByTestId("upload-preview");
    const column = preview.getByTestId("left-out-column");
    await column
      .getByText(
        'brain-with-scanner.csv column scanner: not a region: column scanner has text values (first: row 2 "north", row 3 "south", row 4 "north"; 3 of 3 values are text)',
      )
      .waitFor();
    const confirm = preview.getByTestId("confirm-upload");
    await expect(confirm.getAttribute("aria-disabled")).resolves.toBe("true");
    await preview
      .getByTestId("undecided")
      .getByText("Column scanner: choose to leave it out or fix the file.")
      .waitFor();
    await column.getByRole("radio", { name: /^Leave it out/ }).click();
    await expect(preview.getByTestId("undecided").count()).resolves.toBe(0);
    await preview.getByTestId("left-out-columns").scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-left-out-column");
    await confirm.click();
    await page.getByTestId("upload-stored").getByText("as version 1 of the brain table").waitFor();
    await page
      .getByTestId("versions-brain")
      .getByTestId("version-facts")
      .first()
      .getByText("Dropped at upload (never stored): scanner.")
      .waitFor();
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a roster of 1,200 participants is read whole (two server pages) and paged, sorted and searched in the table", async () => {
  const { page, context, errors } = await openPage(e2e.browser, wide);
  try {
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByRole("button", { name: "Sign in as the demo analyst" }).click();
    await page.waitForURL(/\/studies$/);
    await page.getByTestId("new-study").click();
    await page.getByTestId("study-name").fill("Large roster check");
    await page.getByTestId("create-study").click();
    await page.waitForURL(/\/studies\/[^/]+\/data$/);
    await page.getByTestId("versions-brain").getByText("No brain table yet.").waitFor();
    await page
      .getByTestId("join-report")
      .getByText("Upload and confirm both a brain table and a participant sheet")
      .waitFor();

    // Invented values by plain arithmetic: 1,200 participants, two regions, a group and an age.
    const n = 1200;
    const ids = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(4, "0")}`);
    const brain = [
      "participant_id,left_area,right_area",
      ...ids.map((id, i) => `${id},${((i * 37) % 101) / 100},${((i * 53) % 97) / 100}`),
    ].join("\n");
    const sheet = [
      "participant_id\tgroup\tage",
      ...ids.map((id, i) => `${id}\t${i % 2 === 0 ? "patient" : "control"}\t${20 + (i % 45)}`),
    ].join("\n");
    const upload = page.getByTestId("upload");
    for (const [kind, name, text] of [
      ["Brain table", "large-brain.csv", brain],
      ["Participant sheet", "large-participants.tsv", sheet],
    ] as const) {
      await chooseKind(page, kind);
      await upload
        .getByTestId("upload-file")
        .setInputFiles({ name, mimeType: "text/plain", buffer: Buffer.from(`${text}\n`) });
      await upload.getByTestId("upload-submit").click();
      await page.getByTestId("upload-preview").getByTestId("confirm-upload").click();
      await page.getByTestId("upload-stored").getByText(`Stored ${name} as version 1`).waitFor();
    }

    const report = page.getByTestId("join-report");
    await expect(report.getByTestId("count-matched").innerText()).resolves.toMatch(
      /^1,200\s+matched$/,
    );
    const roster = page.getByTestId("roster-table");
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "rows 1–25 of 1,200",
    );
    await roster.getByRole("button", { name: "Next page" }).click();
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "rows 26–50 of 1,200",
    );
    await roster.getByRole("textbox", { name: "Search Roster" }).fill("sub-1199");
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "row 1 of 1 (of 1,200 in all)",
    );
    await roster.getByRole("row").filter({ hasText: "sub-1199" }).getByText("patient").waitFor();
    await roster.getByRole("textbox", { name: "Search Roster" }).fill("");
    await roster.getByRole("button", { name: "age, sort descending" }).click(); // numeric columns sort largest first on the first press
    await roster.getByRole("button", { name: "age, sort ascending" }).waitFor();
    await expect(roster.getByRole("row").nth(2).innerText()).resolves.toMatch(
      /^sub-0045\s[\s\S]*\b64$/,
    ); // (exact: the first index with i mod 45 = 44; ties keep roster order)
    await roster.getByRole("textbox", { name: "Filter age" }).fill(">= 64");
    await expect(roster.getByTestId("roster-table-range").innerText()).resolves.toBe(
      "rows 1–25 of 26 (of 1,200 in all)",
    ); // (exact count: age 64 when i mod 45 = 44, i < 1200: 26 values)
    await roster.scrollIntoViewIfNeeded();
    await screenshot(page, "data-wide-large-roster");
    // The reliability section below the roster answers 409 while the brain table has no sessions to compare (its "not available" state).
    expect(
      errors.filter((e) => !/^response: 409 GET \/api\/studies\/[^/]+\/reliability$/.test(e)),
    ).toEqual([]);
  } finally {
    await context.close();
  }
});

it("reads well at wide size: versions side by side, an older version's rows, the report and the roster", async () => {
  const { page, context, errors } = await openPage(e2e.browser, wide);
  try {
    await openDemoData(page);
    await page.getByTestId("join-report").getByTestId("mapping").waitFor();
    await screenshot(page, "data-wide-top");
    await page.getByRole("button", { name: "Read version 1 of the brain table" }).click();
    const rows = page.getByTestId("version-reader").getByTestId("version-rows-table");
    await expect(rows.getByTestId("version-rows-table-range").innerText()).resolves.toBe(
      "rows 1–25 of 87",
    );
    await rows.getByText("sub-01").first().waitFor();
    await rows.scrollIntoViewIfNeeded();
    await screenshot(page, "data-wide-older-version");
    await page.getByTestId("roster-table").scrollIntoViewIfNeeded();
    await screenshot(page, "data-wide-roster");
    expect(errors).toEqual([]);
  } finally {
    await context.close();
  }
});

it("a Viewer of a restricted study sees the counts and versions, never participant rows, and no upload", async () => {
  const owner = await openPage(e2e.browser, wide);
  const viewer = await openPage(e2e.browser, phone);
  try {
    await owner.page.goto(`${e2e.server.url}/sign-in`);
    await owner.page.getByRole("button", { name: "Sign in as the demo owner" }).click();
    await owner.page.waitForURL(/\/studies$/);
    await owner.page.getByRole("link", { name: /\(demo\), your role: owner/ }).click();
    await owner.page.waitForURL(/\/studies\/[^/]+\/data$/);
    await owner.page.getByRole("tab", { name: "Team" }).click();
    await owner.page.getByRole("switch", { name: "Restrict participant-level rows" }).click();
    await owner.page.getByText("Participant rows restricted").waitFor();

    const { page } = viewer;
    await page.goto(`${e2e.server.url}/sign-in`);
    await page.getByRole("button", { name: "Sign in as the demo viewer" }).click();
    await page.waitForURL(/\/studies$/);
    await page.getByRole("link", { name: /\(demo\), your role: viewer/ }).click();
    await page.waitForURL(/\/studies\/[^/]+\/data$/);
    const report = page.getByTestId("join-report");
    await report.getByTestId("counts-only").waitFor();
    await expect(report.getByTestId("count-matched").innerText()).resolves.toMatch(
      /^70\s+matched$/,
    );
    await expect(report.getByTestId("near-miss").count()).resolves.toBe(0);
    await expect(report.getByTestId("only-in-brain-table").count()).resolves.toBe(0);
    await page.getByTestId("roster-restricted").waitFor();
    await expect(page.getByTestId("roster-table").count()).resolves.toBe(0);
    await expect(page.getByTestId("roster-csv").count()).resolves.toBe(0);
    await expect(page.getByTestId("upload").count()).resolves.toBe(0);
    await page.getByText("Owners and Analysts upload data; your role reads it.").waitFor();
    await page.getByRole("button", { name: "Read rows of version 2 of the brain table" }).click();
    await page
      .getByTestId("version-reader")
      .getByText("This study restricts participant-level rows")
      .waitFor();
    await expect(page.getByTestId("version-rows-table").count()).resolves.toBe(0);
    await page.getByTestId("roster-restricted").scrollIntoViewIfNeeded();
    await screenshot(page, "data-phone-viewer-restricted");
    expect(owner.errors).toEqual([]);
    expect(viewer.errors).toEqual([]);
  } finally {
    await owner.context.close();
    await viewer.context.close();
  }
});
