import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import {
  DEMO_SEED,
  demoRegions,
  demoScenario,
  generateDemoFiles,
} from "../../../db/seed/demo-data";
import {
  buildBrainTable,
  buildFitData,
  buildParticipantSheet,
  previewTable,
  readTable,
} from "../../../server/intake";

const assets = join(dirname(fileURLToPath(import.meta.url)), "..", "..", "..", "assets", "demo");
const files = generateDemoFiles();

describe("demo data", () => {
  it("the committed files in assets/demo equal the generator's output byte for byte", () => {
    expect(readFileSync(join(assets, files.brainFileName), "utf8")).toBe(files.brainCsv);
    expect(readFileSync(join(assets, files.sheetFileName), "utf8")).toBe(files.participantsTsv);
  });

  it("is the same for the same seed and differs for another", () => {
    expect(generateDemoFiles(DEMO_SEED)).toEqual(files);
    expect(generateDemoFiles(7).brainCsv).not.toBe(files.brainCsv);
  });

  const brain = buildBrainTable(readTable(files.brainCsv, files.brainFileName));
  const sheet = buildParticipantSheet(readTable(files.participantsTsv, files.sheetFileName));
  const { data, roster } = buildFitData(brain, sheet);

  it("reads through the intake: ten regions with standard errors, a second session for some", () => {
    expect(brain.regions).toEqual(demoRegions.map((r) => r.name));
    expect(brain.standardErrors.every((s) => s !== null)).toBe(true);
    expect(data.sessions?.labels).toEqual(["1", "2"]);
    expect(brain.entries.filter((e) => e.session === "2")).toHaveLength(16);
    expect(sheet.columns.map((c) => [c.name, c.type])).toEqual([
      ["group", "category"],
      ["age", "number"],
      ["sex", "category"],
      ["accuracy", "number"],
      ["rt_ms", "number"],
      ["symptom_score", "number"],
      ["mean_fd", "number"],
    ]);
    expect(
      previewTable(readTable(files.participantsTsv, files.sheetFileName), "participants")
        .identifierColumns,
    ).toEqual([]);
  });

  it("has the planted id mismatches: a 7 / sub-07 near miss, one only in each file, none merged silently", () => {
    expect(roster?.matched).toHaveLength(69);
    expect(roster?.onlyInBrainTable).toEqual(["7", "sub-71"]);
    expect(roster?.onlyInParticipantSheet).toEqual(["sub-07", "sub-72"]);
    expect(roster?.nearMisses).toEqual([
      {
        brainId: "7",
        sheetId: "sub-07",
        reason: "same number written with different leading zeros",
      },
    ]);
    expect(roster?.matched.find((m) => m.brainId === "SUB-15")).toEqual({
      brainId: "SUB-15",
      sheetId: "sub-15",
      via: "rule",
    });
  });

  it("has two groups, one clear outlier and one high-leverage participant", () => {
    const group = data.categoricalColumns.group;
    expect(new Set(group)).toEqual(new Set(["patient", "control"]));
    const r = data.regions.indexOf(demoScenario.outlierRegion);
    const values = Array.from(data.values[r]).filter((x) => !Number.isNaN(x));
    const mean = values.reduce((a, b) => a + b, 0) / values.length;
    const sorted = [...values].sort((a, b) => b - a);
    const outlier = data.values[r][data.participants.indexOf(demoScenario.outlier)];
    expect(outlier).toBe(sorted[0]);
    // The outlier stands far from the next-largest value (by construction of the generator).
    expect(outlier - sorted[1]).toBeGreaterThan(0.8);
    expect(outlier - mean).toBeGreaterThan(1.8);
    const accuracy = data.numericColumns.accuracy.filter((x): x is number => x !== null);
    const lev = data.numericColumns.accuracy[data.participants.indexOf(demoScenario.highLeverage)];
    expect(lev).toBe(Math.min(...accuracy));
    expect(Math.min(...accuracy.filter((x) => x !== lev)) - (lev as number)).toBeGreaterThan(0.15);
  });
});
