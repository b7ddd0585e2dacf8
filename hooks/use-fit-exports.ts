/**
 * A fit's exports, approval and seal: the methods paragraph (query), the
 * download addresses of the region table and recipe, and the approve and
 * seal mutations (which invalidate every fit query by the ["fits"] prefix
 * and the study's activity).
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiBase, apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import { fitKeys, type FitView } from "./use-fits";
import type { MethodsText } from "../contract/methods-text";

export type { MethodsText };

export const fitExportKeys = {
  methods: (fitId: string) => [...fitKeys.all, "methods", fitId] as const,
};

/** Same-origin addresses of a fit's downloads. */
export function fitDownloads(fitId: string): { regionsCsv: string; recipeJson: string } {
  const base = `${apiBase}/api/fits/${encodeURIComponent(fitId)}`;
  return { regionsCsv: `${base}/regions.csv`, recipeJson: `${base}/recipe.json` };
}

export const methodsQueryOptions = (fitId: string) =>
  queryOptions({
    queryKey: fitExportKeys.methods(fitId),
    queryFn: () => apiFetch<MethodsText>(`/api/fits/${encodeURIComponent(fitId)}/methods`),
    staleTime: Number.POSITIVE_INFINITY,
  });

/** The methods paragraph of a finished fit (`enabled` false until it is done). */
export function useFitMethods(fitId: string, enabled: boolean) {
  return useQuery({ ...methodsQueryOptions(fitId), enabled });
}

function usePublishAction(fitId: string, studyId: string, action: "approve" | "seal") {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () =>
      apiFetch<FitView>(`/api/fits/${encodeURIComponent(fitId)}/${action}`, jsonBody("POST", {})),
    onSuccess: async (fit) => {
      client.setQueryData(fitKeys.detail(fitId), fit);
      await client.invalidateQueries({ queryKey: fitKeys.all });
      await client.invalidateQueries({ queryKey: activityKeys.all(studyId) });
    },
  });
}

/** Approves a finished fit for sealing (Owner, Reviewer). */
export function useApproveFit(fitId: string, studyId: string) {
  return usePublishAction(fitId, studyId, "approve");
}

/** Seals an approved fit (Owner). */
export function useSealFit(fitId: string, studyId: string) {
  return usePublishAction(fitId, studyId, "seal");
}
