/**
 * The one data table of the app (roster, region table, participant
 * diagnostics): a TanStack Table with sortable columns (press a header;
 * `aria-sort` on web), an optional search box over every column, optional
 * per-column filters (text contains; numbers accept "> 0.5", "1..3", "n/a"),
 * the first (id) column pinned while the others scroll sideways, and
 * whenever the columns are wider than the table's box an edge fade and a
 * "More columns →" button that scrolls them into view. The first column
 * takes the room the others leave, so a table never stands half empty;
 * headers wrap rather than being cut, and in a narrow box (a phone) cells
 * sit closer together. Optional columns can be hidden (`columnVisibility`),
 * paging for thousands of rows with a page-size choice and "rows 1–50 of
 * 2,000", numbers right-aligned in tabular figures, a row press callback and
 * an empty state.
 *
 * Missing values (null, undefined, NaN) print as "n/a" and sort last in
 * both directions. Columns describe themselves through `meta`: `numeric`,
 * `digits` or `decimals` for number formatting, `width` in px (`narrowWidth`
 * in a narrow box), `wrap` for cells whose text may take several lines.
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
  type VisibilityState,
} from "@tanstack/react-table";
import { type ReactNode, type RefObject, useEffect, useMemo, useRef, useState } from "react";
import {
  type LayoutChangeEvent,
  type NativeScrollEvent,
  type NativeSyntheticEvent,
  Pressable,
  ScrollView,
  StyleSheet,
  Text,
  TextInput,
  View,
} from "react-native";
import { fonts, palette, radius, space, table, type } from "../theme";
import { Button, Empty, Txt } from "../ui";
import { formatCount } from "../charts/number-format";
import { formatCell } from "./cell-values";
import { parseNumericFilter } from "./column-filter";
import { pageOfRow, pageSizeOptions, pageWindow } from "./paging";
import { type AnyColumn, globalMatch, prepareColumns } from "./table-columns";
import {
  breakAnywhere,
  edgeFadeStyle,
  pinnedCellStyle,
  revealElement,
  sortAttributes,
  wrapText,
} from "./table-platform";
import { cellPadding, columnWidth, isNarrowBox, nextScrollX, overflowState } from "./table-fit";

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
  /** Columns to hide (`{ id: false }`); every column shows by default. */
  columnVisibility?: VisibilityState;
  /** Told the ids of the rows on the page shown, in their order, whenever they change. */
  onRowsShown?: (ids: readonly string[]) => void;
  /**
   * Open at the page of the selected row and bring that row into sight
   * (coming back to a table from one of its rows). Rows in the order of
   * `data`; not with `server`.
   */
  revealSelected?: boolean;
  /**
   * The table itself runs from edge to edge of its box (a phone's screen,
   * for more room) while the search box, hint and pager keep this inset (px).
   */
  edgeInset?: number;
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

function asNode(
  rendered: ReactNode,
  numeric: boolean | undefined,
  emphasis: boolean,
  wrap: boolean,
  narrow: boolean,
): ReactNode {
  if (typeof rendered === "string" || typeof rendered === "number") {
    return (
      <Text
        numberOfLines={wrap ? undefined : 1}
        style={[
          styles.cellText,
          numeric ? styles.numberText : null,
          numeric && narrow ? styles.numberNarrow : null,
          emphasis ? styles.emphasis : null,
          wrap ? wrapText : null,
          wrap && !numeric ? breakAnywhere : null,
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
  const [pagination, setPagination] = useState<PaginationState>(() => {
    const pageSize = pageSizeOptions.includes(
      props.initialPageSize as (typeof pageSizeOptions)[number],
    )
      ? (props.initialPageSize as number)
      : 50;
    return {
      pageIndex: props.revealSelected
        ? pageOfRow(
            Math.max(
              0,
              props.data.findIndex((row) => props.getRowId(row) === props.selectedRowId),
            ),
            pageSize,
          )
        : 0,
      pageSize,
    };
  });

  const selectedRef = useRef<View>(null);
  const revealed = useRef(false);
  const [boxWidth, setBoxWidth] = useState(0);
  const [contentWidth, setContentWidth] = useState(0);
  const [scrollX, setScrollX] = useState(0);
  const scroller = useRef<ScrollView>(null);
  const narrow = isNarrowBox(boxWidth);
  // Reveal the selected row once the box is measured (the columns' widths, and so the rows' heights, follow from it).
  useEffect(() => {
    if (!props.revealSelected || revealed.current || boxWidth === 0 || !selectedRef.current) return;
    revealed.current = true;
    const row = selectedRef.current;
    const timer = setTimeout(() => revealElement(row), 0);
    return () => clearTimeout(timer);
  });
  const edge = overflowState(boxWidth, contentWidth, scrollX);

  const server = props.server;
  const columnVisibility = props.columnVisibility ?? {};
  const tableModel = useReactTable<T>({
    data: props.data as T[],
    columns,
    state: server
      ? { sorting: server.sorting, pagination: server.pagination, columnVisibility }
      : { sorting, globalFilter, columnFilters, pagination, columnVisibility },
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
  const widthOf = (index: number, meta: { width?: number; narrowWidth?: number } | undefined) =>
    columnWidth(index, meta, narrow);
  const shownRows = tableModel.getRowModel().rows;
  const shownIds = shownRows.map((r) => r.id).join("\u0000");
  const onRowsShown = props.onRowsShown;
  useEffect(() => {
    onRowsShown?.(shownIds === "" ? [] : shownIds.split("\u0000"));
  }, [shownIds, onRowsShown]);
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

  const inset = props.edgeInset ? { marginHorizontal: props.edgeInset } : null;
  return (
    <View style={styles.root} testID={props.testID}>
      {props.searchable ? (
        <TextInput
          value={server ? server.search : globalFilter}
          onChangeText={(text) => (server ? server.onSearchChange(text) : setGlobalFilter(text))}
          placeholder={server?.searchPlaceholder ?? "Search every column"}
          placeholderTextColor={palette.faint}
          accessibilityLabel={`Search ${props.label}`}
          style={[styles.search, inset]}
          autoCapitalize="none"
          autoCorrect={false}
        />
      ) : null}
      {filterProblems.map((problem) => (
        <Txt key={problem} kind="small" style={styles.problem} accessibilityRole="alert">
          {problem}
        </Txt>
      ))}
      {edge.overflow ? (
        <Pressable
          accessibilityRole="button"
          accessibilityLabel={
            edge.atEnd
              ? `Back to the first columns of ${props.label}`
              : `More columns of ${props.label}: scroll right`
          }
          onPress={() =>
            scroller.current?.scrollTo({
              x: nextScrollX(boxWidth, contentWidth, scrollX),
              animated: true,
            })
          }
          style={({ pressed }) => [styles.moreColumns, inset, pressed ? styles.pressed : null]}
          testID={props.testID ? `${props.testID}-more-columns` : undefined}
        >
          <Text style={styles.moreColumnsText}>
            {edge.atEnd ? "← First columns" : "More columns →"}
          </Text>
        </Pressable>
      ) : null}
      <View style={styles.frame}>
        <ScrollView
          ref={scroller}
          horizontal
          style={[styles.scroller, props.edgeInset ? styles.edgeToEdge : null]}
          contentContainerStyle={styles.scrollContent}
          onLayout={(event: LayoutChangeEvent) => setBoxWidth(event.nativeEvent.layout.width)}
          onContentSizeChange={(width: number) => setContentWidth(width)}
          onScroll={(event: NativeSyntheticEvent<NativeScrollEvent>) =>
            setScrollX(event.nativeEvent.contentOffset.x)
          }
          scrollEventThrottle={32}
          testID={props.testID ? `${props.testID}-scroller` : undefined}
        >
          <View role="table" accessibilityLabel={props.label} style={styles.table}>
            <View role="row" style={[styles.row, styles.headerRow]}>
              {headers.map((header, index) => (
                <HeaderCell
                  key={header.id}
                  header={header}
                  width={widthOf(index, header.column.columnDef.meta)}
                  pinned={index === 0}
                  words={headerWords(header)}
                  narrow={narrow}
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
                      index === 0 ? styles.grow : null,
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
                        placeholder={
                          header.column.columnDef.meta?.numeric ? "> 0, 1..3" : "contains"
                        }
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
            {shownRows.map((row, rowIndex) => (
              <BodyRow
                key={row.id}
                row={row}
                striped={rowIndex % 2 === 1}
                selected={row.id === props.selectedRowId}
                rowRef={row.id === props.selectedRowId ? selectedRef : undefined}
                widthOf={widthOf}
                narrow={narrow}
                onPress={props.onRowPress}
              />
            ))}
          </View>
        </ScrollView>
        {edge.overflow && !edge.atEnd ? (
          <View pointerEvents="none" style={[styles.fade, edgeFadeStyle]} />
        ) : null}
      </View>
      {matched === 0 ? (
        <Empty title="No rows match the search or filters">
          <Button label="Clear search and filters" variant="secondary" onPress={clearAll} />
        </Empty>
      ) : null}
      <View style={[styles.pager, inset]}>
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
  narrow: boolean;
}) {
  const { header } = props;
  const column = header.column;
  const numeric = column.columnDef.meta?.numeric;
  const sorted = column.getIsSorted();
  const direction = sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : "none";
  const rendered = header.isPlaceholder
    ? null
    : flexRender(column.columnDef.header, header.getContext());
  const arrow = sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "";
  // Headers wrap onto a second line rather than being cut.
  const content =
    typeof rendered === "string" || typeof rendered === "number" ? (
      <Text
        style={[
          styles.cellText,
          styles.emphasis,
          styles.headerText,
          props.narrow ? styles.headerTextNarrow : null,
          numeric ? styles.headerTextNumeric : null,
        ]}
      >
        {rendered}
      </Text>
    ) : (
      (rendered as ReactNode)
    );
  const padding = { paddingHorizontal: cellPadding(props.narrow) };
  const cellStyle = [
    styles.cell,
    styles.headerCell,
    { width: props.width },
    props.pinned ? styles.grow : null,
    numeric ? styles.numericCell : null,
    props.pinned ? [pinnedCellStyle, styles.pinnedHeader] : null,
  ];
  if (!column.getCanSort()) {
    return (
      <View role="columnheader" style={[cellStyle, padding]}>
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
        style={[styles.sortButton, padding, numeric ? styles.sortButtonNumeric : null]}
      >
        {content}
        {arrow ? <Text style={styles.arrow}>{arrow}</Text> : null}
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
  widthOf: (index: number, meta: { width?: number; narrowWidth?: number } | undefined) => number;
  narrow: boolean;
  rowRef?: RefObject<View | null>;
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
          { width: props.widthOf(index, meta), paddingHorizontal: cellPadding(props.narrow) },
          meta?.numeric ? styles.numericCell : null,
          index === 0 ? [styles.grow, pinnedCellStyle, background] : null,
        ]}
      >
        {asNode(
          renderCell(cell),
          meta?.numeric,
          index === 0,
          index === 0 || meta?.wrap === true,
          props.narrow,
        )}
      </View>
    );
  });
  const onPress = props.onPress;
  if (!onPress) {
    return (
      <View role="row" style={[styles.row, background]} ref={props.rowRef}>
        {cells}
      </View>
    );
  }
  return (
    <Pressable
      ref={props.rowRef}
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
  frame: { position: "relative" },
  fade: { position: "absolute", top: 1, bottom: 1, right: 1, width: 40 },
  moreColumns: {
    alignSelf: "flex-end",
    minHeight: 44,
    justifyContent: "center",
    paddingHorizontal: space.sm,
  },
  moreColumnsText: { fontFamily: fonts.semibold, fontSize: type.small, color: palette.focus },
  table: { flexGrow: 1 },
  grow: { flexGrow: 1 },
  scroller: {
    borderWidth: 1,
    borderColor: table.border,
    borderRadius: radius.md,
    backgroundColor: palette.surface,
  },
  scrollContent: { flexGrow: 1 },
  edgeToEdge: { borderRadius: 0, borderLeftWidth: 0, borderRightWidth: 0 },
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
    paddingVertical: space.xs,
    minHeight: table.rowHeight,
  },
  headerCell: { minHeight: table.headerHeight, paddingHorizontal: 0, paddingVertical: 0 },
  headerText: { flexShrink: 1 },
  headerTextNarrow: { fontSize: type.caption },
  headerTextNumeric: { textAlign: "right" },
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
    minHeight: 44,
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
  numberNarrow: { fontSize: type.caption },
  emphasis: { fontFamily: fonts.semibold },
  sortButton: {
    flex: 1,
    flexDirection: "row",
    alignItems: "center",
    gap: 2,
    paddingVertical: space.xs,
    minHeight: table.headerHeight,
  },
  sortButtonNumeric: { justifyContent: "flex-end" },
  arrow: { fontSize: type.caption, color: palette.inkSoft },
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
    minHeight: 44,
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
