/**
 * The fit's regions: the six key columns (region, estimate, 95% CI, p,
 * adjusted p, flags) always, sized to fit a phone without scrolling
 * sideways; the other columns through the column chooser, remembered per
 * person ("region-table.columns"). Sortable by every column, region pinned,
 * long region names and intervals wrap rather than being cut.
 */
import type { ColumnDef, VisibilityState } from "@tanstack/react-table";
import { useMemo } from "react";
import { StyleSheet, View } from "react-native";
import { pText } from "./p-text";
import {
  availableOptionalColumns,
  defaultOptionalColumns,
  flagTotal,
  intervalText,
  optionalRegionColumns,
} from "./region-columns";
import { ColumnChooser } from "../tables/column-chooser";
import { DataTable } from "../tables/data-table";
import { space } from "../theme";
import { usePreference } from "../../hooks/use-preferences";
import type { RegionResult } from "../../contract/spec";

interface Row {
  region: string;
  estimate: number;
  interval: string;
  ciLow: number | null;
  p: number;
  pAdjusted: number;
  flags: number;
  /** Optional columns' values by column id. */
  more: Record<string, number | string | null>;
}

export function RegionTable(props: {
  regions: readonly RegionResult[];
  estimateLabel: string;
  selectedRegion: string | null;
  onSelect: (region: string) => void;
  /** A wide screen shows N, statistic and df until the person chooses otherwise. */
  wide: boolean;
  /** Told the regions on the page shown, in the table's order. */
  onRowsShown?: (regions: readonly string[]) => void;
  /** Open at the selected region's page and bring its row into sight (coming back from it). */
  revealSelected?: boolean;
  /** Run the table from edge to edge of its box, the controls inset by this much (a phone). */
  edgeInset?: number;
}) {
  const available = useMemo(() => availableOptionalColumns(props.regions), [props.regions]);
  const chosen = usePreference("region-table.columns", defaultOptionalColumns(props.wide));
  const data = useMemo<Row[]>(
    () =>
      props.regions.map((r) => ({
        region: r.region,
        estimate: r.estimate,
        interval: intervalText(r.ciLow, r.ciHigh),
        ciLow: r.ciLow,
        p: r.p,
        pAdjusted: r.pAdjusted,
        flags: flagTotal(r),
        more: Object.fromEntries(optionalRegionColumns.map((c) => [c.id, c.read(r)])),
      })),
    [props.regions],
  );
  const columns = useMemo<ColumnDef<Row, unknown>[]>(
    () => [
      {
        accessorKey: "region",
        header: "Region",
        meta: { width: 216, narrowWidth: 80 },
      },
      {
        accessorKey: "estimate",
        header: props.estimateLabel,
        meta: { numeric: true, digits: 3, width: 96, narrowWidth: 66 },
      },
      {
        accessorKey: "interval",
        header: "95% CI",
        // In a narrow box the interval takes two lines ("low to" and "high", or "low" and "to high").
        meta: { width: 160, narrowWidth: 74, wrap: true, numeric: true },
        cell: (c) => c.getValue() as string,
        sortingFn: (a, b) => (a.original.ciLow ?? -Infinity) - (b.original.ciLow ?? -Infinity),
      },
      {
        accessorKey: "p",
        header: "p",
        meta: { numeric: true, width: 80, narrowWidth: 60 },
        cell: (c) => pText(c.getValue() as number),
      },
      {
        accessorKey: "pAdjusted",
        header: "Adjusted p",
        meta: { numeric: true, width: 96, narrowWidth: 64 },
        cell: (c) => pText(c.getValue() as number),
      },
      {
        accessorKey: "flags",
        header: "Flags",
        meta: {
          numeric: true,
          decimals: 0,
          width: 64,
          narrowWidth: 46,
          label: "flagged participants",
        },
      },
      ...available.map<ColumnDef<Row, unknown>>((c) => ({
        id: c.id,
        accessorFn: (row: Row) => row.more[c.id],
        header: c.label,
        meta:
          c.kind === "interval"
            ? { width: 160, narrowWidth: 74, wrap: true, numeric: true }
            : {
                numeric: true,
                digits: c.digits,
                decimals: c.decimals,
                width: 80,
                narrowWidth: 64,
              },
      })),
    ],
    [props.estimateLabel, available],
  );
  const chosenKey = chosen.value.join(",");
  const shownOptional = useMemo(
    () => available.map((c) => c.id).filter((id) => chosenKey.split(",").includes(id)),
    [available, chosenKey],
  );
  const visibility = useMemo<VisibilityState>(
    () => Object.fromEntries(available.map((c) => [c.id, shownOptional.includes(c.id)])),
    [available, shownOptional],
  );
  return (
    <View style={styles.root}>
      <View style={props.edgeInset ? { marginHorizontal: props.edgeInset } : null}>
        <ColumnChooser
          tableLabel="Regions"
          columns={available}
          chosen={shownOptional}
          onChange={chosen.setValue}
          testID="region-columns"
        />
      </View>
      <DataTable
        label="Regions"
        data={data}
        columns={columns}
        getRowId={(row) => row.region}
        onRowPress={(row) => props.onSelect(row.region)}
        selectedRowId={props.selectedRegion}
        searchable={props.regions.length > 10}
        initialPageSize={25}
        columnVisibility={visibility}
        onRowsShown={props.onRowsShown}
        edgeInset={props.edgeInset}
        revealSelected={props.revealSelected}
        testID="region-table"
      />
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm },
});
