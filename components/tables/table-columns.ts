/**
 * Column preparation for the data table, kept free of React Native so it
 * can be tested on its own: every value is read through
 * `missingToUndefined` (so null, undefined and NaN sort last in both
 * directions), ids sort in natural order, numeric columns get the number
 * filter language and text columns a case-insensitive "contains".
 *
 * Column `meta` (declared here for every TanStack column in the app):
 * `numeric`, `digits` or `decimals`, `width`, `narrowWidth`, `wrap`, `label`.
 */
import type { ColumnDef, FilterFn, RowData, SortingFn } from "@tanstack/react-table";
import { compareCells, formatCell, missingToUndefined } from "./cell-values";
import { matchesNumericFilter, matchesTextFilter, parseNumericFilter } from "./column-filter";

declare module "@tanstack/react-table" {
  // biome-ignore lint/correctness/noUnusedVariables: the type parameters must match TanStack's declaration to merge with it
  interface ColumnMeta<TData extends RowData, TValue> {
    /** Right-aligned tabular figures, numeric filter language, default number formatting. */
    numeric?: boolean;
    /** Significant digits for the default number cell (3 when neither this nor `decimals` is set). */
    digits?: number;
    /** Fixed decimals for the default number cell. */
    decimals?: number;
    /** Column width in px (the first column defaults to the theme's pinned width). */
    width?: number;
    /** Column width in px when the table's box is narrow (a phone); `width` when not given. */
    narrowWidth?: number;
    /** The cell's text may take several lines (an interval, a long name) instead of being cut. */
    wrap?: boolean;
    /** Words for the column in accessible names when its header is not plain text. */
    label?: string;
  }
}

export type AnyColumn<T> = ColumnDef<T, unknown> & {
  accessorKey?: string;
  accessorFn?: (row: T, index: number) => unknown;
  id?: string;
};

function readPath(row: unknown, path: string): unknown {
  let value: unknown = row;
  for (const part of path.split(".")) {
    if (value === null || value === undefined) return undefined;
    value = (value as Record<string, unknown>)[part];
  }
  return value;
}

/** The column filter: numeric columns read the comparison language, other columns match text. */
function columnFilterFor<T>(numeric: boolean): FilterFn<T> {
  if (!numeric)
    return (row, columnId, filterValue) =>
      matchesTextFilter(row.getValue(columnId), String(filterValue ?? ""));
  return (row, columnId, filterValue) => {
    try {
      const parsed = parseNumericFilter(String(filterValue ?? ""));
      return parsed === null
        ? true
        : matchesNumericFilter(row.getValue<number | undefined>(columnId), parsed);
    } catch {
      // unreadable filter text: keep every row; the table shows the problem above itself
      return true;
    }
  };
}

const cellSorting: SortingFn<unknown> = (a, b, columnId) =>
  compareCells(a.getValue(columnId), b.getValue(columnId));

/**
 * Reads every value through `missingToUndefined` so missing values sort
 * last, and gives each column the table's sorting and filtering.
 */
export function prepareColumns<T>(columns: readonly AnyColumn<T>[]): ColumnDef<T, unknown>[] {
  return columns.map((column, i) => {
    const def: AnyColumn<T> = { ...column };
    if (typeof column.accessorKey === "string") {
      const key = column.accessorKey;
      def.id = column.id ?? key;
      def.accessorKey = undefined;
      def.accessorFn = (row: T) => missingToUndefined(readPath(row, key));
    } else if (typeof column.accessorFn === "function") {
      const read = column.accessorFn;
      if (!column.id && typeof column.header !== "string") {
        throw new Error(`DataTable: columns[${i}] has accessorFn but neither id nor a text header`);
      }
      def.accessorFn = (row: T, index: number) => missingToUndefined(read(row, index));
    }
    return {
      sortUndefined: "last",
      sortingFn: cellSorting as SortingFn<T>,
      filterFn: columnFilterFor<T>(column.meta?.numeric === true),
      ...def,
    } as ColumnDef<T, unknown>;
  });
}

/** The search box's test: the cell as printed contains the search text (case-insensitive). */
export function globalMatch(
  value: unknown,
  meta: { digits?: number; decimals?: number } | undefined,
  search: unknown,
): boolean {
  return matchesTextFilter(formatCell(value, meta ?? {}), String(search ?? ""));
}
