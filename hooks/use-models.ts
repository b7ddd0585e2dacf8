import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { studyKeys } from "./use-studies";
import type { ModelCreateInput, ModelView } from "../contract/model-form";

export type { ModelView };

export const modelKeys = {
  all: (studyId: string) => ["models", studyId] as const,
  list: (studyId: string) => [...modelKeys.all(studyId), "list"] as const,
  detail: (studyId: string, modelId: string) =>
    [...modelKeys.all(studyId), "detail", modelId] as const,
};

const base = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}/models`;

export const modelsQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: modelKeys.list(studyId),
    queryFn: () => apiFetch<ModelView[]>(base(studyId)),
  });

export const modelQueryOptions = (studyId: string, modelId: string) =>
  queryOptions({
    queryKey: modelKeys.detail(studyId, modelId),
    queryFn: () => apiFetch<ModelView>(`${base(studyId)}/${encodeURIComponent(modelId)}`),
  });

export function useModels(studyId: string) {
  return useQuery(modelsQueryOptions(studyId));
}

/** One model; nothing is read while `modelId` is empty. */
export function useModel(studyId: string, modelId: string) {
  return useQuery({ ...modelQueryOptions(studyId, modelId), enabled: modelId !== "" });
}

export function useCreateModel(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (input: ModelCreateInput) =>
      apiFetch<ModelView>(base(studyId), jsonBody("POST", input)),
    onSuccess: async () => {
      await client.invalidateQueries({ queryKey: modelKeys.all(studyId) });
      await client.invalidateQueries({ queryKey: studyKeys.all });
    },
  });
}

export function useDeleteModel(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (modelId: string) =>
      apiFetch<void>(`${base(studyId)}/${encodeURIComponent(modelId)}`, { method: "DELETE" }),
    onSuccess: () => client.invalidateQueries({ queryKey: modelKeys.all(studyId) }),
  });
}

/** What the model form offers: the current brain table's regions and the participant sheet's columns. */
export interface ModelInputs {
  regions: string[];
  hasStandardErrors: boolean;
  hasSessions: boolean;
  numericColumns: string[];
  categoricalColumns: string[];
}

interface DatasetListItem {
  kind: "brain" | "participants";
  status: "confirmed" | "preview";
  current?: boolean;
  regions?: string[] | null;
  sessionColumn?: string | null;
  columns?: { name: string; type: "id" | "number" | "category"; role: string }[];
}

export const modelInputsQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: ["datasets", studyId, "model-inputs"] as const,
    queryFn: async (): Promise<ModelInputs> => {
      const list = await apiFetch<DatasetListItem[]>(
        `/api/studies/${encodeURIComponent(studyId)}/datasets`,
      );
      const brain = list.find((d) => d.kind === "brain" && d.status === "confirmed" && d.current);
      const sheet = list.find(
        (d) => d.kind === "participants" && d.status === "confirmed" && d.current,
      );
      const variables = (sheet?.columns ?? []).filter((c) => c.role === "variable");
      return {
        regions: brain?.regions ?? [],
        hasStandardErrors: (brain?.columns ?? []).some((c) => c.role === "se"),
        hasSessions: Boolean(brain?.sessionColumn),
        numericColumns: variables.filter((c) => c.type === "number").map((c) => c.name),
        categoricalColumns: variables.filter((c) => c.type === "category").map((c) => c.name),
      };
    },
  });

export function useModelInputs(studyId: string) {
  return useQuery(modelInputsQueryOptions(studyId));
}

/** The distinct values of a participant-sheet column among matched participants (for choosing group levels). */
export function useColumnLevels(studyId: string, column: string | undefined) {
  return useQuery({
    queryKey: ["roster", studyId, "levels", column ?? ""] as const,
    enabled: Boolean(column),
    queryFn: async (): Promise<string[]> => {
      const page = await apiFetch<{
        rows: { items: { values: Record<string, string | number | null> }[] } | null;
      }>(`/api/studies/${encodeURIComponent(studyId)}/roster?limit=1000&status=matched`);
      const levels = new Set<string>();
      for (const row of page.rows?.items ?? []) {
        const v = row.values[column as string];
        if (v !== null && v !== undefined) levels.add(String(v));
      }
      return [...levels].sort();
    },
  });
}
