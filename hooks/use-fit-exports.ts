/**
 * A fit's exports, approval and seal: the methods paragraph and the results
 * sentences (queries), the download addresses of the region table (CSV,
 * Markdown, LaTeX, Word) and recipe, and the approve and
 * seal mutations (which invalidate every fit query by the ["fits"] prefix
 * and the study's activity).
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiBase, apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import { fitKeys, type FitView } from "./use-fits";
import type { MethodsText } from "../contract/methods-text";
import type { ResultsSentenceView } from "../contract/views/manuscript";

export type { MethodsText, ResultsSentenceView };

export const fitExportKeys = {
  methods: (fitId: string) => [...fitKeys.all, "methods", fitId] as const,
  sentences: (fitId: string) => [...fitKeys.all, "sentences", fitId] as const,
};

/** Same-origin addresses of a fit's downloads. */
export function fitDownloads(fitId: string): {
  regionsCsv: string;
  regionsMd: string;
  regionsTex: string;
  regionsDocx: string;
  recipeJson: string;
} {
  const base = `${apiBase}/api/fits/${encodeURIComponent(fitId)}`;
  return {
    regionsCsv: `${base}/regions.csv`,
    regionsMd: `${base}/regions.md`,
    regionsTex: `${base}/regions.tex`,
    regionsDocx: `${base}/regions.docx`,
    recipeJson: `${base}/recipe.json`,
  };
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

export const sentencesQueryOptions = (fitId: string) =>
  queryOptions({
    queryKey: fitExportKeys.sentences(fitId),
    queryFn: () =>
      apiFetch<ResultsSentenceView[]>(`/api/fits/${encodeURIComponent(fitId)}/sentences`),
    staleTime: Number.POSITIVE_INFINITY,
  });

/** The results sentences of a finished fit, one per region (`enabled` false until it is done). */
export function useFitSentences(fitId: string, enabled: boolean) {
  return useQuery({ ...sentencesQueryOptions(fitId), enabled });
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
