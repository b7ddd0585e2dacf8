/**
 * The signed-in person's e-mail notices of one study
 * (GET/PUT /api/studies/:studyId/notices; contract/notices.ts). A change
 * shows at once and is written in the background; a refused write puts the
 * stored value back.
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { NoticeSetting } from "../contract/notices";
import { apiFetch, jsonBody } from "./api";

export const noticeKeys = {
  setting: (studyId: string) => ["notices", studyId] as const,
};

const path = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}/notices`;

export const noticeSettingQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: noticeKeys.setting(studyId),
    queryFn: () => apiFetch<NoticeSetting>(path(studyId)),
  });

export function useNoticeSetting(studyId: string) {
  return useQuery(noticeSettingQueryOptions(studyId));
}

export function useChangeNoticeSetting(studyId: string) {
  const client = useQueryClient();
  const key = noticeKeys.setting(studyId);
  return useMutation({
    mutationFn: (next: NoticeSetting) =>
      apiFetch<NoticeSetting>(path(studyId), jsonBody("PUT", next)),
    onMutate: async (next) => {
      await client.cancelQueries({ queryKey: key });
      const before = client.getQueryData<NoticeSetting>(key);
      client.setQueryData<NoticeSetting>(key, next);
      return { before };
    },
    onError: (_error, _next, context) => client.setQueryData(key, context?.before),
    onSettled: () => client.invalidateQueries({ queryKey: key }),
  });
}
