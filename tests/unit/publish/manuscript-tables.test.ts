/**
 * The manuscript tables of a finished fit (server/services/manuscript-tables.ts):
 * every region with its numbers in Markdown, LaTeX and Word; LaTeX escapes;
 * set-aside ids only for callers who may read participant rows; a Word
 * document whose bytes do not change with the clock or the time zone.
 *
 * The fit is a real engine run (runFit) on invented data from a seeded
 * generator; the expected cells are the engine's numbers written by the
 * rules of contract/results-sentences.ts (tested against the APA manual in
 * results-sentences.test.ts), so these tests check layout, not statistics.
 */
import { unzipSync } from "fflate";
import { afterEach, describe, expect, it, vi } from "vitest";
import type { Fit } from "../../../db/schema";
import {
  escapeMarkdown,
  estimateCell,
  pCell,
  sentenceContextOf,
  statisticRuns,
  runsPlain,
} from "../../../contract/results-sentences";
import { type FitData, type RegionResult, modelSpecSchema } from "../../../contract/spec";
import { createRng, normalDraw } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";
import {
  regionsDocx,
  regionsLatex,
  regionsMarkdown,
  sentencesMarkdown,
  sentencesOf,
} from "../../../server/services/manuscript-tables";

const regionNames = ["L_insula", "R&D 100% $core #2", "{brace}~hat^back\\slash"];

function invented(): FitData {
  const rng = createRng(20261204);
  const n = 24;
  const participants = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
  const age = participants.map(() => 20 + Math.floor(rng.next() * 40));
  const values = regionNames.map((_, r) =>
    Float64Array.from(age, (a) => 0.02 * (r + 1) * (a - 40) + normalDraw(rng)),
  );
  return {
    participants,
    regions: regionNames,
    values,
    numericColumns: { age },
    categoricalColumns: {},
  };
}

function fitOf(specFields: Record<string, unknown>): Fit {
  const spec = modelSpecSchema.parse(specFields);
  const result = runFit(spec, invented());
  return {
    id: "0f1e2d3c-0000-4000-8000-000000000001",
    status: "done",
    recipe: { ...spec },
    result,
    createdAt: new Date("2026-12-01T09:00:00.000Z"),
    finishedAt: new Date("2026-12-01T09:00:07.250Z"),
  } as unknown as Fit;
}

const association = () =>
  fitOf({
    kind: "association",
    predictor: "age",
    correction: "holm",
    setAside: [
      { participant: "sub-03", reason: "scanner fault" },
      { participant: "sub-11", region: "L_insula", reason: "signal dropout" },
    ],
  });

afterEach(() => {
  vi.useRealTimers();
});

describe("region tables", () => {
  it("Markdown holds every region with its estimate, statistic, p and adjusted p", () => {
    const fit = association();
    const md = regionsMarkdown(fit, { participantsVisible: true });
    const ctx = sentenceContextOf(fit.result as never, fit.recipe as never);
    const lines = md.split("\n");
    for (const r of (fit.result as { regions: RegionResult[] }).regions) {
      const row = lines.find((l) => l.startsWith(`| ${escapeMarkdown(r.region)} |`));
      expect(row, r.region).toBeDefined();
      expect(row).toContain(estimateCell(r, ctx));
      expect(row).toContain(`*t*(${r.df}) = `);
      expect(row).toContain(` ${pCell(r.p)} `);
      expect(row).toContain(` ${pCell(r.pAdjusted)} `);
    }
    expect(md).toContain("Holm correction over 3 regions");
    expect(md).toContain("sub-03 (every region) and sub-11 (L\\_insula)");
  });

  it("withholds set-aside ids from a caller who may not read participant rows", () => {
    const fit = association();
    for (const text of [
      regionsMarkdown(fit, { participantsVisible: false }),
      regionsLatex(fit, { participantsVisible: false }),
    ]) {
      expect(text).toContain("Set aside before fitting: 2 participants (participant ids withheld");
      expect(text).not.toContain("sub-03");
      expect(text).not.toContain("sub-11");
    }
  });

  it("LaTeX uses booktabs rules, plain numbers and escaped region names", () => {
    const tex = regionsLatex(association(), { participantsVisible: true });
    expect(tex).toContain("\\toprule");
    expect(tex).toContain("\\midrule");
    expect(tex).toContain("\\bottomrule");
    expect(tex).not.toContain("\\num");
    expect(tex).toContain("R\\&D 100\\% \\$core \\#2 &");
    expect(tex).toContain(
      "\\{brace\\}\\textasciitilde{}hat\\textasciicircum{}back\\textbackslash{}slash &",
    );
    expect(tex).toContain("L\\_insula &");
    expect(tex).not.toContain("\u2212"); // the minus sign is $-$ in LaTeX
    expect(tex).toMatch(/^[\t\n -~]*$/); // plain ASCII: compiles with pdfLaTeX's defaults
  });

  it("a cell without a value shows an em dash (a bootstrap has no test statistic)", () => {
    const fit = fitOf({ kind: "one-sample", inference: "bootstrap", resamples: 200 });
    const md = regionsMarkdown(fit, { participantsVisible: true });
    const rows = md.split("\n").filter((l) => l.startsWith("| L\\_insula |"));
    expect(rows).toHaveLength(1);
    expect(rows[0].split(" | ")[3]).toBe("\u2014");
    expect(md).toContain("bootstrap (BCa, 200 resamples)");
    expect(md).toContain("No correction over regions.");
    expect(md).toContain("No participant was set aside.");
  });

  it("a fit that is not done answers 409", () => {
    const fit = { ...association(), status: "running" } as Fit;
    expect(() => regionsMarkdown(fit, { participantsVisible: true })).toThrow(/not finished/);
  });
});

describe("Word document", () => {
  it("is byte-identical when built twice at different times and in different time zones", async () => {
    // Two fit rows with the same content: the second is written afresh, not taken from the kept documents.
    const fit = association();
    const twin = { ...fit, id: "0f1e2d3c-0000-4000-8000-000000000002" } as Fit;
    const zone = process.env.TZ;
    try {
      vi.useFakeTimers({ toFake: ["Date"] });
      vi.setSystemTime(new Date("2031-05-06T07:08:09.123Z"));
      process.env.TZ = "UTC";
      const a = await regionsDocx(fit, { participantsVisible: true });
      vi.setSystemTime(new Date("2033-01-02T23:59:58.987Z"));
      process.env.TZ = "America/New_York";
      const b = await regionsDocx(twin, { participantsVisible: true });
      expect(Buffer.from(a).equals(Buffer.from(b))).toBe(true);
    } finally {
      process.env.TZ = zone;
    }
  });

  it("keeps a written document per fit and visibility, and hands out copies", async () => {
    const fit = { ...association(), id: "0f1e2d3c-0000-4000-8000-000000000003" } as Fit;
    const first = await regionsDocx(fit, { participantsVisible: true });
    first.fill(0);
    const again = await regionsDocx(fit, { participantsVisible: true });
    expect(again[0]).toBe(0x50); // "P" of the zip signature: the kept bytes were not changed
    const hidden = await regionsDocx(fit, { participantsVisible: false });
    const xml = new TextDecoder().decode(unzipSync(hidden)["word/document.xml"]);
    expect(xml).not.toContain("sub-03");
  });

  it("reads back: document.xml holds every region and its numbers; core dates are the finish time", async () => {
    const fit = association();
    const files = unzipSync(await regionsDocx(fit, { participantsVisible: true }));
    expect(Object.keys(files)[0]).toBe("[Content_Types].xml");
    const xml = new TextDecoder().decode(files["word/document.xml"]);
    const text = xml
      .replace(/<w:tab\/>/g, "\t")
      .replace(/<[^>]+>/g, "")
      .replace(/&amp;/g, "&")
      .replace(/&lt;/g, "<")
      .replace(/&gt;/g, ">");
    const ctx = sentenceContextOf(fit.result as never, fit.recipe as never);
    for (const r of (fit.result as { regions: RegionResult[] }).regions) {
      expect(text).toContain(r.region);
      expect(text).toContain(estimateCell(r, ctx));
      expect(text).toContain(runsPlain(statisticRuns(r, ctx) ?? []).replace(/^t/, ""));
      expect(text).toContain(pCell(r.p));
    }
    expect(xml).toMatch(/<w:i\/>.*?<w:t[^>]*>N<\/w:t>/); // N in italics
    const core = new TextDecoder().decode(files["docProps/core.xml"]);
    expect(core).toContain(">2026-12-01T09:00:07Z</dcterms:created>");
    expect(core).toContain(">2026-12-01T09:00:07Z</dcterms:modified>");
  });
});

describe("results sentences of a fit", () => {
  it("one sentence per region, in fit order, with italics in Markdown", () => {
    const fit = association();
    const sentences = sentencesOf(fit);
    expect(sentences.map((s) => s.region)).toEqual(regionNames);
    for (const s of sentences) expect(s.text).toMatch(/^r\(\d+\) = −?\.\d\d, 95% CI \[/);
    const md = sentencesMarkdown(fit);
    expect(md).toContain("- **L\\_insula**: *r*(");
    expect(md).toContain("*p*<sub>adj</sub>");
  });
});
