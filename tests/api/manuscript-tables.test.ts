/**
 * The manuscript tables and results sentences through the real app, on the
 * demo study: regions.md, regions.tex, regions.docx and sentences hold every
 * region of a finished fit with its numbers equal to the fit's to the shown
 * precision; LaTeX escapes region names; the Word document downloads with
 * the same bytes twice; a Viewer of a restricted study gets the number of
 * participants set aside but not their ids; every form answers 409 until the
 * fit is done.
 */
import { eq } from "drizzle-orm";
import { unzipSync } from "fflate";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fits } from "../../db/schema";
import type { RegionResult } from "../../contract/spec";
import { FigureJobs } from "../../server/jobs/figure-jobs";
import {
  regionsLatex,
  regionsMarkdown,
  sentencesMarkdown,
  sentencesOf,
} from "../../server/services/manuscript-tables";
import {
  binaryBody,
  createTestApp,
  demoCookie,
  demoStudyWithData,
  type TestApp,
  waitForFitStatus,
} from "./helpers";

let t: TestApp;
let studyId: string;
let fitId: string;
let regions: RegionResult[];
const cookies: Record<string, string> = {};
const target = "sub-05";

const get = (role: string, path: string) => request(t.url).get(path).set("Cookie", cookies[role]);

const numberOf = (text: string) => Number(text.replace(/\u2212/g, "-").replace(/,/g, ""));

/** Every number in a cell equals the expected value to the decimals it shows. */
function shownEqual(cell: string, expected: readonly number[]): void {
  const shown = cell.match(/\u2212?\d[\d,]*(?:\.\d+)?|\u2212?\.\d+/g) ?? [];
  expect(shown.length, cell).toBe(expected.length);
  shown.forEach((text, k) => {
    const decimals = text.includes(".") ? text.split(".")[1].length : 0;
    expect(Math.abs(numberOf(text) - expected[k]), `${cell}: ${text}`).toBeLessThanOrEqual(
      0.5 * 10 ** -decimals + 1e-12,
    );
  });
}

function pShownEqual(cell: string, p: number): void {
  if (cell === "< .001") expect(p).toBeLessThan(0.001);
  else if (cell === "> .999") expect(p).toBeGreaterThanOrEqual(0.9995);
  else shownEqual(cell, [p]);
}

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  for (const role of ["owner", "analyst", "reviewer", "viewer"])
    cookies[role] = await demoCookie(t, `${role}@demo.covarion.test`);
  await request(t.url)
    .post(`/api/studies/${studyId}/set-asides`)
    .set("Cookie", cookies.analyst)
    .send({ participant: target, reason: "Scanner fault noted before analysis" })
    .expect(201);
  const model = await request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", cookies.analyst)
    .send({
      name: "Accuracy, Holm",
      regionSelection: "anatomical-or-prior",
      spec: { kind: "association", predictor: "accuracy", correction: "holm" },
    })
    .expect(201);
  const run = await request(t.url)
    .post(`/api/studies/${studyId}/fits`)
    .set("Cookie", cookies.analyst)
    .send({ modelId: model.body.id })
    .expect(202);
  fitId = run.body.id as string;
  const fit = (await waitForFitStatus(t, cookies.analyst, fitId, ["done", "failed"])) as {
    status: string;
    result: { regions: RegionResult[] };
  };
  expect(fit.status).toBe("done");
  regions = fit.result.regions;
});
afterAll(async () => {
  await t?.close();
});

describe("manuscript tables of a finished fit", () => {
  it("Markdown: every region with its numbers equal to the fit's to the shown precision", async () => {
    const res = await get("analyst", `/api/fits/${fitId}/regions.md`).expect(200);
    expect(res.headers["content-type"]).toBe("text/markdown; charset=utf-8");
    expect(res.headers["content-disposition"]).toBe(
      `attachment; filename="fit-${fitId.slice(0, 8)}-regions.md"`,
    );
    const lines = res.text.split("\n");
    expect(lines[4]).toBe(
      "| Region | *N* | Estimate [95% CI] | Test statistic | *p* | *p*<sub>adj</sub> | *r* [95% CI] |",
    );
    expect(regions.length).toBeGreaterThan(5);
    for (const r of regions) {
      const row = lines.find((l) => l.startsWith(`| ${r.region.replace(/_/g, "\\_")} |`));
      expect(row, r.region).toBeDefined();
      const cells = (row as string).split(" | ").map((c) => c.replace(/^\| |\s*\|$/g, ""));
      shownEqual(cells[1], [r.n]);
      shownEqual(cells[2], [r.estimate, r.ciLow as number, r.ciHigh as number]);
      expect(cells[3]).toMatch(/^\*t\*\(\d+\) = /);
      shownEqual(cells[3].replace(/^\*t\*/, ""), [r.df as number, r.statistic as number]);
      pShownEqual(cells[4], r.p);
      pShownEqual(cells[5], r.pAdjusted);
      shownEqual(cells[6], [r.r as number, r.rCiLow as number, r.rCiHigh as number]);
    }
    expect(res.text).toContain("Holm correction over");
    expect(res.text).toContain(
      `Set aside before fitting: 1 participant: ${target} (every region).`,
    );
  });

  it("LaTeX: booktabs rules, escaped region names, the same numbers", async () => {
    const res = await get("reviewer", `/api/fits/${fitId}/regions.tex`).expect(200);
    expect(res.headers["content-type"]).toBe("application/x-tex; charset=utf-8");
    expect(res.headers["content-disposition"]).toContain("regions.tex");
    const tex = res.text;
    for (const rule of ["\\toprule", "\\midrule", "\\bottomrule"]) expect(tex).toContain(rule);
    expect(tex).not.toContain("\\num");
    for (const r of regions) {
      const row = tex.split("\n").find((l) => l.startsWith(`${r.region.replace(/_/g, "\\_")} &`));
      expect(row, r.region).toBeDefined();
      const cells = (row as string).replace(/ \\\\$/, "").split(" & ");
      const math = (c: string) => c.replace(/\$-\$/g, "\u2212");
      shownEqual(math(cells[2]), [r.estimate, r.ciLow as number, r.ciHigh as number]);
      pShownEqual(cells[4], r.p);
    }
  });

  it("Markdown, LaTeX and sentences come from the figures' worker thread with the writers' very bytes", async () => {
    const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    const o = { participantsVisible: true };
    const expected = {
      "regions.md": regionsMarkdown(row, o),
      "regions.tex": regionsLatex(row, o),
    };
    // Twice: the second answer is the kept one.
    for (let k = 0; k < 2; k++) {
      for (const [name, text] of Object.entries(expected)) {
        const res = await get("owner", `/api/fits/${fitId}/${name}`).expect(200);
        expect(res.text, name).toBe(text);
      }
      const sentences = await get("owner", `/api/fits/${fitId}/sentences`).expect(200);
      expect(sentences.body).toEqual(JSON.parse(JSON.stringify(sentencesOf(row))));
    }
    const jobs = new FigureJobs();
    try {
      expect(await jobs.manuscriptTexts(row, o)).toEqual({
        markdown: expected["regions.md"],
        latex: expected["regions.tex"],
        sentencesMarkdown: sentencesMarkdown(row),
        sentences: sentencesOf(row),
      });
    } finally {
      await jobs.close();
    }
  });

  it("Word: the same bytes on two downloads, every region and its numbers inside", async () => {
    const path = `/api/fits/${fitId}/regions.docx`;
    const a = await get("viewer", path).buffer(true).parse(binaryBody).expect(200);
    const b = await get("owner", path).buffer(true).parse(binaryBody).expect(200);
    expect(a.headers["content-type"]).toBe(
      "application/vnd.openxmlformats-officedocument.wordprocessingml.document",
    );
    expect(a.headers["content-disposition"]).toContain("regions.docx");
    expect(Buffer.compare(a.body as Buffer, b.body as Buffer)).toBe(0);
    const xml = new TextDecoder().decode(
      unzipSync(new Uint8Array(a.body as Buffer))["word/document.xml"],
    );
    const text = xml.replace(/<[^>]+>/g, "");
    for (const r of regions) {
      expect(text).toContain(r.region);
      expect(text).toContain((r.r as number) < 0 ? "\u2212." : ".");
    }
  });

  it("sentences: one per region in fit order, r to two decimals without a leading zero", async () => {
    const res = await get("viewer", `/api/fits/${fitId}/sentences`).expect(200);
    const body = res.body as { region: string; text: string; runs: { text: string }[] }[];
    expect(body.map((s) => s.region)).toEqual(regions.map((r) => r.region));
    body.forEach((s, k) => {
      const r = regions[k];
      const match = s.text.match(
        /^r\((\d+)\) = (\u2212?\.\d\d), 95% CI \[(\S+), (\S+)\], p (.+?), p_adj (.+?) \(Holm\)$/,
      );
      expect(match, s.text).not.toBeNull();
      const [, df, rText, low, high, p, pAdj] = match as RegExpMatchArray;
      expect(Number(df)).toBe(r.df);
      shownEqual(`${rText} ${low} ${high}`, [
        r.r as number,
        r.rCiLow as number,
        r.rCiHigh as number,
      ]);
      pShownEqual(p.replace(/^= /, ""), r.p);
      pShownEqual(pAdj.replace(/^= /, ""), r.pAdjusted);
      expect(s.runs.map((x) => x.text).join("")).toBe(s.text.replace("p_adj", "padj"));
    });
  });
});

describe("participant ids and unfinished fits", () => {
  it("a Viewer of a restricted study gets the number set aside, not the ids; a Reviewer gets them", async () => {
    await request(t.url)
      .patch(`/api/studies/${studyId}`)
      .set("Cookie", cookies.owner)
      .send({ restricted: true })
      .expect(200);
    try {
      for (const form of ["regions.md", "regions.tex"]) {
        const seen = await get("viewer", `/api/fits/${fitId}/${form}`).expect(200);
        expect(seen.text).toContain("participant ids withheld");
        expect(seen.text).not.toContain(target);
        const reviewer = await get("reviewer", `/api/fits/${fitId}/${form}`).expect(200);
        expect(reviewer.text).toContain(target);
      }
      const docx = await get("viewer", `/api/fits/${fitId}/regions.docx`)
        .buffer(true)
        .parse(binaryBody)
        .expect(200);
      const xml = new TextDecoder().decode(
        unzipSync(new Uint8Array(docx.body as Buffer))["word/document.xml"],
      );
      expect(xml).not.toContain(target);
      expect(xml).toContain("participant ids withheld");
    } finally {
      await request(t.url)
        .patch(`/api/studies/${studyId}`)
        .set("Cookie", cookies.owner)
        .send({ restricted: false })
        .expect(200);
    }
  });

  it("every form answers 409 while the fit is not done", async () => {
    await t.db.update(fits).set({ status: "running" }).where(eq(fits.id, fitId));
    try {
      for (const form of ["regions.md", "regions.tex", "regions.docx", "sentences"]) {
        const res = await get("analyst", `/api/fits/${fitId}/${form}`).expect(409);
        expect(res.body.error.message).toMatch(/not finished/);
      }
    } finally {
      await t.db.update(fits).set({ status: "done" }).where(eq(fits.id, fitId));
    }
  });
});
