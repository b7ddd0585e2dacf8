/**
 * The study's set-asides (GET/POST/DELETE /api/studies/:studyId/set-asides):
 * key factory, query options and hooks. Setting aside and restoring change
 * what fits are stale against and what the region previews compute, and
 * each is a new activity event, so both invalidate those too.
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import { fitKeys } from "./use-fits";
import type { SetAsideView } from "../contract/views/set-asides";

export type { SetAsideView };

export const setAsideKeys = {
  all: ["set-asides"] as const,
  list: (studyId: string) => [...setAsideKeys.all, studyId] as const,
};

const listPath = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}/set-asides`;

/** Every set-aside of the study, newest first, restored ones included. */
export const setAsidesQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: setAsideKeys.list(studyId),
    queryFn: () => apiFetch<SetAsideView[]>(listPath(studyId)),
  });

export function useSetAsides(studyId: string, enabled = true) {
  return useQuery({ ...setAsidesQueryOptions(studyId), enabled });
}

function useInvalidateAfterChange(studyId: string) {
  const client = useQueryClient();
  return async () => {
    await client.invalidateQueries({ queryKey: setAsideKeys.list(studyId) });
    await client.invalidateQueries({ queryKey: activityKeys.all(studyId) });
    await client.invalidateQueries({ queryKey: fitKeys.all });
  };
}

export function useSetAside(studyId: string) {
  const invalidate = useInvalidateAfterChange(studyId);
  return useMutation({
    mutationFn: (input: { participant: string; region?: string; reason: string }) =>
      apiFetch<SetAsideView>(listPath(studyId), jsonBody("POST", input)),
    onSuccess: invalidate,
  });
}

/** Restores a set-aside; the reason is required. */
export function useRestoreSetAside(studyId: string) {
  const invalidate = useInvalidateAfterChange(studyId);
  return useMutation({
    mutationFn: (input: { setAsideId: string; reason: string }) =>
      apiFetch<SetAsideView>(
        `${listPath(studyId)}/${encodeURIComponent(input.setAsideId)}`,
        jsonBody("DELETE", { reason: input.reason }),
      ),
    onSuccess: invalidate,
  });
}
