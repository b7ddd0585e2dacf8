/**
 * A region's participant diagnostics, a page at a time from the API
 * (GET /api/fits/:fitId/regions/:region/participants): the data table in
 * its server mode, so paging, sorting by a column and searching ids ask the
 * server for the rows instead of loading every participant at once. The
 * squared Mahalanobis distance is not a column: it is leverage rescaled,
 * (n − 1)(h − 1/n), so it adds nothing the leverage column does not show.
 */
import { useMemo, useState } from "react";
import type { ColumnDef, PaginationState, SortingState } from "@tanstack/react-table";
import { DataTable } from "../tables/data-table";
import { Card, Failure, Heading, Pending, Txt } from "../ui";
import {
  useRegionParticipants,
  type ParticipantOrder,
  type RegionDetailPoint,
} from "../../hooks/use-fits";

type Row = RegionDetailPoint & { flagText: string };

/** The API's order for a column of this table. */
const orderOfColumn: Record<string, ParticipantOrder> = {
  participant: "participant",
  flagText: "flags",
  y: "y",
  fitted: "fitted",
  leverage: "leverage",
  studentizedResidual: "studentizedResidual",
  cooksDistance: "cooksDistance",
  dffits: "dffits",
};

export function ParticipantDiagnosticsTable(props: {
  fitId: string;
  region: string;
  selected: string | null;
  onSelect: (id: string) => void;
}) {
  const [pagination, setPagination] = useState<PaginationState>({ pageIndex: 0, pageSize: 50 });
  const [sorting, setSorting] = useState<SortingState>([]);
  const [search, setSearch] = useState("");
  const order = sorting[0];
  const page = useRegionParticipants(
    props.fitId,
    props.region,
    {
      offset: pagination.pageIndex * pagination.pageSize,
      limit: pagination.pageSize,
      sort: order ? (orderOfColumn[order.id] ?? "position") : "position",
      direction: order?.desc ? "desc" : "asc",
      search: search.trim(),
    },
    true,
  );
  const rows = useMemo<Row[]>(
    () => (page.data?.rows ?? []).map((p) => ({ ...p, flagText: p.flags.join(", ") })),
    [page.data],
  );
  const columns = useMemo<ColumnDef<Row, unknown>[]>(
    () => [
      { accessorKey: "participant", header: "Participant" },
      { accessorKey: "flagText", header: "Flags", meta: { width: 120 } },
      { accessorKey: "y", header: "Contrast", meta: { numeric: true, digits: 3 } },
      { accessorKey: "fitted", header: "Fitted", meta: { numeric: true, digits: 3 } },
      { accessorKey: "leverage", header: "Leverage", meta: { numeric: true, digits: 3 } },
      {
        accessorKey: "studentizedResidual",
        header: "Studentized residual",
        meta: { numeric: true, digits: 3, width: 120 },
      },
      {
        accessorKey: "cooksDistance",
        header: "Cook's distance",
        meta: { numeric: true, digits: 3, width: 110 },
      },
      { accessorKey: "dffits", header: "DFFITS", meta: { numeric: true, digits: 3 } },
    ],
    [],
  );
  const firstPage = (next: PaginationState) => setPagination({ ...next, pageIndex: 0 });
  return (
    <Card>
      <Heading level={3}>Participant diagnostics</Heading>
      {page.isPending ? (
        <Pending label="Loading participant diagnostics…" />
      ) : page.isError ? (
        <Failure error={page.error} onRetry={() => page.refetch()} />
      ) : (
        <DataTable
          label="Participant diagnostics"
          data={rows}
          columns={columns}
          getRowId={(r) => r.participant}
          onRowPress={(r) => props.onSelect(r.participant)}
          selectedRowId={props.selected}
          searchable
          server={{
            rowCount: page.data.total,
            pagination,
            onPaginationChange: setPagination,
            sorting,
            onSortingChange: (next) => {
              setSorting(next.slice(0, 1));
              firstPage(pagination);
            },
            search,
            onSearchChange: (text) => {
              setSearch(text);
              firstPage(pagination);
            },
            searchPlaceholder: "Search participant ids",
          }}
          testID="diagnostics-table"
        />
      )}
      <Txt kind="caption">
        Flags: outlier — externally studentized residual beyond the Bonferroni 5% cut-off (Cook &
        Weisberg 1982); leverage — hat value above 2p/n (Hoaglin & Welsch 1978); influence — Cook's
        distance above 4/n (Bollen & Jackman 1990).
      </Txt>
    </Card>
  );
}
