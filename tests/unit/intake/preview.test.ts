import { describe, expect, it } from "vitest";
import {
  type IntakeError,
  PREVIEW_ROWS,
  confirmTable,
  previewTable,
  readTable,
} from "../../../server/intake";

const sheetText =
  "participant_id,age,group,email,DOB\n" +
  Array.from(
    { length: 30 },
    (_, i) =>
      `sub-${String(i + 1).padStart(2, "0")},${20 + i},${i % 2 ? "patient" : "control"},p${i}@example.org,1990-01-${String((i % 28) + 1).padStart(2, "0")}`,
  ).join("\n") +
  "\n";

describe("preview and confirm", () => {
  it("previews a participant sheet: first rows, types, identifier columns", () => {
    const p = previewTable(readTable(sheetText, "participants.csv"), "participants");
    expect(p.rowCount).toBe(30);
    expect(p.rows).toHaveLength(PREVIEW_ROWS);
    expect(p.rows[0]).toEqual({
      row: 2,
      cells: ["sub-01", "20", "control", "p0@example.org", "1990-01-01"],
    });
    expect(p.delimiterName).toBe("comma");
    expect(p.participants).toBe(30);
    expect(p.columns.map((c) => [c.name, c.type])).toEqual([
      ["participant_id", "id"],
      ["age", "number"],
      ["group", "category"],
      ["email", "category"],
      ["DOB", "category"],
    ]);
    expect(p.identifierColumns.map((f) => [f.column, f.kind])).toEqual([
      ["email", "email"],
      ["DOB", "birth-date"],
    ]);
    expect(p.columns[3].identifier?.kind).toBe("email");
    expect(p.problems).toEqual([]);
  });

  it("confirm refuses identifier columns that are neither dropped nor explained", () => {
    const raw = readTable(sheetText, "participants.csv");
    try {
      confirmTable(raw, "participants", { dropColumns: ["email"] });
      throw new Error("not refused");
    } catch (e) {
      const err = e as IntakeError;
      expect(err.status).toBe(422);
      expect(err.problems).toHaveLength(1);
      expect(err.message).toBe(
        "participants.csv column DOB: may hold direct identifiers (the column name suggests birth dates); drop the column or give a reason to keep it",
      );
    }
  });

  it("confirm drops or keeps with a reason, and records each decision", () => {
    const raw = readTable(sheetText, "participants.csv");
    const c = confirmTable(raw, "participants", {
      dropColumns: ["email"],
      identifierReasons: { DOB: "  needed to check age at scan; removed before sharing " },
      types: { age: "category" },
    });
    if (c.kind !== "participants") throw new Error("wrong kind");
    expect(c.sheet.columns.map((col) => [col.name, col.type])).toEqual([
      ["age", "category"],
      ["group", "category"],
      ["DOB", "category"],
    ]);
    expect(c.identifierDecisions).toEqual([
      { column: "email", kind: "email", decision: "dropped" },
      {
        column: "DOB",
        kind: "birth-date",
        decision: "kept",
        reason: "needed to check age at scan; removed before sharing",
      },
    ]);
  });

  it("a blank reason does not count", () => {
    const raw = readTable("participant_id,name\ns1,Ann Lee\n", "p.csv");
    expect(() => confirmTable(raw, "participants", { identifierReasons: { name: "  " } })).toThrow(
      /drop the column/,
    );
  });

  it("confirm refuses a column name it does not know", () => {
    const raw = readTable("participant_id,age\ns1,2\n", "p.csv");
    expect(() => confirmTable(raw, "participants", { dropColumns: ["weight"] })).toThrow(
      /no column named "weight"/,
    );
  });

  it("previews a brain table with a typo as a problem, and confirm refuses it until the column is dropped", () => {
    const text =
      "participant_id,L_insula,L_insula_se,R_insula\ns1,0.1,0.2,1\ns2,O.42,0.2,2\ns3,0.3,0.2,3\ns4,0.4,0.2,4\ns5,0.5,0.2,5\n";
    const raw = readTable(text, "brain.csv");
    const p = previewTable(raw, "brain");
    expect(p.layout).toBe("wide");
    expect(p.regions).toEqual(["L_insula", "R_insula"]);
    expect(p.participants).toBe(5);
    expect(p.columns.map((c) => [c.name, c.role])).toEqual([
      ["participant_id", "id"],
      ["L_insula", "region"],
      ["L_insula_se", "se"],
      ["R_insula", "region"],
    ]);
    expect(p.problems.map((x) => x.message)).toEqual([
      'brain.csv row 3, column L_insula: "O.42" is not a number; expected a number or a missing marker (empty, "n/a", "N/A" or "NA")',
    ]);
    expect(() => confirmTable(raw, "brain")).toThrow(/row 3, column L_insula/);
    const c = confirmTable(raw, "brain", { dropColumns: ["L_insula", "L_insula_se"] });
    expect(c.kind === "brain" && c.brain.regions).toEqual(["R_insula"]);
  });

  it("previews sessions of a valid brain table", () => {
    const p = previewTable(
      readTable("participant_id,session,a\ns1,1,1\ns1,2,1\n", "brain.csv"),
      "brain",
    );
    expect(p.sessions).toEqual(["1", "2"]);
    expect(p.participants).toBe(1);
    expect(p.columns[1]).toMatchObject({ role: "session", type: "category" });
  });
});
