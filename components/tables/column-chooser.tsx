/**
 * A table's column chooser: a "Choose columns" button that opens a row of
 * check-chips, one per optional column, and reports the chosen ids in the
 * order the columns are offered. Every chip is a tap target of 44 px.
 */
import { useState } from "react";
import { Pressable, StyleSheet, Text, View } from "react-native";
import { fonts, palette, radius, space, type } from "../theme";
import { Txt } from "../ui";

export interface ChooserColumn {
  id: string;
  label: string;
}

export function ColumnChooser(props: {
  /** Accessible name of the table, e.g. "Regions". */
  tableLabel: string;
  columns: readonly ChooserColumn[];
  chosen: readonly string[];
  onChange: (next: string[]) => void;
  testID?: string;
}) {
  const [open, setOpen] = useState(false);
  if (props.columns.length === 0) return null;
  const chosen = new Set(props.chosen);
  const shown = props.columns.filter((c) => chosen.has(c.id)).length;
  const toggle = (id: string) =>
    props.onChange(
      props.columns.map((c) => c.id).filter((c) => (c === id ? !chosen.has(id) : chosen.has(c))),
    );
  return (
    <View style={styles.root} testID={props.testID}>
      <Pressable
        accessibilityRole="button"
        accessibilityState={{ expanded: open }}
        accessibilityLabel={`${open ? "Hide" : "Choose"} more columns of ${props.tableLabel} (${shown} of ${props.columns.length} shown)`}
        onPress={() => setOpen(!open)}
        style={({ pressed }) => [styles.toggle, pressed ? styles.pressed : null]}
        testID={props.testID ? `${props.testID}-toggle` : undefined}
      >
        <Text style={styles.toggleText}>
          Choose columns ({shown} of {props.columns.length} extra shown) {open ? "▴" : "▾"}
        </Text>
      </Pressable>
      {open ? (
        <View
          style={styles.chips}
          role="group"
          accessibilityLabel={`Columns of ${props.tableLabel}`}
        >
          {props.columns.map((column) => {
            const on = chosen.has(column.id);
            return (
              <Pressable
                key={column.id}
                role="checkbox"
                aria-checked={on}
                accessibilityLabel={column.label}
                onPress={() => toggle(column.id)}
                style={[styles.chip, on ? styles.chipOn : null]}
              >
                <Text style={[styles.chipText, on ? styles.chipTextOn : null]}>
                  {on ? "✓ " : ""}
                  {column.label}
                </Text>
              </Pressable>
            );
          })}
          <Txt kind="caption" style={styles.note}>
            Remembered for you on every device.
          </Txt>
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.xs, alignItems: "flex-start" },
  toggle: {
    minHeight: 44,
    justifyContent: "center",
    paddingHorizontal: space.md,
    borderRadius: radius.pill,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    backgroundColor: palette.surface,
  },
  toggleText: { fontFamily: fonts.semibold, fontSize: type.small, color: palette.inkSoft },
  pressed: { opacity: 0.75 },
  chips: { flexDirection: "row", flexWrap: "wrap", gap: space.xs, alignItems: "center" },
  chip: {
    minHeight: 44,
    minWidth: 44,
    justifyContent: "center",
    paddingHorizontal: space.md,
    borderRadius: radius.pill,
    borderWidth: 1,
    borderColor: palette.line,
    backgroundColor: palette.surface,
  },
  chipOn: { backgroundColor: palette.ink, borderColor: palette.ink },
  chipText: { fontFamily: fonts.semibold, fontSize: type.small, color: palette.inkSoft },
  chipTextOn: { color: palette.onInk },
  note: { color: palette.muted, width: "100%" },
});
