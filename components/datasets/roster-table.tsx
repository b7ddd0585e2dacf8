/**
 * The roster table: one row per participant of the join (matched, only in
 * the brain table, only in the sheet) with the id pinned, its status, how it
 * was matched, both ids, its sessions and the participant sheet's columns;
 * sortable, filterable, searchable and paged by the data table.
 */
import { useMemo } from "react";
import type { RosterReport, RosterRow } from "../../hooks/use-roster";
import { DataTable } from "../tables/data-table";
import { rosterColumns } from "./table-rows";
import { withTextCells } from "./text-cells";

export function RosterTable(props: { report: RosterReport; rows: readonly RosterRow[] }) {
  const sessions = useMemo(() => props.rows.some((r) => r.sessions.length > 0), [props.rows]);
  const columns = useMemo(
    () => withTextCells(rosterColumns(props.report.columns, { sessions })),
    [props.report.columns, sessions],
  );
  return (
    <DataTable
      label="Roster"
      data={props.rows}
      columns={columns}
      getRowId={(r) => `${r.status}:${r.brainId ?? ""}:${r.sheetId ?? ""}`}
      searchable
      filterable
      initialPageSize={25}
      emptyTitle="The roster is empty"
      emptyMessage="Upload and confirm a brain table and a participant sheet."
      testID="roster-table"
    />
  );
}
