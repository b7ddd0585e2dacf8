/**
 * The roster of a study: the join report of its current brain table and
 * participant sheet, every roster row, confirming near-miss mappings, and
 * the CSV export's address.
 *
 * Rows are fetched whole (pages of 1,000 from the server, one after the
 * other) and sorted, filtered, searched and paged in the browser by the data
 * table: a roster holds one row per participant, so even a study of several
 * thousand participants is a few requests and well under a few megabytes,
 * and sorting or searching then needs no round trip. Roles that may not read
 * participant-level rows get the report's counts and `rows: null`.
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiBase, apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import type {
  MappingView,
  NearMiss,
  RosterDuplicate,
  RosterPage,
  RosterReport,
  RosterRow,
  RosterStatus,
  VersionRef,
} from "../contract/views/roster";

// The API's own view types, shared with the server (contract/views/roster.ts).
export type {
  MappingView,
  NearMiss,
  RosterDuplicate,
  RosterReport,
  RosterRow,
  RosterStatus,
  VersionRef,
};

/** The report and every roster row (null when the caller may not see rows). */
export interface Roster {
  report: RosterReport;
  rows: RosterRow[] | null;
}

/** Rows per request (the server's largest page). */
export const ROSTER_PAGE = 1000;

export const rosterKeys = {
  all: (studyId: string) => ["roster", studyId] as const,
  full: (studyId: string) => [...rosterKeys.all(studyId), "full"] as const,
};

const base = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}/roster`;

/** Reads the report with the first page, then the remaining pages in order. */
export async function fetchWholeRoster(studyId: string, fetchPage = apiFetch): Promise<Roster> {
  const first = await fetchPage<RosterReport & { rows: RosterPage | null }>(
    `${base(studyId)}?offset=0&limit=${ROSTER_PAGE}`,
  );
  const { rows: page, ...report } = first;
  if (page === null) return { report, rows: null };
  const rows = [...page.items];
  while (rows.length < page.total) {
    const next = await fetchPage<RosterReport & { rows: RosterPage | null }>(
      `${base(studyId)}?offset=${rows.length}&limit=${ROSTER_PAGE}`,
    );
    if (next.rows === null || next.rows.items.length === 0) break;
    rows.push(...next.rows.items);
  }
  return { report, rows };
}

export const rosterQueryOptions = (studyId: string) =>
  queryOptions({ queryKey: rosterKeys.full(studyId), queryFn: () => fetchWholeRoster(studyId) });

export function useRoster(studyId: string) {
  return useQuery(rosterQueryOptions(studyId));
}

/** Records that a brain-table id and a sheet id are one participant (audited). */
export function useConfirmMappings(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (mappings: { brainId: string; sheetId: string }[]) =>
      apiFetch<RosterReport>(`${base(studyId)}/mappings`, jsonBody("POST", { mappings })),
    onSuccess: async () => {
      await Promise.all([
        client.invalidateQueries({ queryKey: rosterKeys.all(studyId) }),
        client.invalidateQueries({ queryKey: activityKeys.all(studyId) }),
      ]);
    },
  });
}

/** Address of the roster as CSV (a download; formula-like cells are neutralised by the server). */
export function rosterCsvUrl(studyId: string): string {
  return `${apiBase}/api/studies/${encodeURIComponent(studyId)}/roster.csv`;
}
