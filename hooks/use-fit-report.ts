/**
 * A finished fit's report bundle: its download address
 * (GET /api/fits/:fitId/report.zip) and, for a sealed fit, the bundle's
 * SHA-256 (GET /api/fits/:fitId/report.sha256), asked for once per fit and
 * kept: a sealed fit's bundle does not change.
 */
import { queryOptions, useQuery } from "@tanstack/react-query";
import { apiBase, apiFetch } from "./api";
import { fitKeys } from "./use-fits";

/** What GET /api/fits/:fitId/report.sha256 answers. */
export interface ReportHash {
  sha256: string;
  bytes: number;
}

export const fitReportKeys = {
  sha256: (fitId: string) => [...fitKeys.all, "report-sha256", fitId] as const,
};

/** Same-origin address of a fit's report bundle. */
export function reportZipHref(fitId: string): string {
  return `${apiBase}/api/fits/${encodeURIComponent(fitId)}/report.zip`;
}

export const reportHashQueryOptions = (fitId: string) =>
  queryOptions({
    queryKey: fitReportKeys.sha256(fitId),
    queryFn: () => apiFetch<ReportHash>(`/api/fits/${encodeURIComponent(fitId)}/report.sha256`),
    staleTime: Number.POSITIVE_INFINITY,
  });

/** The bundle's SHA-256 (`enabled`: only for a sealed fit). */
export function useReportHash(fitId: string, enabled: boolean) {
  return useQuery({ ...reportHashQueryOptions(fitId), enabled });
}
