import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { studyKeys, type StudySummary } from "./use-studies";

export interface StudyDetail extends StudySummary {
  description: string;
  restricted: boolean;
  capabilities: string[];
}

export const studyQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: studyKeys.detail(studyId),
    queryFn: () => apiFetch<StudyDetail>(`/api/studies/${encodeURIComponent(studyId)}`),
  });

export function useStudy(studyId: string) {
  return useQuery(studyQueryOptions(studyId));
}

/** True when the caller's role in the study allows `action` (see the server's permission table). */
export function can(study: Pick<StudyDetail, "capabilities"> | undefined, action: string): boolean {
  return study?.capabilities.includes(action) ?? false;
}

export function useCreateStudy() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (input: { name: string; description?: string; restricted?: boolean }) => apiFetch<StudyDetail>("/api/studies", jsonBody("POST", input)),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}

export function useUpdateStudy(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (changes: { name?: string; description?: string; restricted?: boolean }) =>
      apiFetch<StudyDetail>(`/api/studies/${encodeURIComponent(studyId)}`, jsonBody("PATCH", changes)),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}

export function useDeleteStudy(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (confirmation: string) => apiFetch<void>(`/api/studies/${encodeURIComponent(studyId)}`, jsonBody("DELETE", { confirm: confirmation })),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}
