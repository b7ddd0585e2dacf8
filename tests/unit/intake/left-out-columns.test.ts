/**
 * One rule for brain-table columns that are not read and for numeric
 * columns with stray text, used by uploads and by the recipe command: a
 * mostly numeric column's text cells are named by row and column; any other
 * column is left out only by a decision, never silently.
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { runRecipe } from "../../../server/cli/recipe";
import {
  IntakeError,
  analyseParticipantSheet,
  buildBrainTable,
  confirmTable,
  isNumericColumn,
  previewTable,
  previewUpload,
  readTable,
  type BrainTableOptions,
} from "../../../server/intake";

function refusal(run: () => unknown): IntakeError {
  try {
    run();
  } catch (e) {
    if (e instanceof IntakeError) return e;
    throw e;
  }
  throw new Error("expected an IntakeError");
}

const brain = (text: string, options: BrainTableOptions = {}) =>
  buildBrainTable(readTable(text, "brain.csv"), options);

describe("numeric columns", () => {
  it("is at least half of the non-missing cells being numbers, and at least one", () => {
    expect(isNumericColumn(3, 1)).toBe(true); // (product rule: at least half)
    expect(isNumericColumn(1, 1)).toBe(true);
    expect(isNumericColumn(1, 2)).toBe(false);
    expect(isNumericColumn(0, 0)).toBe(false);
  });

  it("names the one typo among four cells by row and column instead of dropping the column", () => {
    const text = "participant_id,ins_l,ins_r\ns1,0.12,0.3\ns2,O.42,0.1\ns3,0.33,0.2\ns4,0.25,0.4\n";
    const e = refusal(() => brain(text));
    expect(e.status).toBe(422);
    expect(e.problems).toEqual([
      {
        file: "brain.csv",
        row: 3,
        column: "ins_l",
        code: "not_a_number",
        message:
          'brain.csv row 3, column ins_l: "O.42" is not a number; expected a number or a missing marker (empty, "n/a", "N/A" or "NA")',
      },
    ]);
    // The upload is refused with it (nothing to decide: the file needs fixing).
    expect(() => previewUpload(text, "brain.csv", "brain")).toThrow(
      /row 3, column ins_l: "O.42" is not a number/,
    );
  });

  it("types a participant-sheet column with a stray text cell as a number and names the cell", () => {
    const a = analyseParticipantSheet(
      readTable("participant_id,age\ns1,23\ns2,31\ns3,4O\ns4,28\n", "sheet.csv"),
    );
    expect(a.columns[1]).toMatchObject({ name: "age", type: "number" });
    expect(a.problems.map((p) => [p.row, p.column, p.code])).toEqual([[4, "age", "not_a_number"]]);
  });
});

describe("brain-table columns left out", () => {
  it("a column that is mostly text is a problem naming its text cells, until dropped or marked not used", () => {
    const text = "participant_id,ins_l,ins_r\ns1,0.12,0.3\ns2,O.42,0.1\ns3,high,0.2\n";
    const raw = readTable(text, "brain.csv");
    const preview = previewUpload(text, "brain.csv", "brain");
    expect(preview.regions).toEqual(["ins_r"]);
    expect(preview.participants).toBe(3);
    expect(preview.problems).toEqual([
      {
        file: "brain.csv",
        column: "ins_l",
        code: "column_left_out",
        message:
          'brain.csv column ins_l: not a region: column ins_l has text values (first: row 3 "O.42", row 4 "high"; 2 of 3 values are text); confirm leaving it out (drop it or mark it not used), or fix the file',
      },
    ]);
    expect(() => confirmTable(raw, "brain")).toThrow(
      /brain.csv column ins_l: not a region: column ins_l has text values/,
    );
    const dropped = confirmTable(raw, "brain", { dropColumns: ["ins_l"] });
    expect(dropped.kind === "brain" && dropped.brain.regions).toEqual(["ins_r"]);
    const notUsed = confirmTable(raw, "brain", { types: { ins_l: "category" } });
    expect(notUsed.kind === "brain" && notUsed.brain.regions).toEqual(["ins_r"]);
    // Or made a region, and then its text cell is named.
    expect(() => confirmTable(raw, "brain", { types: { ins_l: "number" } })).toThrow(
      /brain.csv row 3, column ins_l: "O.42" is not a number/,
    );
  });

  it("an empty column, the standard errors of a left-out column, and a long table's extra column are problems too", () => {
    const wide = refusal(() =>
      brain("participant_id,a,notes,site,site_se\ns1,1,,x,0.1\ns2,2,n/a,y,0.2\n"),
    );
    expect(wide.problems.map((p) => [p.column, p.code])).toEqual([
      ["notes", "column_left_out"],
      ["site", "column_left_out"],
      ["site_se", "column_left_out"],
    ]);
    expect(wide.problems[0].message).toContain(
      "brain.csv column notes: has no values, so it is not a region",
    );
    expect(wide.problems[2].message).toContain(
      'brain.csv column site_se: holds the standard errors of "site", which is not a region here',
    );
    // Deciding on a region's column decides its standard errors.
    const t = brain("participant_id,a,notes,site,site_se\ns1,1,,x,0.1\ns2,2,n/a,y,0.2\n", {
      dropColumns: ["notes", "site"],
    });
    expect(t.regions).toEqual(["a"]);
    const long = refusal(() =>
      brain("participant_id,region,value,hemisphere\ns1,a,1,left\ns2,a,2,right\n"),
    );
    expect(long.problems).toMatchObject([{ column: "hemisphere", code: "column_left_out" }]);
    expect(long.message).toContain(
      "brain.csv column hemisphere: is not read: a long brain table uses only the id, session, region, value and se columns",
    );
    expect(
      brain("participant_id,region,value,hemisphere\ns1,a,1,left\n", {
        dropColumns: ["hemisphere"],
      }).regions,
    ).toEqual(["a"]);
  });

  it("previews show the sessions and participants of a table whose only problems are columns to decide", () => {
    const p = previewTable(
      readTable("participant_id,session,a,site\ns1,1,1,x\ns1,2,1,y\ns2,1,2,z\n", "brain.csv"),
      "brain",
    );
    expect(p.sessions).toEqual(["1", "2"]);
    expect(p.participants).toBe(2);
    expect(p.problems.map((x) => x.code)).toEqual(["column_left_out"]);
  });
});

describe("the recipe command uses the same rule", () => {
  const dir = mkdtempSync(join(tmpdir(), "covarion-left-out-"));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const write = (name: string, text: string) => {
    writeFileSync(join(dir, name), text);
    return join(dir, name);
  };

  it("refuses a brain table with a typo or an undecided column, and leaves columns out when the recipe names the regions", async () => {
    write(
      "typo.csv",
      "participant_id,ins_l,ins_r\ns1,0.12,0.3\ns2,O.42,0.1\ns3,0.33,0.2\ns4,0.25,0.4\n",
    );
    const typo = await runRecipe(
      write("typo.json", JSON.stringify({ brainTable: "typo.csv", kind: "one-sample" })),
    ).catch((e: unknown) => e);
    expect(typo).toBeInstanceOf(IntakeError);
    expect((typo as IntakeError).message).toContain(
      'typo.csv row 3, column ins_l: "O.42" is not a number',
    );

    write("site.csv", "participant_id,site,a\ns1,x,0.1\ns2,y,0.4\ns3,x,0.3\n");
    const site = await runRecipe(
      write("site.json", JSON.stringify({ brainTable: "site.csv", kind: "one-sample" })),
    ).catch((e: unknown) => e);
    expect((site as IntakeError).problems).toMatchObject([
      { file: "site.csv", column: "site", code: "column_left_out" },
    ]);
    expect((site as IntakeError).message).toContain('name the regions to read under "regions"');
    const named = await runRecipe(
      write(
        "named.json",
        JSON.stringify({ brainTable: "site.csv", kind: "one-sample", regions: ["a"] }),
      ),
    );
    expect(named.recipe.regions).toEqual(["a"]);
  });
});
