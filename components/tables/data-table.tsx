/**
 * The one data table of the app (roster, region table, participant
 * diagnostics): a TanStack Table with sortable columns (press a header;
 * `aria-sort` on web), an optional search box over every column, optional
 * per-column filters (text contains; numbers accept "> 0.5", "1..3", "n/a"),
 * the first (id) column pinned while the others scroll sideways on a phone,
 * paging for thousands of rows with a page-size choice and "rows 1–50 of
 * 2,000", numbers right-aligned in tabular figures, a row press callback and
 * an empty state.
 *
 * Missing values (null, undefined, NaN) print as "n/a" and sort last in
 * both directions. Columns describe themselves through `meta`: `numeric`,
 * `digits` or `decimals` for number formatting, `width` in px.
 *
 * With `server`, the rows are paged, sorted and searched by the API
 * instead (a region's participant diagnostics): `data` is the page shown,
 * and the table reports the page, sort and search the person chose.
 */
import {
  type Cell,
  type ColumnDef,
  type ColumnFiltersState,
  type ColumnMeta,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getPaginationRowModel,
  getSortedRowModel,
  type Header,
  type PaginationState,
  type Row,
  type RowData,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import { type ReactNode, useMemo, useState } from "react";
import { Pressable, ScrollView, StyleSheet, Text, TextInput, View } from "react-native";
import { fonts, palette, radius, space, table, type } from "../theme";
import { Button, Empty, Txt } from "../ui";
import { formatCount } from "../charts/number-format";
import { formatCell } from "./cell-values";
import { parseNumericFilter } from "./column-filter";
import { pageSizeOptions, pageWindow } from "./paging";
import { type AnyColumn, globalMatch, prepareColumns } from "./table-columns";
import { pinnedCellStyle, sortAttributes } from "./table-platform";

export interface DataTableProps<T extends RowData> {
  /** Accessible name of the table, e.g. "Roster". */
  label: string;
  data: readonly T[];
  /**
   * Column definitions (createColumnHelper or plain objects). The first
   * column is the pinned id column. Values are read with `accessorKey` or
   * `accessorFn`.
   */
  // biome-ignore lint/suspicious/noExplicitAny: TanStack's column value type varies per column; its docs type column arrays this way
  columns: readonly ColumnDef<T, any>[];
  /** Stable id of a row (participant id, region name). */
  getRowId: (row: T) => string;
  /** Show a search box that filters rows on every column. */
  searchable?: boolean;
  /** Show a filter box under each column header. */
  filterable?: boolean;
  onRowPress?: (row: T) => void;
  /** Highlights this row (by `getRowId`). */
  selectedRowId?: string | null;
  initialSorting?: SortingState;
  /** One of 25, 50, 100, 250 (default 50). */
  initialPageSize?: number;
  /** Shown when `data` is empty. */
  emptyTitle?: string;
  emptyMessage?: string;
  testID?: string;
  /** Rows paged, sorted and searched by the API: `data` is the current page of `rowCount` matching rows. */
  server?: ServerRows;
}

export interface ServerRows {
  rowCount: number;
  pagination: PaginationState;
  onPaginationChange: (next: PaginationState) => void;
  sorting: SortingState;
  onSortingChange: (next: SortingState) => void;
  search: string;
  onSearchChange: (text: string) => void;
  /** Placeholder of the search box (what the API searches). */
  searchPlaceholder: string;
}

/**
 * A cell's content. Cell functions are called directly so that plain text
 * they return is wrapped in the table's own text style (flexRender would
 * mount them as components and the text would reach the page unstyled).
 */
function renderCell<T>(cell: Cell<T, unknown>): ReactNode {
  const def = cell.column.columnDef.cell;
  return typeof def === "function"
    ? (def(cell.getContext()) as ReactNode)
    : (flexRender(def, cell.getContext()) as ReactNode);
}

function asNode(rendered: ReactNode, numeric: boolean | undefined, emphasis = false): ReactNode {
  if (typeof rendered === "string" || typeof rendered === "number") {
    return (
      <Text
        numberOfLines={1}
        style={[
          styles.cellText,
          numeric ? styles.numberText : null,
          emphasis ? styles.emphasis : null,
        ]}
      >
        {rendered}
      </Text>
    );
  }
  return rendered;
}

function headerWords<T>(header: Header<T, unknown>): string {
  const def = header.column.columnDef;
  if (def.meta?.label) return def.meta.label;
  return typeof def.header === "string" ? def.header : header.column.id;
}

export function DataTable<T extends RowData>(props: DataTableProps<T>) {
  const columns = useMemo(
    () => prepareColumns(props.columns as readonly AnyColumn<T>[]),
    [props.columns],
  );
  const metaById = useMemo(() => {
    const byId = new Map<string, ColumnMeta<T, unknown>>();
    for (const c of columns as AnyColumn<T>[]) if (c.id) byId.set(c.id, c.meta ?? {});
    return byId;
  }, [columns]);
  const [sorting, setSorting] = useState<SortingState>(props.initialSorting ?? []);
  const [globalFilter, setGlobalFilter] = useState("");
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [pagination, setPagination] = useState<PaginationState>({
    pageIndex: 0,
    pageSize: pageSizeOptions.includes(props.initialPageSize as (typeof pageSizeOptions)[number])
      ? (props.initialPageSize as number)
      : 50,
  });

  const server = props.server;
  const tableModel = useReactTable<T>({
    data: props.data as T[],
    columns,
    state: server
      ? { sorting: server.sorting, pagination: server.pagination }
      : { sorting, globalFilter, columnFilters, pagination },
    onSortingChange: (update) =>
      server
        ? server.onSortingChange(typeof update === "function" ? update(server.sorting) : update)
        : setSorting(update),
    onGlobalFilterChange: setGlobalFilter,
    onColumnFiltersChange: setColumnFilters,
    onPaginationChange: (update) =>
      server
        ? server.onPaginationChange(
            typeof update === "function" ? update(server.pagination) : update,
          )
        : setPagination(update),
    manualPagination: server !== undefined,
    manualSorting: server !== undefined,
    manualFiltering: server !== undefined,
    rowCount: server?.rowCount,
    getRowId: (row) => props.getRowId(row),
    defaultColumn: {
      cell: (ctx) => formatCell(ctx.getValue(), ctx.column.columnDef.meta ?? {}),
    },
    globalFilterFn: (row, columnId, filterValue) =>
      globalMatch(row.getValue(columnId), metaById.get(columnId), filterValue),
    getColumnCanGlobalFilter: () => true,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getPaginationRowModel: getPaginationRowModel(),
  });

  const shownPaging = server?.pagination ?? pagination;
  const matched = server ? server.rowCount : tableModel.getPrePaginationRowModel().rows.length;
  const page = pageWindow(matched, shownPaging.pageIndex, shownPaging.pageSize);
  const headers = tableModel.getHeaderGroups()[0]?.headers ?? [];
  const widthOf = (index: number, meta: { width?: number } | undefined) =>
    meta?.width ?? (index === 0 ? table.pinnedWidth : table.cellWidth);
  const filterProblems = props.filterable
    ? columnFilters.flatMap((f) => {
        const column = tableModel.getColumn(f.id);
        if (!column?.columnDef.meta?.numeric) return [];
        try {
          parseNumericFilter(String(f.value ?? ""));
          return [];
        } catch (error) {
          const header = headers.find((h) => h.column.id === f.id);
          return [`${header ? headerWords(header) : f.id}: ${(error as Error).message}`];
        }
      })
    : [];

  if (server ? server.rowCount === 0 && server.search === "" : props.data.length === 0) {
    return (
      <View testID={props.testID}>
        <Empty title={props.emptyTitle ?? "No rows yet"}>
          {props.emptyMessage ? (
            <Txt kind="small" style={styles.muted}>
              {props.emptyMessage}
            </Txt>
          ) : null}
        </Empty>
      </View>
    );
  }

  const clearAll = () => {
    setGlobalFilter("");
    setColumnFilters([]);
    server?.onSearchChange("");
  };

  return (
    <View style={styles.root} testID={props.testID}>
      {props.searchable ? (
        <TextInput
          value={server ? server.search : globalFilter}
          onChangeText={(text) => (server ? server.onSearchChange(text) : setGlobalFilter(text))}
          placeholder={server?.searchPlaceholder ?? "Search every column"}
          placeholderTextColor={palette.faint}
          accessibilityLabel={`Search ${props.label}`}
          style={styles.search}
          autoCapitalize="none"
          autoCorrect={false}
        />
      ) : null}
      {filterProblems.map((problem) => (
        <Txt key={problem} kind="small" style={styles.problem} accessibilityRole="alert">
          {problem}
        </Txt>
      ))}
      <ScrollView horizontal style={styles.scroller} contentContainerStyle={styles.scrollContent}>
        <View role="table" accessibilityLabel={props.label}>
          <View role="row" style={[styles.row, styles.headerRow]}>
            {headers.map((header, index) => (
              <HeaderCell
                key={header.id}
                header={header}
                width={widthOf(index, header.column.columnDef.meta)}
                pinned={index === 0}
                words={headerWords(header)}
              />
            ))}
          </View>
          {props.filterable ? (
            <View role="row" style={[styles.row, styles.filterRow]}>
              {headers.map((header, index) => (
                <View
                  key={header.id}
                  role="cell"
                  style={[
                    styles.cell,
                    { width: widthOf(index, header.column.columnDef.meta) },
                    styles.filterCell,
                    index === 0 ? [pinnedCellStyle, styles.pinnedFilter] : null,
                  ]}
                >
                  {header.column.getCanFilter() ? (
                    <TextInput
                      value={String(header.column.getFilterValue() ?? "")}
                      onChangeText={(text) =>
                        header.column.setFilterValue(text === "" ? undefined : text)
                      }
                      placeholder={header.column.columnDef.meta?.numeric ? "> 0, 1..3" : "contains"}
                      placeholderTextColor={palette.faint}
                      accessibilityLabel={`Filter ${headerWords(header)}`}
                      style={styles.filterInput}
                      autoCapitalize="none"
                      autoCorrect={false}
                    />
                  ) : null}
                </View>
              ))}
            </View>
          ) : null}
          {tableModel.getRowModel().rows.map((row, rowIndex) => (
            <BodyRow
              key={row.id}
              row={row}
              striped={rowIndex % 2 === 1}
              selected={row.id === props.selectedRowId}
              widthOf={widthOf}
              onPress={props.onRowPress}
            />
          ))}
        </View>
      </ScrollView>
      {matched === 0 ? (
        <Empty title="No rows match the search or filters">
          <Button label="Clear search and filters" variant="secondary" onPress={clearAll} />
        </Empty>
      ) : null}
      <View style={styles.pager}>
        <Txt
          kind="small"
          style={styles.muted}
          accessibilityRole="text"
          testID={props.testID ? `${props.testID}-range` : undefined}
        >
          {page.label}
          {!server && matched !== props.data.length
            ? ` (of ${formatCount(props.data.length)} in all)`
            : ""}
        </Txt>
        <View style={styles.pagerButtons}>
          <Button
            label="Previous"
            variant="secondary"
            disabled={page.pageIndex === 0}
            onPress={() => tableModel.previousPage()}
            accessibilityLabel="Previous page"
          />
          <Txt kind="small" style={styles.muted}>
            page {page.pageIndex + 1} of {page.pageCount}
          </Txt>
          <Button
            label="Next"
            variant="secondary"
            disabled={page.pageIndex >= page.pageCount - 1}
            onPress={() => tableModel.nextPage()}
            accessibilityLabel="Next page"
          />
        </View>
        <View style={styles.sizes} role="radiogroup" accessibilityLabel="Rows per page">
          <Txt kind="small" style={styles.muted}>
            Rows per page
          </Txt>
          {pageSizeOptions.map((size) => {
            const chosen = size === shownPaging.pageSize;
            return (
              <Pressable
                key={size}
                role="radio"
                aria-checked={chosen}
                accessibilityLabel={`${size} rows per page`}
                onPress={() =>
                  server
                    ? server.onPaginationChange({ pageIndex: 0, pageSize: size })
                    : setPagination({ pageIndex: 0, pageSize: size })
                }
                style={[styles.size, chosen ? styles.sizeChosen : null]}
              >
                <Text style={[styles.sizeText, chosen ? styles.sizeTextChosen : null]}>{size}</Text>
              </Pressable>
            );
          })}
        </View>
      </View>
    </View>
  );
}

function HeaderCell<T>(props: {
  header: Header<T, unknown>;
  width: number;
  pinned: boolean;
  words: string;
}) {
  const { header } = props;
  const column = header.column;
  const numeric = column.columnDef.meta?.numeric;
  const sorted = column.getIsSorted();
  const direction = sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : "none";
  const rendered = header.isPlaceholder
    ? null
    : flexRender(column.columnDef.header, header.getContext());
  const arrow = sorted === "asc" ? " ▲" : sorted === "desc" ? " ▼" : "";
  const content = asNode(rendered as ReactNode, false, true);
  const cellStyle = [
    styles.cell,
    styles.headerCell,
    { width: props.width },
    numeric ? styles.numericCell : null,
    props.pinned ? [pinnedCellStyle, styles.pinnedHeader] : null,
  ];
  if (!column.getCanSort()) {
    return (
      <View role="columnheader" style={cellStyle}>
        {content}
      </View>
    );
  }
  return (
    <View role="columnheader" style={cellStyle} {...sortAttributes(direction)}>
      <Pressable
        role="button"
        accessibilityLabel={`${props.words}, ${nextSortWords(column.getNextSortingOrder())}`}
        onPress={column.getToggleSortingHandler()}
        style={[styles.sortButton, numeric ? styles.sortButtonNumeric : null]}
      >
        {content}
        <Text style={styles.arrow}>{arrow}</Text>
      </Pressable>
    </View>
  );
}

function nextSortWords(next: "asc" | "desc" | false): string {
  if (next === "asc") return "sort ascending";
  if (next === "desc") return "sort descending";
  return "remove sorting";
}

function BodyRow<T>(props: {
  row: Row<T>;
  striped: boolean;
  selected: boolean;
  widthOf: (index: number, meta: { width?: number } | undefined) => number;
  onPress?: (row: T) => void;
}) {
  const { row } = props;
  const background = props.selected
    ? styles.selected
    : props.striped
      ? styles.striped
      : styles.plain;
  const cells = row.getVisibleCells().map((cell: Cell<T, unknown>, index) => {
    const meta = cell.column.columnDef.meta;
    return (
      <View
        key={cell.id}
        role={index === 0 ? "rowheader" : "cell"}
        style={[
          styles.cell,
          { width: props.widthOf(index, meta) },
          meta?.numeric ? styles.numericCell : null,
          index === 0 ? [pinnedCellStyle, background] : null,
        ]}
      >
        {asNode(renderCell(cell), meta?.numeric, index === 0)}
      </View>
    );
  });
  const onPress = props.onPress;
  if (!onPress) {
    return (
      <View role="row" style={[styles.row, background]}>
        {cells}
      </View>
    );
  }
  return (
    <Pressable
      role="row"
      aria-selected={props.selected}
      onPress={() => onPress(row.original)}
      style={({ pressed }) => [styles.row, background, pressed ? styles.pressed : null]}
    >
      {cells}
    </Pressable>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm, width: "100%" },
  search: {
    minHeight: 44,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    borderRadius: radius.md,
    paddingHorizontal: space.md,
    fontSize: type.body,
    fontFamily: fonts.regular,
    color: palette.ink,
    backgroundColor: palette.surface,
  },
  problem: { color: palette.danger },
  scroller: {
    borderWidth: 1,
    borderColor: table.border,
    borderRadius: radius.md,
    backgroundColor: palette.surface,
  },
  scrollContent: { flexGrow: 1 },
  row: {
    flexDirection: "row",
    minHeight: table.rowHeight,
    borderBottomWidth: 1,
    borderBottomColor: table.border,
  },
  headerRow: { backgroundColor: table.header, minHeight: table.headerHeight },
  filterRow: { backgroundColor: table.header },
  cell: {
    justifyContent: "center",
    paddingHorizontal: table.cellPaddingX,
    height: table.rowHeight,
  },
  headerCell: { height: table.headerHeight, paddingHorizontal: 0 },
  pinnedHeader: {
    backgroundColor: table.header,
    borderRightWidth: 1,
    borderRightColor: table.border,
  },
  pinnedFilter: {
    backgroundColor: table.header,
    borderRightWidth: 1,
    borderRightColor: table.border,
  },
  filterCell: { paddingHorizontal: space.xs },
  filterInput: {
    height: 32,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    borderRadius: radius.sm,
    paddingHorizontal: space.sm,
    fontSize: type.small,
    fontFamily: fonts.regular,
    color: palette.ink,
    backgroundColor: palette.surface,
  },
  numericCell: { alignItems: "flex-end" },
  cellText: { fontSize: type.small, fontFamily: fonts.regular, color: palette.ink },
  numberText: { fontFamily: fonts.mono, fontVariant: ["tabular-nums"], textAlign: "right" },
  emphasis: { fontFamily: fonts.semibold },
  sortButton: {
    flex: 1,
    flexDirection: "row",
    alignItems: "center",
    paddingHorizontal: table.cellPaddingX,
    minHeight: table.headerHeight,
  },
  sortButtonNumeric: { justifyContent: "flex-end" },
  arrow: { fontSize: type.caption, color: palette.inkSoft, minWidth: 14, textAlign: "right" },
  plain: { backgroundColor: palette.surface },
  striped: { backgroundColor: table.stripe },
  selected: { backgroundColor: table.selected },
  pressed: { opacity: 0.75 },
  muted: { color: palette.muted },
  pager: { gap: space.sm },
  pagerButtons: { flexDirection: "row", alignItems: "center", gap: space.md, flexWrap: "wrap" },
  sizes: { flexDirection: "row", alignItems: "center", gap: space.xs, flexWrap: "wrap" },
  size: {
    minWidth: 44,
    minHeight: 36,
    paddingHorizontal: space.sm,
    borderRadius: radius.pill,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    alignItems: "center",
    justifyContent: "center",
  },
  sizeChosen: { backgroundColor: palette.ink, borderColor: palette.ink },
  sizeText: { fontFamily: fonts.mono, fontSize: type.small, color: palette.ink },
  sizeTextChosen: { color: palette.onInk },
});
