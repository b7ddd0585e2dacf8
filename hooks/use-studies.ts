import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import type { DeletedStudy, StudyDetail, StudySummary } from "../contract/views/studies";

export type { DeletedStudy, StudySummary };
export type Role = StudySummary["role"];

export const studyKeys = {
  all: ["studies"] as const,
  list: () => [...studyKeys.all, "list"] as const,
  /** Deleted studies the person owns that can still be restored. */
  deleted: () => [...studyKeys.all, "deleted"] as const,
  detail: (studyId: string) => [...studyKeys.all, "detail", studyId] as const,
};

export const studiesQueryOptions = queryOptions({
  queryKey: studyKeys.list(),
  queryFn: () => apiFetch<StudySummary[]>("/api/studies"),
});

export const deletedStudiesQueryOptions = queryOptions({
  queryKey: studyKeys.deleted(),
  queryFn: () => apiFetch<DeletedStudy[]>("/api/studies?deleted=true"),
});

export function useStudies() {
  return useQuery(studiesQueryOptions);
}

/** Recently deleted studies the person owns, with the date until which each can be restored. */
export function useDeletedStudies() {
  return useQuery(deletedStudiesQueryOptions);
}

/** Restores a deleted study (Owner, within the restore window). Everything cached may have answered "not found" meanwhile, so all of it is read again. */
export function useRestoreStudy() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (studyId: string) =>
      apiFetch<StudyDetail>(
        `/api/studies/${encodeURIComponent(studyId)}/restore`,
        jsonBody("POST", {}),
      ),
    onSuccess: () => client.invalidateQueries(),
  });
}
