import { describe, expect, it } from "vitest";
import {
  IntakeError,
  analyseBrainTable,
  brainParticipantIds,
  brainSessions,
  buildBrainTable,
  readTable,
  type BrainTableOptions,
} from "../../../server/intake";

const brain = (text: string, options: BrainTableOptions = {}, file = "brain.csv") =>
  buildBrainTable(readTable(text, file), options);

function refusal(text: string, options: BrainTableOptions = {}): IntakeError {
  try {
    brain(text, options);
  } catch (e) {
    if (e instanceof IntakeError) return e;
    throw e;
  }
  throw new Error("expected an IntakeError");
}

describe("wide brain tables", () => {
  it("reads regions, pairs standard errors by the _se suffix, and reads missing markers as NaN", () => {
    const t = brain(
      "participant_id,L_insula,L_insula_se,R_caudate\n" +
        "sub-01,0.42,0.10,-1.5\n" +
        "sub-02,n/a,0.2,NA\n" +
        "sub-03,,N/A,3e-1\n",
    );
    expect(t.layout).toBe("wide");
    expect(t.idColumn).toBe("participant_id");
    expect(t.regions).toEqual(["L_insula", "R_caudate"]);
    expect(Array.from(t.values[0])).toEqual([0.42, Number.NaN, Number.NaN]);
    expect(Array.from(t.values[1])).toEqual([-1.5, Number.NaN, 0.3]);
    expect(Array.from(t.standardErrors[0]!)).toEqual([0.1, 0.2, Number.NaN]);
    expect(t.standardErrors[1]).toBeNull();
    expect(t.entries.map((e) => [e.id, e.row])).toEqual([
      ["sub-01", 2],
      ["sub-02", 3],
      ["sub-03", 4],
    ]);
    expect(t.columns.find((c) => c.name === "L_insula_se")).toMatchObject({
      role: "se",
      region: "L_insula",
    });
  });

  it("uses the suffix chosen at upload", () => {
    const t = brain("id,dlpfc,dlpfc.stderr\ns1,1,0.5\n", { idColumn: "id", seSuffix: ".stderr" });
    expect(t.regions).toEqual(["dlpfc"]);
    expect(Array.from(t.standardErrors[0]!)).toEqual([0.5]);
  });

  it("takes the first column as id when there is no participant_id column, and says so", () => {
    const t = brain("subject,a\ns1,1\n");
    expect(t.idColumn).toBe("subject");
    expect(t.idColumnGuessed).toBe(true);
  });

  it("names row and column of a non-numeric cell", () => {
    const rows = Array.from({ length: 16 }, (_, i) => `s${i + 1},${(i / 10).toFixed(2)}`);
    rows[15] = "s16,O.42";
    const e = refusal(`participant_id,L_insula\n${rows.join("\n")}\n`);
    expect(e.status).toBe(422);
    // Row 17: header is row 1, the 16th data row is row 17 (counted by hand).
    expect(e.problems[0]).toMatchObject({
      file: "brain.csv",
      row: 17,
      column: "L_insula",
      code: "not_a_number",
    });
    expect(e.message.startsWith('brain.csv row 17, column L_insula: "O.42" is not a number')).toBe(
      true,
    );
  });

  it("hints at the decimal mark for decimal commas", () => {
    const e = refusal("participant_id;a;b\ns1;1;2\ns2;0,5;3\ns3;1;2\ns4;1;2\ns5;1;2\n");
    expect(e.message).toContain('"0,5" is not a number (use a point as the decimal mark)');
  });

  it("reports every bad cell at once", () => {
    const e = refusal("participant_id,a,b\ns1,x,1\ns2,1,y\ns3,1,1\ns4,1,1\ns5,1,1\n");
    expect(e.problems.map((p) => [p.row, p.column])).toEqual([
      [2, "a"],
      [3, "b"],
    ]);
    expect(e.message).toContain("(and 1 more problem)");
  });

  it("refuses a duplicate participant", () => {
    const e = refusal("participant_id,a\ns1,1\ns2,2\ns1,3\n");
    expect(e.status).toBe(422);
    expect(e.problems[0]).toMatchObject({
      code: "duplicate_participant",
      row: 4,
      column: "participant_id",
    });
    expect(e.message).toContain('participant "s1" appears again (first at row 2)');
  });

  it("accepts the same participant in two sessions but not twice in one", () => {
    const t = brain("participant_id,session,a\ns1,1,0.1\ns1,2,0.2\ns2,1,0.3\n");
    expect(t.sessionColumn).toBe("session");
    expect(brainParticipantIds(t)).toEqual(["s1", "s2"]);
    expect(brainSessions(t)).toEqual(["1", "2"]);
    const e = refusal("participant_id,session,a\ns1,1,0.1\ns1,1,0.2\n");
    expect(e.message).toContain('participant "s1" in session "1" appears again (first at row 2)');
  });

  it("refuses a missing id and a missing session label", () => {
    expect(refusal("participant_id,a\n,1\ns2,2\n").problems[0]).toMatchObject({
      code: "missing_id",
      row: 2,
    });
    expect(refusal("participant_id,session,a\ns1,n/a,1\n").problems[0]).toMatchObject({
      code: "missing_session",
      column: "session",
    });
  });

  it("refuses standard errors that are not greater than 0", () => {
    const e = refusal("participant_id,a,a_se\ns1,1,0\ns2,1,-0.2\ns3,1,0.1\n");
    expect(e.problems.map((p) => [p.code, p.row, p.column])).toEqual([
      ["bad_standard_error", 2, "a_se"],
      ["bad_standard_error", 3, "a_se"],
    ]);
  });

  it("reports a standard-error column with no region to pair with", () => {
    const e = refusal("participant_id,a,b_se\ns1,1,0.1\n");
    expect(e.problems[0]).toMatchObject({ code: "unpaired_standard_error", column: "b_se" });
  });

  it("never leaves a text column out silently: it is a problem until dropped or marked not used", () => {
    const text = "participant_id,scanner,a\ns1,alpha,1\ns2,beta,2\n";
    const e = refusal(text);
    expect(e.problems).toEqual([
      {
        file: "brain.csv",
        column: "scanner",
        code: "column_left_out",
        message:
          'brain.csv column scanner: not a region: column scanner has text values (first: row 2 "alpha", row 3 "beta"; 2 of 2 values are text); confirm leaving it out (drop it or mark it not used), or fix the file',
      },
    ]);
    const t = brain(text, { types: { scanner: "category" } });
    expect(t.regions).toEqual(["a"]);
    expect(t.columns.find((c) => c.name === "scanner")).toMatchObject({
      role: "ignored",
      reason: "typed as a category at upload, so not a region",
    });
    expect(
      brain(text, { dropColumns: ["scanner"] }).columns.find((c) => c.name === "scanner")?.role,
    ).toBe("dropped");
    // Naming the regions leaves every other column out by that choice.
    expect(brain(text, { regions: ["a"] }).regions).toEqual(["a"]);
  });

  it("reads only the regions asked for, and refuses an unknown one", () => {
    const t = brain("participant_id,a,b,c\ns1,1,2,3\n", { regions: ["c", "a"] });
    expect(t.regions).toEqual(["c", "a"]);
    expect(Array.from(t.values[0])).toEqual([3]);
    const e = refusal("participant_id,a\ns1,1\n", { regions: ["zz"] });
    expect(e.problems[0]).toMatchObject({ code: "unknown_column", row: 1 });
    expect(e.message).toContain('no column named "zz"');
  });

  it("a region asked for by name is checked cell by cell even if mostly text", () => {
    const e = refusal("participant_id,a\ns1,x\ns2,y\n", { regions: ["a"] });
    expect(e.problems.map((p) => p.row)).toEqual([2, 3]);
  });

  it("refuses an id column that does not exist", () => {
    const e = refusal("participant_id,a\ns1,1\n", { idColumn: "subject" });
    expect(e.problems[0].code).toBe("unknown_column");
  });

  it("drops columns and lets a type change make a column a region or not", () => {
    const t = brain("participant_id,a,b,junk\ns1,1,2,x\n", {
      dropColumns: ["junk"],
      types: { b: "category" },
    });
    expect(t.regions).toEqual(["a"]);
    expect(t.columns.find((c) => c.name === "junk")?.role).toBe("dropped");
  });

  it("a table without regions is refused", () => {
    expect(refusal("participant_id,site\ns1,x\n").problems[0].code).toBe("no_regions");
  });

  it("analyse returns the problems without throwing, for previews", () => {
    const a = analyseBrainTable(
      readTable("participant_id,a\ns1,1\ns2,O.4\ns3,2\ns4,3\ns5,4\n", "brain.csv"),
    );
    expect(a.table).toBeNull();
    expect(a.plan.regions).toEqual(["a"]);
    expect(a.problems[0].message).toContain('brain.csv row 3, column a: "O.4" is not a number');
  });
});

describe("long brain tables", () => {
  it("reads id, region, value, se and session columns", () => {
    const t = brain(
      "participant_id,session,region,value,se\n" +
        "s1,1,L_insula,0.5,0.1\n" +
        "s1,1,R_insula,0.7,0.2\n" +
        "s2,1,L_insula,n/a,n/a\n" +
        "s1,2,L_insula,0.6,0.1\n",
    );
    expect(t.layout).toBe("long");
    expect(t.regions).toEqual(["L_insula", "R_insula"]);
    expect(t.entries.map((e) => [e.id, e.session])).toEqual([
      ["s1", "1"],
      ["s2", "1"],
      ["s1", "2"],
    ]);
    expect(Array.from(t.values[0])).toEqual([0.5, Number.NaN, 0.6]);
    // s2 and s1/session 2 have no R_insula row: missing.
    expect(Array.from(t.values[1])).toEqual([0.7, Number.NaN, Number.NaN]);
    expect(Array.from(t.standardErrors[1]!)).toEqual([0.2, Number.NaN, Number.NaN]);
  });

  it("refuses a non-number value naming row and column", () => {
    const e = refusal("participant_id,region,value\ns1,a,1\ns2,a,one\n");
    expect(e.message).toContain('brain.csv row 3, column value: "one" is not a number');
  });

  it("refuses a participant with the same region twice", () => {
    const e = refusal("participant_id,region,value\ns1,a,1\ns1,a,2\n");
    expect(e.problems[0]).toMatchObject({ code: "duplicate_participant", row: 3 });
  });

  it("refuses a missing region name", () => {
    expect(refusal("participant_id,region,value\ns1,,1\n").problems[0].code).toBe("missing_region");
  });

  it("filters to the regions asked for and refuses an unknown one", () => {
    const text = "participant_id,region,value\ns1,a,1\ns1,b,2\n";
    expect(brain(text, { regions: ["b"] }).regions).toEqual(["b"]);
    expect(refusal(text, { regions: ["c"] }).problems[0].code).toBe("unknown_region");
  });
});

describe("ids the matching rule treats as one participant", () => {
  it("are refused in a wide table, per session, naming both rows", () => {
    const e = refusal(
      "participant_id,session,a\nsub-04,1,0.1\nsub-04,2,0.2\nSub-04,1,0.3\n04,3,0.4\n",
    );
    expect(e.problems.map((p) => [p.code, p.row, p.column])).toEqual([
      ["duplicate_participant", 4, "participant_id"],
    ]);
    expect(e.message).toBe(
      'brain.csv row 4, column participant_id: participant "Sub-04" in session "1" is the same participant as "sub-04" at row 2: ids are matched ignoring spaces around them, upper and lower case, and a leading "sub-"; each participant and session must appear once',
    );
  });

  it("are refused in a long table within the same session and region, naming both rows", () => {
    const e = refusal(
      "participant_id,session,region,value\nsub-04,1,a,0.1\nsub-04,1,b,0.2\nSUB-04,1,a,0.3\nsub-04,2,a,0.4\n",
    );
    expect(e.problems.map((p) => [p.code, p.row, p.column])).toEqual([
      ["duplicate_participant", 4, "participant_id"],
    ]);
    expect(e.message).toContain(
      'brain.csv row 4, column participant_id: participant "SUB-04" in session "1" is the same participant as "sub-04" at row 2 (both have region "a"): ids are matched',
    );
    const exact = refusal("participant_id,region,value\ns1,a,1\ns2,a,2\ns1,a,3\n");
    expect(exact.message).toContain(
      'brain.csv row 4, column participant_id: participant "s1" has region "a" again (first at row 2)',
    );
  });
});
