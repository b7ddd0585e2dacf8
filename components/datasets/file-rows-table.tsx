/**
 * Rows of a file in the data table: the id column pinned, the spreadsheet
 * row number, and at most 30 other columns at a time (a brain table can have
 * hundreds), with buttons to move through the columns.
 */
import { useMemo, useState } from "react";
import { StyleSheet, View } from "react-native";
import { DataTable } from "../tables/data-table";
import { palette, space } from "../theme";
import { Button, Txt } from "../ui";
import { columnWindow } from "./dataset-format";
import { type CellRow, type FileColumn, fileRowColumns } from "./table-rows";
import { withTextCells } from "./text-cells";

/** Other columns shown at once. */
export const COLUMNS_AT_ONCE = 30;

export function FileRowsTable(props: {
  label: string;
  columns: readonly FileColumn[];
  idIndex: number;
  rows: readonly CellRow[];
  initialPageSize?: number;
  testID?: string;
}) {
  const [start, setStart] = useState(0);
  const window = columnWindow(props.columns.length - 1, start, COLUMNS_AT_ONCE);
  const columns = useMemo(
    () => withTextCells(fileRowColumns(props.columns, props.idIndex, window.start, window.end)),
    [props.columns, props.idIndex, window.start, window.end],
  );
  const paged = props.columns.length - 1 > COLUMNS_AT_ONCE;
  return (
    <View style={styles.root}>
      {paged ? (
        <View style={styles.windowBar}>
          <Txt kind="small" style={styles.muted}>
            Showing {window.label} besides the id.
          </Txt>
          <View style={styles.buttons}>
            <Button
              label="Earlier columns"
              variant="secondary"
              disabled={window.start === 0}
              onPress={() => setStart(window.start - COLUMNS_AT_ONCE)}
            />
            <Button
              label="Later columns"
              variant="secondary"
              disabled={window.end >= props.columns.length - 1}
              onPress={() => setStart(window.start + COLUMNS_AT_ONCE)}
            />
          </View>
        </View>
      ) : null}
      <DataTable
        label={props.label}
        data={props.rows}
        columns={columns}
        getRowId={(r) => String(r.row)}
        searchable
        initialPageSize={props.initialPageSize ?? 25}
        testID={props.testID}
      />
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm },
  windowBar: { gap: space.xs },
  buttons: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
  muted: { color: palette.muted },
});
