/**
 * The recipe command, spawned as a lab pipeline would run it, on small
 * fixture files written to a temporary folder. The bad-input runs are
 * started together in beforeAll (each is a separate process) and checked
 * one by one.
 */
import { createHash } from "node:crypto";
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { gzipSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runRecipeCommand, type CommandRun } from "../../support/recipe-command";

const dir = mkdtempSync(join(tmpdir(), "covarion-recipe-"));

/** The recipe command, directly or through npm. */
function run(args: string[], viaNpm = false): Promise<CommandRun> {
  return runRecipeCommand(args, { viaNpm });
}

const BRAIN =
  "participant_id,L_insula,L_insula_se,R_caudate\n" +
  "sub-01,0.50,0.10,0.1\n" +
  "sub-02,0.20,0.12,-0.3\n" +
  "sub-03,0.90,0.09,0.4\n" +
  "sub-04,0.40,0.11,0.0\n" +
  "7,0.30,0.10,0.2\n" +
  "sub-06,0.70,0.13,-0.1\n" +
  "sub-08,0.10,0.10,0.3\n";
const SHEET =
  "participant_id\tage\tgroup\taccuracy\n" +
  "sub-01\t25\tcontrol\t0.81\n" +
  "sub-02\t31\tpatient\t0.70\n" +
  "sub-03\t28\tcontrol\t0.93\n" +
  "sub-04\t40\tpatient\t0.77\n" +
  "sub-07\t35\tcontrol\t0.80\n" +
  "sub-06\t22\tpatient\t0.88\n" +
  "sub-09\t30\tcontrol\t0.75\n";

const BRAIN_GZ = gzipSync(BRAIN);
const SHEET_GZ = gzipSync(SHEET);

function file(name: string, content: string | Uint8Array): string {
  const path = join(dir, name);
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, content);
  return path;
}

function recipe(name: string, body: unknown): string {
  return file(name, typeof body === "string" ? body : JSON.stringify(body));
}

const sha256 = (s: string | Uint8Array) => createHash("sha256").update(s).digest("hex");

const results = new Map<string, CommandRun>();

const cases: Record<string, () => string[]> = {
  usage: () => [],
  missingRecipe: () => [join(dir, "no-such-recipe.json")],
  invalidJson: () => [
    recipe("invalid.json", '{ "brainTable": "brain.csv", "kind": "one-sample", }'),
  ],
  unknownKey: () => [
    recipe("unknown-key.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      estimatr: "huber",
    }),
  ],
  badOption: () => [
    recipe("bad-option.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      estimator: "median",
    }),
  ],
  missingFile: () => [
    recipe("missing-file.json", { brainTable: "data/absent.csv", kind: "one-sample" }),
  ],
  missingSheetKey: () => [
    recipe("no-sheet.json", {
      brainTable: "data/brain.csv",
      kind: "association",
      predictor: "age",
    }),
  ],
  unknownColumn: () => [
    recipe("unknown-column.json", {
      brainTable: "data/brain.csv",
      participantSheet: "data/participants.tsv",
      kind: "association",
      predictor: "reaction_time",
    }),
  ],
  unknownRegion: () => [
    recipe("unknown-region.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      regions: ["L_amygdala"],
    }),
  ],
  unknownIdColumn: () => [
    recipe("unknown-id.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      idColumn: "subject",
    }),
  ],
  nonNumeric: () => {
    file("data/typo.csv", BRAIN.replace("sub-03,0.90", "sub-03,O.90"));
    return [recipe("non-numeric.json", { brainTable: "data/typo.csv", kind: "one-sample" })];
  },
  duplicate: () => {
    file("data/dup.csv", `${BRAIN}sub-02,0.25,0.1,0.0\n`);
    return [recipe("duplicate.json", { brainTable: "data/dup.csv", kind: "one-sample" })];
  },
  tooFew: () => {
    file("data/two.csv", "participant_id,L_insula\nsub-01,0.5\n");
    return [recipe("too-few.json", { brainTable: "data/two.csv", kind: "one-sample" })];
  },
  spreadsheet: () => {
    file(
      "data/book.csv",
      new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00, 0x08, 0x00]),
    );
    return [recipe("spreadsheet.json", { brainTable: "data/book.csv", kind: "one-sample" })];
  },
  hashMismatch: () => [
    recipe("hash.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      inputs: { brainTable: { file: "data/brain.csv", sha256: "0".repeat(64) } },
    }),
  ],
  unknownSetAside: () => [
    recipe("set-aside.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      setAside: [{ participant: "sub-99", reason: "excluded before analysis: scanner fault" }],
    }),
  ],
  oneSample: () => [
    recipe("one-sample.json", {
      brainTable: "data/brain.csv",
      kind: "one-sample",
      regions: ["L_insula"],
    }),
  ],
  maxTEmptyCells: () => {
    // sub-04 has no R_caudate value and sub-06 no L_insula value: the regions differ in participants.
    file(
      "data/empty-cells.csv",
      BRAIN.replace("sub-04,0.40,0.11,0.0", "sub-04,0.40,0.11,n/a").replace(
        "sub-06,0.70,0.13,-0.1",
        "sub-06,n/a,n/a,-0.1",
      ),
    );
    return [
      recipe("max-t-empty-cells.json", {
        brainTable: "data/empty-cells.csv",
        kind: "one-sample",
        inference: "permutation",
        resamples: 1000,
        correction: "maxt",
      }),
    ];
  },
  association: () => [
    recipe("association.json", {
      brainTable: "data/brain.csv",
      participantSheet: "data/participants.tsv",
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
      mappings: [{ brainId: "7", sheetId: "sub-07" }],
      correction: "holm",
    }),
  ],
  // The same files gzip-compressed, read as the app reads a compressed upload.
  associationGzip: () => [
    recipe("association-gzip.json", {
      brainTable: "data/brain.csv.gz",
      participantSheet: "data/participants.tsv.gz",
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
      mappings: [{ brainId: "7", sheetId: "sub-07" }],
      correction: "holm",
    }),
  ],
  truncatedGzip: () => {
    const whole = gzipSync(BRAIN);
    file("data/truncated.csv.gz", whole.subarray(0, whole.length - 12));
    return [
      recipe("truncated-gzip.json", { brainTable: "data/truncated.csv.gz", kind: "one-sample" }),
    ];
  },
};

beforeAll(async () => {
  file("data/brain.csv", BRAIN);
  file("data/participants.tsv", SHEET);
  file("data/brain.csv.gz", BRAIN_GZ);
  file("data/participants.tsv.gz", SHEET_GZ);
  const names = Object.keys(cases);
  const args = names.map((n) => cases[n]());
  // A few processes at a time: the machine has two cores.
  let next = 0;
  const worker = async () => {
    while (next < names.length) {
      const k = next++;
      results.set(names[k], await run(args[k]));
    }
  };
  await Promise.all([worker(), worker(), worker()]);
}, 240_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

function bad(name: string): string {
  const r = results.get(name)!;
  expect(r.code, r.stderr).toBe(2);
  expect(r.stdout).toBe("");
  const lines = r.stderr.split("\n").filter((l) => l !== "");
  expect(lines).toHaveLength(1);
  return lines[0];
}

describe("recipe command: bad input exits 2 with one line naming the fault", () => {
  it("no recipe argument", () =>
    expect(bad("usage")).toBe("usage: npm run --silent fit -- path/to/recipe.json"));
  it("missing recipe file", () =>
    expect(bad("missingRecipe")).toBe("no-such-recipe.json: recipe file not found"));
  it("invalid JSON", () => expect(bad("invalidJson")).toMatch(/^invalid\.json: invalid JSON \(/));
  it("unknown option", () =>
    expect(bad("unknownKey")).toBe('unknown-key.json: unknown key "estimatr"'));
  it("bad option value", () =>
    expect(bad("badOption")).toMatch(/^bad-option\.json: key "estimator": /));
  it("missing file", () =>
    expect(bad("missingFile")).toBe(
      "data/absent.csv: brain table file not found (paths are relative to the recipe's folder)",
    ));
  it("participant sheet needed", () =>
    expect(bad("missingSheetKey")).toBe(
      'no-sheet.json: key "participantSheet" is required for kind "association"',
    ));
  it("unknown column", () =>
    expect(bad("unknownColumn")).toMatch(
      /^data\/participants\.tsv row 1: no column named "reaction_time" \(recipe key predictor\)/,
    ));
  it("unknown region", () =>
    expect(bad("unknownRegion")).toMatch(/^data\/brain\.csv row 1: no column named "L_amygdala"/));
  it("unknown id column", () =>
    expect(bad("unknownIdColumn")).toMatch(/^data\/brain\.csv row 1: no column named "subject"/));
  it("non-numeric cell", () =>
    expect(bad("nonNumeric")).toMatch(
      /^data\/typo\.csv row 4, column L_insula: "O\.90" is not a number/,
    ));
  it("duplicate participant", () =>
    expect(bad("duplicate")).toMatch(
      /^data\/dup\.csv row 9, column participant_id: participant "sub-02" appears again \(first at row 3\)/,
    ));
  it("too few participants", () =>
    expect(bad("tooFew")).toMatch(/^too-few\.json: .*too few participants/));
  it("spreadsheet renamed .csv", () =>
    expect(bad("spreadsheet")).toMatch(/^data\/book\.csv: is a zip archive/));
  it("truncated gzip file", () =>
    expect(bad("truncatedGzip")).toBe(
      "data/truncated.csv.gz: is a truncated gzip file: it ends before its compressed data does; upload the whole file again",
    ));
  it("input changed since the recipe was made", () =>
    expect(bad("hashMismatch")).toMatch(/^data\/brain\.csv: content differs from the recipe/));
  it("set-aside names an unknown participant", () =>
    expect(bad("unknownSetAside")).toMatch(
      /^set-aside\.json: setAside: unknown participant 'sub-99'/,
    ));
});

describe("recipe command: fits", () => {
  it("one-sample from a brain table alone", () => {
    const r = results.get("oneSample")!;
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toBe("");
    const out = JSON.parse(r.stdout);
    expect(out.regions).toHaveLength(1);
    expect(out.regions[0].region).toBe("L_insula");
    expect(out.regions[0].n).toBe(7);
    // The estimate is the mean: (0.5+0.2+0.9+0.4+0.3+0.7+0.1)/7 = 3.1/7 (exact arithmetic).
    expect(out.regions[0].estimate).toBeCloseTo(3.1 / 7, 12);
    expect(out.roster).toEqual({
      matched: 7,
      onlyInBrainTable: [],
      onlyInParticipantSheet: [],
      duplicates: [],
      nearMisses: [],
      rule: null,
    });
    expect(out.recipe).toMatchObject({
      brainTable: "data/brain.csv",
      idColumn: "participant_id",
      kind: "one-sample",
      regions: ["L_insula"],
      estimator: "ols",
      inference: "parametric",
      resamples: 10000,
      seed: 1,
      correction: "none",
      setAside: [],
      inputs: { brainTable: { file: "data/brain.csv", sha256: sha256(BRAIN) } },
    });
    expect(typeof out.recipe.softwareVersion).toBe("string");
  });

  it("max-T over a brain table with empty cells: one draw of the 7 participants for both regions", () => {
    const r = results.get("maxTEmptyCells")!;
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.regions.map((x: { region: string; n: number }) => [x.region, x.n])).toEqual([
      ["L_insula", 6],
      ["R_caudate", 6],
    ]);
    for (const region of out.regions) {
      // All 2^7 = 128 sign vectors of the 7 participants are enumerated (common practice, no source).
      expect(region.permutation).toMatchObject({
        scheme: "sign flipping",
        exact: true,
        rearrangements: 128,
      });
      expect(Number.isInteger(region.p * 128)).toBe(true);
      expect(region.pAdjusted).toBeGreaterThanOrEqual(region.p);
    }
    expect(out.notes.some((n: string) => n.startsWith("Regions differ in participants"))).toBe(
      true,
    );
  });

  it("association with a sheet: roster report, mapping applied, defaults filled in", () => {
    const r = results.get("association")!;
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.regions.map((x: { region: string }) => x.region)).toEqual(["L_insula", "R_caudate"]);
    expect(out.regions[0].n).toBe(6);
    expect(out.roster.matched).toBe(6);
    expect(out.roster.onlyInBrainTable).toEqual(["sub-08"]);
    expect(out.roster.onlyInParticipantSheet).toEqual(["sub-09"]);
    expect(out.roster.rule).toMatch(/1 confirmed mapping was applied\.$/);
    expect(out.participants.some((p: { participant: string }) => p.participant === "7")).toBe(true);
    expect(out.recipe.inputs.participantSheet).toEqual({
      file: "data/participants.tsv",
      sha256: sha256(SHEET),
    });
    expect(out.recipe.regions).toEqual(["L_insula", "R_caudate"]);
    expect(out.recipe.covariates).toEqual(["age"]);
  });

  it("reads .csv.gz and .tsv.gz as the uncompressed files, recording the compressed files' hashes", () => {
    const plain = JSON.parse(results.get("association")!.stdout);
    const r = results.get("associationGzip")!;
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.recipe.inputs).toEqual({
      brainTable: { file: "data/brain.csv.gz", sha256: sha256(BRAIN_GZ) },
      participantSheet: { file: "data/participants.tsv.gz", sha256: sha256(SHEET_GZ) },
    });
    const { recipe: _plainRecipe, ...plainResult } = plain;
    const { recipe: _gzipRecipe, ...gzipResult } = out;
    expect(gzipResult).toEqual(plainResult);
  });

  it("the printed recipe, run again, gives the same bytes", async () => {
    const first = results.get("association")!;
    const again = recipe("again.json", JSON.parse(first.stdout).recipe);
    const second = await run([again]);
    expect(second.code, second.stderr).toBe(0);
    expect(second.stdout).toBe(first.stdout);
  }, 60_000);

  it("runs through npm run --silent fit", async () => {
    const r = await run([join(dir, "one-sample.json")], true);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toBe(results.get("oneSample")!.stdout);
  }, 60_000);
});
