import { useMemo } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import { DataTable } from "../tables/data-table";
import { formatValue } from "../charts/number-format";
import { pText } from "./p-text";
import type { RegionResult } from "../../contract/spec";

interface Row {
  region: string;
  n: number;
  estimate: number;
  interval: string;
  ciLow: number | null;
  statistic: number | null;
  df: number | null;
  p: number;
  pAdjusted: number;
  flags: number;
}

function flagTotal(r: RegionResult): number {
  const f = r.flagged as { outlier?: number; leverage?: number; influence?: number } | undefined;
  return f ? (f.outlier ?? 0) + (f.leverage ?? 0) + (f.influence ?? 0) : 0;
}

/** The fit's regions: sortable by every column, region pinned. */
export function RegionTable(props: {
  regions: readonly RegionResult[];
  estimateLabel: string;
  selectedRegion: string | null;
  onSelect: (region: string) => void;
}) {
  const data = useMemo<Row[]>(
    () =>
      props.regions.map((r) => ({
        region: r.region,
        n: r.n,
        estimate: r.estimate,
        interval:
          r.ciLow === null || r.ciHigh === null
            ? "n/a"
            : `${formatValue(r.ciLow)} to ${formatValue(r.ciHigh)}`,
        ciLow: r.ciLow,
        statistic: r.statistic,
        df: r.df,
        p: r.p,
        pAdjusted: r.pAdjusted,
        flags: flagTotal(r),
      })),
    [props.regions],
  );
  const columns = useMemo<ColumnDef<Row, unknown>[]>(
    () => [
      { accessorKey: "region", header: "Region" },
      { accessorKey: "n", header: "N", meta: { numeric: true, decimals: 0, width: 56 } },
      {
        accessorKey: "estimate",
        header: props.estimateLabel,
        meta: { numeric: true, digits: 3, width: 96 },
      },
      {
        accessorKey: "interval",
        header: "95% CI",
        meta: { width: 150 },
        sortingFn: (a, b) => (a.original.ciLow ?? -Infinity) - (b.original.ciLow ?? -Infinity),
      },
      {
        accessorKey: "statistic",
        header: "Statistic",
        meta: { numeric: true, digits: 3, width: 88 },
      },
      { accessorKey: "df", header: "df", meta: { numeric: true, digits: 4, width: 64 } },
      {
        accessorKey: "p",
        header: "p",
        meta: { numeric: true, width: 84 },
        cell: (c) => pText(c.getValue() as number),
      },
      {
        accessorKey: "pAdjusted",
        header: "Adjusted p",
        meta: { numeric: true, width: 104 },
        cell: (c) => pText(c.getValue() as number),
      },
      { accessorKey: "flags", header: "Flags", meta: { numeric: true, decimals: 0, width: 64 } },
    ],
    [props.estimateLabel],
  );
  return (
    <DataTable
      label="Regions"
      data={data}
      columns={columns}
      getRowId={(row) => row.region}
      onRowPress={(row) => props.onSelect(row.region)}
      selectedRowId={props.selectedRegion}
      searchable
      initialPageSize={50}
      testID="region-table"
    />
  );
}
