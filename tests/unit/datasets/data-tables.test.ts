import { describe, expect, it } from "vitest";
import type { RosterRow } from "../../../hooks/use-roster";
import {
  columnWindow,
  formatBytes,
  shortHash,
  viaLabel,
} from "../../../components/datasets/dataset-format";
import {
  type CellRow,
  fileRowColumns,
  rosterColumns,
} from "../../../components/datasets/table-rows";

type Readable<T> = {
  id?: string;
  header?: unknown;
  accessorFn?: (row: T, index: number) => unknown;
  meta?: { numeric?: boolean };
};
const read = <T>(column: unknown, row: T): unknown => (column as Readable<T>).accessorFn?.(row, 0);

describe("rows of a file", () => {
  const columns = [
    { name: "session", numeric: false },
    { name: "participant_id", numeric: false },
    { name: "L_insula", numeric: true },
    { name: "L_insula_se", numeric: true },
    { name: "dACC", numeric: true },
  ];
  const row: CellRow = { row: 4, cells: ["2", "sub-02", 0.7187, 0.2035, null] };

  it("pins the id column first, then the spreadsheet row, then a window of the others in file order", () => {
    const all = fileRowColumns(columns, 1, 0, 10) as Readable<CellRow>[];
    expect(all.map((c) => c.header)).toEqual([
      "participant_id",
      "row",
      "session",
      "L_insula",
      "L_insula_se",
      "dACC",
    ]); // (product rule: id pinned first)
    expect(all.map((c) => read(c, row))).toEqual(["sub-02", 4, "2", 0.7187, 0.2035, null]); // (the cells as given)
    expect(all.map((c) => c.meta?.numeric ?? false)).toEqual([
      false,
      true,
      false,
      true,
      true,
      true,
    ]); // (column kinds as given)
    const window = fileRowColumns(columns, 1, 2, 4) as Readable<CellRow>[];
    expect(window.map((c) => c.header)).toEqual(["participant_id", "row", "L_insula_se", "dACC"]); // (others 3 and 4 of 4)
  });

  it("refuses an id column that is not there", () => {
    expect(() => fileRowColumns(columns, 5, 0, 10)).toThrow(/id column index 5/); // (input contract)
  });
});

describe("column windows", () => {
  it("shows all columns when they fit, else whole windows", () => {
    expect(columnWindow(8, 0, 30)).toEqual({ start: 0, end: 8, label: "all 8 columns" }); // (exact arithmetic)
    expect(columnWindow(800, 0, 30)).toEqual({ start: 0, end: 30, label: "columns 1–30 of 800" }); // (exact arithmetic)
    expect(columnWindow(800, 780, 30)).toEqual({
      start: 780,
      end: 800,
      label: "columns 781–800 of 800",
    }); // (exact arithmetic: 26·30 = 780, last window partial)
    expect(columnWindow(800, 9000, 30).start).toBe(780); // (clamped to the last window)
    expect(columnWindow(800, 45, 30).start).toBe(30); // (snapped to a window start)
    expect(() => columnWindow(10, 0, 0)).toThrow(/size/); // (input contract)
  });
});

describe("roster columns", () => {
  const row: RosterRow = {
    participant: "7",
    brainId: "7",
    sheetId: "sub-07",
    status: "matched",
    via: "mapping",
    sessions: ["1", "2"],
    values: { group: "control", age: 32, accuracy: null },
  };
  const columns = rosterColumns([
    { name: "group", type: "category" },
    { name: "age", type: "number" },
    { name: "accuracy", type: "number" },
    { name: "status", type: "category" },
  ]) as Readable<RosterRow>[];

  it("pins the participant, then status, how matched, both ids, sessions and the sheet's columns", () => {
    expect(columns.map((c) => c.header)).toEqual([
      "participant",
      "status",
      "matched by",
      "brain-table id",
      "sheet id",
      "sessions",
      "group",
      "age",
      "accuracy",
      "status",
    ]); // (product rule)
    expect(columns.map((c) => read(c, row))).toEqual([
      "7",
      "matched",
      "confirmed mapping",
      "7",
      "sub-07",
      "1, 2",
      "control",
      32,
      null,
      null,
    ]); // (the row as given; a sheet column named like a roster column stays apart)
    expect(new Set(columns.map((c) => c.id)).size).toBe(columns.length); // (column ids are unique)
  });

  it("leaves an unmatched row's join columns empty", () => {
    const lonely: RosterRow = {
      participant: "sub-72",
      brainId: null,
      sheetId: "sub-72",
      status: "only-in-participant-sheet",
      via: null,
      sessions: [],
      values: {},
    };
    expect(columns.slice(0, 7).map((c) => read(c, lonely))).toEqual([
      "sub-72",
      "only in sheet",
      null,
      null,
      "sub-72",
      null,
      null,
    ]); // (missing values read as missing)
    expect(viaLabel("rule")).toBe("id rule"); // (product wording)
  });

  it("leaves the sessions column out when the brain table has no sessions", () => {
    const without = rosterColumns([{ name: "age", type: "number" }], {
      sessions: false,
    }) as Readable<RosterRow>[];
    expect(without.map((c) => c.header)).toEqual([
      "participant",
      "status",
      "matched by",
      "brain-table id",
      "sheet id",
      "age",
    ]); // (product rule)
  });
});

describe("sizes and hashes", () => {
  it("prints sizes in powers of 1,000 and the first 12 hex digits of a hash", () => {
    expect(formatBytes(1)).toBe("1 byte"); // (exact)
    expect(formatBytes(812)).toBe("812 bytes"); // (exact)
    expect(formatBytes(13372)).toBe("13.4 kB"); // (exact arithmetic: 13.372 kB to 3 significant digits)
    expect(formatBytes(8_400_000)).toBe("8.40 MB"); // (exact arithmetic)
    expect(shortHash("45bd89ac82bdbc9cf954cb714235bab9c7a897a6623ca0e44038753e63b332ec")).toBe(
      "45bd89ac82bd",
    ); // (exact)
  });
});
