import { queryOptions, useQuery } from "@tanstack/react-query";
import type { ActivityEvent } from "../contract/views/activity";
import { apiFetch } from "./api";

export type { ActivityEvent };

export interface ActivityFilter {
  person?: string;
  kind?: string;
}

export const activityKeys = {
  all: (studyId: string) => ["activity", studyId] as const,
  list: (studyId: string, filter: ActivityFilter) =>
    [...activityKeys.all(studyId), filter.person ?? "", filter.kind ?? ""] as const,
};

export const activityQueryOptions = (studyId: string, filter: ActivityFilter) =>
  queryOptions({
    queryKey: activityKeys.list(studyId, filter),
    queryFn: () => {
      const query = new URLSearchParams();
      if (filter.person) query.set("person", filter.person);
      if (filter.kind) query.set("kind", filter.kind);
      const suffix = query.toString() ? `?${query}` : "";
      return apiFetch<ActivityEvent[]>(
        `/api/studies/${encodeURIComponent(studyId)}/activity${suffix}`,
      );
    },
  });

export function useActivity(studyId: string, filter: ActivityFilter) {
  return useQuery(activityQueryOptions(studyId, filter));
}
