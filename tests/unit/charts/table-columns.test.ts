import {
  type ColumnFiltersState,
  createTable,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  type SortingState,
  type TableOptionsResolved,
} from "@tanstack/react-table";
import { describe, expect, it } from "vitest";
import {
  type AnyColumn,
  globalMatch,
  prepareColumns,
} from "../../../components/tables/table-columns";

interface Row {
  id: string;
  age: number | null;
  group: string | null;
  scores: { accuracy: number };
}

const data: Row[] = [
  { id: "sub-10", age: 31, group: "patient", scores: { accuracy: 0.9 } },
  { id: "sub-2", age: null, group: "control", scores: { accuracy: Number.NaN } },
  { id: "sub-1", age: 24, group: null, scores: { accuracy: 0.7 } },
  { id: "sub-3", age: 52, group: "Patient", scores: { accuracy: 0.8 } },
];

const columns: AnyColumn<Row>[] = [
  { accessorKey: "id", header: "Participant" },
  { accessorKey: "age", header: "Age", meta: { numeric: true } },
  { accessorKey: "group", header: "Group" },
  { accessorKey: "scores.accuracy", id: "accuracy", header: "Accuracy", meta: { numeric: true } },
  {
    accessorFn: (r) => (r.age === null ? null : r.age * 12),
    id: "months",
    header: "Age in months",
    meta: { numeric: true },
  },
];

/** A headless TanStack table over `data` with the prepared columns and the given state. */
function ids(state: { sorting?: SortingState; columnFilters?: ColumnFiltersState }): string[] {
  const options: TableOptionsResolved<Row> = {
    data,
    columns: prepareColumns(columns),
    getRowId: (r) => r.id,
    state: {},
    onStateChange: () => {},
    renderFallbackValue: null,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  };
  const table = createTable(options);
  table.setOptions((prev) => ({ ...prev, state: { ...table.initialState, ...state } }));
  return table.getRowModel().rows.map((r) => r.id);
}

describe("data table columns", () => {
  it("sorts ids in natural order", () => {
    expect(ids({ sorting: [{ id: "id", desc: false }] })).toEqual([
      "sub-1",
      "sub-2",
      "sub-3",
      "sub-10",
    ]); // (exact enumeration: natural order)
  });

  it("puts missing values last in both directions", () => {
    expect(ids({ sorting: [{ id: "age", desc: false }] })).toEqual([
      "sub-1",
      "sub-10",
      "sub-3",
      "sub-2",
    ]); // (exact enumeration: 24, 31, 52, then n/a)
    expect(ids({ sorting: [{ id: "age", desc: true }] })).toEqual([
      "sub-3",
      "sub-10",
      "sub-1",
      "sub-2",
    ]); // (exact enumeration: 52, 31, 24, then n/a)
    expect(ids({ sorting: [{ id: "accuracy", desc: true }] })).toEqual([
      "sub-10",
      "sub-3",
      "sub-1",
      "sub-2",
    ]); // (exact enumeration: NaN counts as missing)
    expect(ids({ sorting: [{ id: "months", desc: false }] })).toEqual([
      "sub-1",
      "sub-10",
      "sub-3",
      "sub-2",
    ]); // (exact enumeration: accessorFn values, null last)
    expect(ids({ sorting: [{ id: "group", desc: true }] })).toEqual([
      "sub-10",
      "sub-3",
      "sub-2",
      "sub-1",
    ]); // (exact enumeration: "patient" and "Patient" tie, kept in input order; null last)
  });

  it("filters numeric columns with the comparison language and text columns by contains", () => {
    expect(ids({ columnFilters: [{ id: "age", value: "> 30" }] })).toEqual(["sub-10", "sub-3"]); // (exact enumeration: 31 and 52)
    expect(ids({ columnFilters: [{ id: "age", value: "20..31" }] })).toEqual(["sub-10", "sub-1"]); // (exact enumeration: inclusive range)
    expect(ids({ columnFilters: [{ id: "age", value: "n/a" }] })).toEqual(["sub-2"]); // (filter language: missing only)
    expect(ids({ columnFilters: [{ id: "accuracy", value: ">= 0.8" }] })).toEqual([
      "sub-10",
      "sub-3",
    ]); // (exact enumeration: nested accessor key)
    expect(ids({ columnFilters: [{ id: "group", value: "PAT" }] })).toEqual(["sub-10", "sub-3"]); // (exact enumeration: case-insensitive)
    expect(ids({ columnFilters: [{ id: "age", value: "lots" }] })).toEqual([
      "sub-10",
      "sub-2",
      "sub-1",
      "sub-3",
    ]); // (filter language: unreadable text keeps every row)
  });

  it("searches the cells as printed", () => {
    expect(globalMatch(0.123456, { digits: 3 }, "0.123")).toBe(true); // (exact arithmetic: printed with 3 significant digits)
    expect(globalMatch(0.123456, { digits: 3 }, "0.1234")).toBe(false); // (exact arithmetic: "0.1234" is not in "0.123")
    expect(globalMatch(undefined, undefined, "n/a")).toBe(true); // (BIDS participants-file convention for missing)
  });

  it("refuses an accessorFn column without an id or a text header", () => {
    // TanStack's types already demand an id here; column lists built without types (e.g. from JSON) reach this check
    const untyped = {
      accessorFn: (r: Row) => r.age,
      header: () => null,
    } as unknown as AnyColumn<Row>;
    expect(() => prepareColumns<Row>([untyped])).toThrow("columns[0]"); // (input contract)
  });
});
