/**
 * A brain-table column that is at least half numbers is a region whatever the
 * table's size, and each cell that is not a number is named by file, row and
 * column; a column that is mostly text is named as not a region, with its
 * first text values. The id and session columns are never either.
 */
import { describe, expect, it } from "vitest";
import {
  IntakeError,
  analyseBrainTable,
  buildBrainTable,
  previewUpload,
  readTable,
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

/** A wide brain table of `rows` participants and two regions; row `typoRow` (spreadsheet row) of ins_l holds "O.42". */
function tableWithTypo(rows: number, typoRow: number): string {
  const lines = ["participant_id,ins_l,ins_r"];
  for (let i = 1; i <= rows; i++) {
    const spreadsheetRow = i + 1;
    const a = spreadsheetRow === typoRow ? "O.42" : (0.01 * (i % 97)).toFixed(2);
    lines.push(`sub-${String(i).padStart(4, "0")},${a},${(0.02 * (i % 53)).toFixed(2)}`);
  }
  return `${lines.join("\n")}\n`;
}

const typoProblem = (row: number) => ({
  file: "brain.csv",
  row,
  column: "ins_l",
  code: "not_a_number",
  message: `brain.csv row ${row}, column ins_l: "O.42" is not a number; expected a number or a missing marker (empty, "n/a", "N/A" or "NA")`,
});

describe("a typo in a numeric brain-table column, whatever the table's size", () => {
  for (const [rows, typoRow] of [
    [2, 3],
    [4, 3],
    [2000, 1234],
  ] as const) {
    it(`${rows} rows: the cell is named by file, row and column, and the column stays a region`, () => {
      const raw = readTable(tableWithTypo(rows, typoRow), "brain.csv");
      const a = analyseBrainTable(raw);
      expect(a.plan.regions).toEqual(["ins_l", "ins_r"]);
      expect(a.problems).toEqual([typoProblem(typoRow)]);
      expect(a.problems.map((p) => p.message).join(" ")).not.toMatch(
        /no region columns|not a region/,
      );
      const e = refusal(() => buildBrainTable(raw));
      expect(e.status).toBe(422);
      expect(e.problems).toEqual([typoProblem(typoRow)]);
    });
  }

  it("a table whose only region has the typo still names the cell, not 'no region columns'", () => {
    const text = "participant_id,session,ins_l\ns1,1,0.12\ns2,1,O.42\ns3,1,0.33\ns4,1,0.25\n";
    const e = refusal(() => previewUpload(text, "brain.csv", "brain"));
    expect(e.problems).toEqual([typoProblem(3)]);
  });
});

describe("a mostly text column in a brain table", () => {
  it("is reported as not a region, with its first text values by row", () => {
    const text =
      "participant_id,session,scanner,ins_l\n" +
      "s1,1,north,0.1\ns2,1,south,0.2\ns3,1,north,0.3\ns4,1,east,0.4\ns5,1,12,0.5\n";
    const a = analyseBrainTable(readTable(text, "brain.csv"));
    expect(a.plan.regions).toEqual(["ins_l"]);
    expect(a.problems).toEqual([
      {
        file: "brain.csv",
        column: "scanner",
        code: "column_left_out",
        message:
          'brain.csv column scanner: not a region: column scanner has text values (first: row 2 "north", row 3 "south", row 4 "north", …; 4 of 5 values are text); confirm leaving it out (drop it or mark it not used), or fix the file',
      },
    ]);
  });

  it("is not said of the participant id or the session column, whose values are text by nature", () => {
    const text =
      "participant_id,session,ins_l\nsub-a,pre,0.1\nsub-b,pre,0.2\nsub-a,post,0.3\nsub-b,post,0.4\n";
    const a = analyseBrainTable(readTable(text, "brain.csv"));
    expect(a.problems).toEqual([]);
    expect(a.plan.regions).toEqual(["ins_l"]);
    expect(a.plan.columns.map((c) => c.role)).toEqual(["id", "session", "region"]);
  });

  it("a table whose only data column is text says so, beside 'no region columns'", () => {
    const e = refusal(() =>
      buildBrainTable(readTable("participant_id,notes\ns1,fine\ns2,moved\n", "brain.csv")),
    );
    expect(e.problems.map((p) => p.code)).toEqual(["no_regions", "column_left_out"]);
    expect(e.problems[1].message).toContain(
      'not a region: column notes has text values (first: row 2 "fine", row 3 "moved"',
    );
  });
});
