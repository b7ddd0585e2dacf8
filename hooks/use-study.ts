import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { studyKeys } from "./use-studies";
import type { Action } from "../contract/permissions";
import type { StudyChanges, StudyDetail } from "../contract/views/studies";

export type { StudyDetail };

export const studyQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: studyKeys.detail(studyId),
    queryFn: () => apiFetch<StudyDetail>(`/api/studies/${encodeURIComponent(studyId)}`),
  });

export function useStudy(studyId: string) {
  return useQuery(studyQueryOptions(studyId));
}

/** True when the caller's role in the study allows `action` (see the server's permission table). */
export function can(study: Pick<StudyDetail, "capabilities"> | undefined, action: Action): boolean {
  return study?.capabilities.includes(action) ?? false;
}

export function useCreateStudy() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (input: { name: string; description?: string; restricted?: boolean }) =>
      apiFetch<StudyDetail>("/api/studies", jsonBody("POST", input)),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}

export function useUpdateStudy(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (changes: StudyChanges) =>
      apiFetch<StudyDetail>(
        `/api/studies/${encodeURIComponent(studyId)}`,
        jsonBody("PATCH", changes),
      ),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}

export function useDeleteStudy(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (confirmation: string) =>
      apiFetch<void>(
        `/api/studies/${encodeURIComponent(studyId)}`,
        jsonBody("DELETE", { confirm: confirmation }),
      ),
    // The lists change; the study's own queries are left alone (read again they would answer "not found" while the screen leaves).
    onSuccess: () =>
      Promise.all([
        client.invalidateQueries({ queryKey: studyKeys.list() }),
        client.invalidateQueries({ queryKey: studyKeys.deleted() }),
      ]),
  });
}

/** Archives the study: read-only for every role, still readable (Owner). */
export function useArchiveStudy(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () =>
      apiFetch<StudyDetail>(
        `/api/studies/${encodeURIComponent(studyId)}/archive`,
        jsonBody("POST", {}),
      ),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}

/** Unarchives the study: its members can change it again (Owner). */
export function useUnarchiveStudy(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () =>
      apiFetch<StudyDetail>(
        `/api/studies/${encodeURIComponent(studyId)}/unarchive`,
        jsonBody("POST", {}),
      ),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}
