import { describe, expect, it } from "vitest";
import {
  IntakeError,
  analyseParticipantSheet,
  buildParticipantSheet,
  readTable,
  sheetColumn,
  type ParticipantSheetOptions,
} from "../../../server/intake";

const sheet = (text: string, options: ParticipantSheetOptions = {}) =>
  buildParticipantSheet(readTable(text, "participants.tsv"), options);

function refusal(text: string, options: ParticipantSheetOptions = {}): IntakeError {
  try {
    sheet(text, options);
  } catch (e) {
    if (e instanceof IntakeError) return e;
    throw e;
  }
  throw new Error("expected an IntakeError");
}

describe("participant sheets", () => {
  it("reads a BIDS-style participants file with numeric and categorical columns", () => {
    const s = sheet(
      "participant_id\tage\tsex\tgroup\nsub-01\t23\tF\tpatient\nsub-02\tn/a\tM\tcontrol\nsub-03\t41.5\tn/a\tcontrol\n",
    );
    expect(s.idColumn).toBe("participant_id");
    expect(s.ids).toEqual(["sub-01", "sub-02", "sub-03"]);
    expect(s.rows).toEqual([2, 3, 4]);
    expect(sheetColumn(s, "age")).toEqual({
      name: "age",
      type: "number",
      values: [23, null, 41.5],
    });
    expect(sheetColumn(s, "sex")).toEqual({
      name: "sex",
      type: "category",
      values: ["F", "M", null],
    });
    expect(sheetColumn(s, "GROUP")?.type).toBe("category");
  });

  it("infers a mostly numeric column as numeric and names its typo", () => {
    const e = refusal("participant_id,age\ns1,23\ns2,31\ns3,4O\ns4,28\ns5,35\n");
    expect(e.status).toBe(422);
    expect(e.problems[0]).toMatchObject({ row: 4, column: "age", code: "not_a_number" });
    expect(e.message).toContain('participants.tsv row 4, column age: "4O" is not a number');
  });

  it("lets the caller type a column as a category, or as a number", () => {
    const s = sheet("participant_id,site,code\ns1,1,2\ns2,2,3\n", { types: { site: "category" } });
    expect(sheetColumn(s, "site")).toEqual({ name: "site", type: "category", values: ["1", "2"] });
    const e = refusal("participant_id,handedness\ns1,left\ns2,right\n", {
      types: { handedness: "number" },
    });
    expect(e.problems).toHaveLength(2);
  });

  it("refuses a type for a column that does not exist, and an unknown type", () => {
    expect(refusal("participant_id,a\ns1,1\n", { types: { b: "number" } }).problems[0].code).toBe(
      "unknown_column",
    );
    expect(
      refusal("participant_id,a\ns1,1\n", { types: { a: "date" as unknown as "number" } })
        .problems[0].code,
    ).toBe("bad_type");
  });

  it("refuses a duplicate participant", () => {
    const e = refusal("participant_id,age\nsub-01,20\nsub-02,21\nsub-01,22\n");
    expect(e.problems[0]).toMatchObject({
      code: "duplicate_participant",
      row: 4,
      column: "participant_id",
    });
    expect(e.message).toContain('participant "sub-01" appears again (first at row 2)');
  });

  it("refuses a missing participant id", () => {
    expect(refusal("participant_id,age\nn/a,20\n").problems[0]).toMatchObject({
      code: "missing_id",
      row: 2,
    });
  });

  it("drops columns, never the id column", () => {
    const s = sheet("participant_id,age,name\ns1,20,Ann Lee\n", { dropColumns: ["name"] });
    expect(s.columns.map((c) => c.name)).toEqual(["age"]);
    expect(s.dropped).toEqual(["name"]);
    expect(
      refusal("participant_id,age\ns1,20\n", { dropColumns: ["participant_id"] }).problems[0].code,
    ).toBe("drop_id_column");
  });

  it("uses a named id column and refuses one that is not there", () => {
    expect(sheet("subject,age\ns1,20\n", { idColumn: "subject" }).ids).toEqual(["s1"]);
    const e = refusal("subject,age\ns1,20\n", { idColumn: "participant_id" });
    expect(e.message).toContain('no column named "participant_id"');
  });

  it("a column with no values is a category of missing values", () => {
    const a = analyseParticipantSheet(readTable("participant_id,note\ns1,\ns2,n/a\n", "p.csv"));
    expect(a.columns[1].type).toBe("category");
    expect(a.sheet?.columns[0].values).toEqual([null, null]);
  });
});

describe("ids the matching rule treats as one participant", () => {
  it("are refused within one sheet like exact duplicates, naming both rows, the file and the column", () => {
    const e = refusal(
      "participant_id\tage\nsub-04\t30\nsub-05\t31\nSUB-04\t32\n 04 \t33\nsub-05\t34\n",
    );
    expect(e.status).toBe(422);
    expect(e.problems.map((p) => [p.code, p.file, p.row, p.column])).toEqual([
      ["duplicate_participant", "participants.tsv", 4, "participant_id"],
      ["duplicate_participant", "participants.tsv", 5, "participant_id"],
      ["duplicate_participant", "participants.tsv", 6, "participant_id"],
    ]);
    expect(e.problems[0].message).toBe(
      'participants.tsv row 4, column participant_id: participant "SUB-04" is the same participant as "sub-04" at row 2: ids are matched ignoring spaces around them, upper and lower case, and a leading "sub-"; each participant must appear once',
    );
    expect(e.problems[1].message).toContain(
      'participant "04" is the same participant as "sub-04" at row 2',
    );
    expect(e.problems[2].message).toContain('participant "sub-05" appears again (first at row 3)');
  });

  it("ids the rule keeps apart are accepted", () => {
    expect(sheet("participant_id\tage\nsub-4\t30\nsub-04\t31\nsub_04\t32\nsub-\t33\n").ids).toEqual(
      ["sub-4", "sub-04", "sub_04", "sub-"],
    );
  });
});
