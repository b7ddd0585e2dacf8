import { queryOptions, useQuery } from "@tanstack/react-query";
import { apiFetch } from "./api";

export type Role = "owner" | "analyst" | "reviewer" | "viewer";

export interface StudySummary {
  id: string;
  name: string;
  description?: string | null;
  role: Role;
  restricted?: boolean;
  counts: { members: number; participants: number; models: number; fits: number };
  createdAt?: string;
}

export const studyKeys = {
  all: ["studies"] as const,
  list: () => [...studyKeys.all, "list"] as const,
  detail: (studyId: string) => [...studyKeys.all, "detail", studyId] as const,
};

export const studiesQueryOptions = queryOptions({
  queryKey: studyKeys.list(),
  queryFn: () => apiFetch<StudySummary[]>("/api/studies"),
});

export function useStudies() {
  return useQuery(studiesQueryOptions);
}
