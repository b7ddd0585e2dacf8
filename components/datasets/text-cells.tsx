/**
 * Text cells for the Data screen's tables: each value printed as the data
 * table prints it (formatCell: "n/a" for missing, significant digits for
 * numbers) inside a styled Text — numbers in tabular figures, the pinned id
 * column in semibold. The data table renders a function `cell` as a
 * component, so a cell function that returns a bare string becomes a text
 * node outside any Text and loses the table's font; returning an element
 * keeps it. Columns that bring their own `cell` are left as they are.
 */
import type { ColumnDef } from "@tanstack/react-table";
import { StyleSheet, Text } from "react-native";
import { formatCell } from "../tables/cell-values";
import { fonts, palette, type } from "../theme";

export function withTextCells<T>(
  columns: readonly ColumnDef<T, unknown>[],
): ColumnDef<T, unknown>[] {
  return columns.map((column, index) => {
    if (column.cell !== undefined) return column;
    const meta = column.meta ?? {};
    return {
      ...column,
      cell: (ctx) => (
        <Text
          numberOfLines={1}
          style={[
            styles.text,
            meta.numeric ? styles.number : null,
            index === 0 ? styles.pinned : null,
          ]}
        >
          {formatCell(ctx.getValue(), meta)}
        </Text>
      ),
    };
  });
}

const styles = StyleSheet.create({
  text: { fontSize: type.small, fontFamily: fonts.regular, color: palette.ink },
  number: { fontFamily: fonts.mono, fontVariant: ["tabular-nums"], textAlign: "right" },
  pinned: { fontFamily: fonts.semibold },
});
