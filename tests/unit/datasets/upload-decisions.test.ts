import { describe, expect, it } from "vitest";
import { ApiError } from "../../../hooks/api";
import type { ColumnPreview, DatasetPreview } from "../../../hooks/use-datasets";
import {
  confirmInput,
  leftOutColumns,
  noDecisions,
  openProblems,
  problemsFrom,
  typeChoices,
  undecidedIdentifiers,
  undecidedLeftOut,
  uploadOptions,
  type Decisions,
} from "../../../components/datasets/upload-decisions";

const column = (name: string, type: ColumnPreview["type"], role: string): ColumnPreview => ({
  name,
  type,
  role,
  missing: 0,
});

/** A participant-sheet preview as the server answers it (only the fields the decisions read). */
const sheet: Pick<
  DatasetPreview,
  "id" | "kind" | "layout" | "columns" | "identifierColumns" | "problems"
> = {
  id: "preview-1",
  kind: "participants",
  columns: [
    column("participant_id", "id", "id"),
    column("age", "number", "variable"),
    column("group", "category", "variable"),
    column("name", "category", "variable"),
    column("phone", "category", "variable"),
  ],
  identifierColumns: [
    { column: "name", kind: "name", reason: "the column name suggests personal names" },
    { column: "phone", kind: "phone", reason: "the column name suggests phone numbers" },
  ],
  problems: [
    {
      file: "p.tsv",
      row: 5,
      column: "age",
      code: "not_a_number",
      message: 'p.tsv row 5, column age: "4O" is not a number',
    },
    {
      file: "p.tsv",
      row: 9,
      column: "name",
      code: "not_a_number",
      message: 'p.tsv row 9, column name: "x" is not a number',
    },
    {
      file: "p.tsv",
      row: 7,
      column: "participant_id",
      code: "duplicate_participant",
      message: "p.tsv row 7, column participant_id: appears again",
    },
  ],
};

const wideBrain: Pick<DatasetPreview, "kind" | "layout"> = { kind: "brain", layout: "wide" };

describe("type choices", () => {
  it("lets sheet variables be numbers or categories, never the id", () => {
    expect(typeChoices(sheet, column("age", "number", "variable"))).toEqual({
      number: "number",
      category: "category",
    }); // (product rule: sheet variables take either type)
    expect(typeChoices(sheet, column("participant_id", "id", "id"))).toBeNull(); // (product rule: the id column is fixed)
  });

  it("lets wide brain columns be a region or not used; fixes standard errors, sessions and long tables", () => {
    expect(typeChoices(wideBrain, column("L_insula", "number", "region"))).toEqual({
      number: "region",
      category: "not used",
    }); // (product rule)
    expect(typeChoices(wideBrain, column("site", "category", "ignored"))).toEqual({
      number: "region",
      category: "not used",
    }); // (product rule)
    expect(typeChoices(wideBrain, column("L_insula_se", "number", "se"))).toBeNull(); // (product rule: paired by suffix, not by type)
    expect(typeChoices(wideBrain, column("session", "category", "session"))).toBeNull(); // (product rule)
    expect(
      typeChoices({ kind: "brain", layout: "long" }, column("value", "number", "value")),
    ).toBeNull(); // (product rule: long layout is fixed)
  });
});

describe("identifier decisions", () => {
  it("names every flagged column until it is dropped or kept with a reason", () => {
    expect(undecidedIdentifiers(sheet, noDecisions)).toEqual([
      "Column name: choose to drop it or keep it with a reason.",
      "Column phone: choose to drop it or keep it with a reason.",
    ]); // (product rule: a required choice per flagged column)
    const blankReason: Decisions = {
      types: {},
      identifiers: {
        name: { decision: "drop", reason: "" },
        phone: { decision: "keep", reason: "   " },
      },
    };
    expect(undecidedIdentifiers(sheet, blankReason)).toEqual([
      "Column phone: write why it is kept.",
    ]); // (product rule: a blank reason is no reason)
    const decided: Decisions = {
      types: {},
      identifiers: {
        name: { decision: "drop", reason: "" },
        phone: { decision: "keep", reason: "site switchboard, not personal" },
      },
    };
    expect(undecidedIdentifiers(sheet, decided)).toEqual([]); // (product rule)
  });
});

describe("the confirm body", () => {
  it("sends only changed types of changeable columns, dropped columns and trimmed reasons", () => {
    const decisions: Decisions = {
      types: { age: "number", group: "number", participant_id: "category", name: "number" },
      identifiers: {
        name: { decision: "drop", reason: "" },
        phone: { decision: "keep", reason: "  site switchboard  " },
      },
    };
    expect(confirmInput(sheet, decisions)).toEqual({
      datasetId: "preview-1",
      types: { group: "number" },
      dropColumns: ["name"],
      identifierReasons: { phone: "site switchboard" },
    }); // (server contract: the confirm route's body; unchanged, fixed and dropped columns left out)
  });

  it("is the bare id when nothing was decided", () => {
    expect(confirmInput({ ...sheet, identifierColumns: [] }, noDecisions)).toEqual({
      datasetId: "preview-1",
    }); // (server contract)
  });
});

describe("open problems", () => {
  it("are resolved by typing the column as a category or dropping it, never otherwise", () => {
    expect(openProblems(sheet, noDecisions).map((p) => p.row)).toEqual([5, 9, 7]); // (nothing decided)
    const decisions: Decisions = {
      types: { age: "category" },
      identifiers: { name: { decision: "drop", reason: "" } },
    };
    expect(openProblems(sheet, decisions).map((p) => p.row)).toEqual([7]); // (product rule: a duplicate participant stays open)
  });
});

describe("brain-table columns that would be left out", () => {
  /** A wide brain-table preview with a text column the server will not leave out without a decision. */
  const brain: Pick<
    DatasetPreview,
    "id" | "kind" | "layout" | "columns" | "identifierColumns" | "problems"
  > = {
    id: "preview-2",
    kind: "brain",
    layout: "wide",
    columns: [
      column("participant_id", "id", "id"),
      column("site", "category", "ignored"),
      column("ins_r", "number", "region"),
    ],
    identifierColumns: [],
    problems: [
      {
        file: "b.csv",
        column: "site",
        code: "column_left_out",
        message:
          'b.csv column site: not a region: column site has text values (first: row 2 "north", row 3 "south"; 2 of 2 values are text); confirm leaving it out (drop it or mark it not used), or fix the file',
      },
    ],
  };

  it("each waits for a choice before Confirm, and stays an open problem until then", () => {
    expect(leftOutColumns(brain).map((c) => c.column)).toEqual(["site"]);
    expect(undecidedLeftOut(brain, noDecisions)).toEqual([
      "Column site: choose to leave it out or fix the file.",
    ]); // (product rule: nothing is left out silently)
    expect(openProblems(brain, noDecisions).map((p) => p.code)).toEqual(["column_left_out"]);
  });

  it("leaving it out drops it; marking it not used or a region sends that type, even when it equals the detection", () => {
    const leave: Decisions = { ...noDecisions, leaveOut: { site: true } };
    expect(undecidedLeftOut(brain, leave)).toEqual([]);
    expect(openProblems(brain, leave)).toEqual([]);
    expect(confirmInput(brain, leave)).toEqual({ datasetId: "preview-2", dropColumns: ["site"] }); // (server contract: a dropped column is decided)
    const notUsed: Decisions = { ...noDecisions, types: { site: "category" } };
    expect(undecidedLeftOut(brain, notUsed)).toEqual([]);
    expect(confirmInput(brain, notUsed)).toEqual({
      datasetId: "preview-2",
      types: { site: "category" },
    }); // (server contract: "not used" said explicitly)
    const region: Decisions = { ...noDecisions, types: { site: "number" } };
    expect(confirmInput(brain, region)).toEqual({
      datasetId: "preview-2",
      types: { site: "number" },
    }); // (server contract)
  });
});

describe("problems of an error answer", () => {
  it("lists an intake refusal's problems and counts those not carried", () => {
    const error = new ApiError(422, "not_a_number", "b.csv row 17, column L_insula: …", {
      problems: [
        {
          file: "b.csv",
          row: 17,
          column: "L_insula",
          code: "not_a_number",
          message: 'b.csv row 17, column L_insula: "O.42" is not a number',
        },
        {
          file: "b.csv",
          row: 18,
          column: "L_insula",
          code: "not_a_number",
          message: 'b.csv row 18, column L_insula: "—" is not a number',
        },
      ],
      problemCount: 130,
    });
    expect(problemsFrom(error)).toEqual({
      messages: [
        'b.csv row 17, column L_insula: "O.42" is not a number',
        'b.csv row 18, column L_insula: "—" is not a number',
      ],
      more: 128,
    }); // (exact arithmetic: 130 found − 2 carried)
  });

  it("lists a validation answer's fields as sentences without field paths", () => {
    const error = new ApiError(400, "validation_failed", "body.kind: …", [
      { field: "body.kind", message: 'must be "brain" or "participants"' },
    ]);
    expect(problemsFrom(error)).toEqual({
      messages: ['The kind must be "brain" or "participants".'],
      more: 0,
    }); // (server contract: the error envelope)
  });

  it("is null when the answer carries no list", () => {
    expect(problemsFrom(new ApiError(410, "gone", "This upload's preview expired."))).toBeNull(); // (server contract)
    expect(problemsFrom(new Error("network"))).toBeNull(); // (not an API answer)
  });
});

describe("upload options", () => {
  it("sends only the options that apply to the kind and were set", () => {
    expect(
      uploadOptions({
        kind: "participants",
        idColumn: " subject ",
        seSuffix: "_se",
        layout: "long",
        sessionColumn: "visit",
      }),
    ).toEqual({ idColumn: "subject" }); // (server contract: brain options are not sent with a sheet)
    expect(
      uploadOptions({
        kind: "brain",
        idColumn: "",
        seSuffix: "_stderr",
        layout: "detect",
        sessionColumn: "none",
      }),
    ).toEqual({ seSuffix: "_stderr", sessionColumn: "none" }); // (server contract: "none" means no session column)
    expect(
      uploadOptions({
        kind: "brain",
        idColumn: "",
        seSuffix: "",
        layout: "wide",
        sessionColumn: "",
      }),
    ).toEqual({ layout: "wide" }); // (server contract: empty fields use the defaults)
  });
});
