/**
 * Datasets of a study: the brain table and participant sheet versions, an
 * upload's preview, and its confirmation into a stored version.
 *
 * An upload goes up as multipart form data (fields first, then the file);
 * `apiFetch` leaves the Content-Type to the browser for a FormData body, so
 * the multipart boundary is set. The answer is a preview: nothing is stored
 * until `useConfirmDataset` confirms it.
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import { rosterKeys } from "./use-roster";
import { studyKeys } from "./use-studies";
import type {
  ColumnPreview,
  DatasetKind,
  DatasetView as DatasetVersion,
  IdentifierDecisionRecord,
  IdentifierKind,
  IntakeProblem,
  PersonRef,
  PreviewView as DatasetPreview,
  RowsPage,
  StoredColumn,
} from "../contract/views/datasets";

// The API's own view types, shared with the server (contract/views/datasets.ts).
export type {
  ColumnPreview,
  DatasetKind,
  DatasetPreview,
  DatasetVersion,
  IdentifierDecisionRecord,
  IdentifierKind,
  IntakeProblem,
  PersonRef,
  RowsPage,
  StoredColumn,
};

/** The upload form's fields, sent as multipart strings (the server answers them as the preview's `options`). */
export interface UploadOptions {
  idColumn?: string;
  seSuffix?: string;
  layout?: "wide" | "long";
  /** "none": the brain table has no session column. */
  sessionColumn?: string;
}

/** A version with one page of its rows (`rows` null when the caller may not read participant-level rows). */
export type DatasetWithRows = DatasetVersion & { rows: RowsPage | null };

export interface PickedFile {
  name: string;
  size: number;
  blob: Blob;
}

export interface UploadInput {
  kind: DatasetKind;
  file: PickedFile;
  options: UploadOptions;
}

/** The uploader's decisions on a preview (see the server's confirm route). */
export interface ConfirmInput {
  datasetId: string;
  types?: Record<string, "number" | "category">;
  dropColumns?: string[];
  identifierReasons?: Record<string, string>;
}

export const datasetKeys = {
  all: (studyId: string) => ["datasets", studyId] as const,
  list: (studyId: string) => [...datasetKeys.all(studyId), "list"] as const,
  detail: (studyId: string, datasetId: string, offset: number, limit: number) =>
    [...datasetKeys.all(studyId), "detail", datasetId, offset, limit] as const,
};

const base = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}/datasets`;

export const datasetsQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: datasetKeys.list(studyId),
    queryFn: () => apiFetch<(DatasetVersion | DatasetPreview)[]>(base(studyId)),
  });

export const datasetQueryOptions = (
  studyId: string,
  datasetId: string,
  offset: number,
  limit: number,
) =>
  queryOptions({
    queryKey: datasetKeys.detail(studyId, datasetId, offset, limit),
    queryFn: () =>
      apiFetch<DatasetWithRows>(
        `${base(studyId)}/${encodeURIComponent(datasetId)}?offset=${offset}&limit=${limit}`,
      ),
  });

/** Every version and live preview of the study, newest first. */
export function useDatasets(studyId: string) {
  return useQuery(datasetsQueryOptions(studyId));
}

/** One stored version with rows `offset` … `offset + limit − 1`. */
export function useDataset(studyId: string, datasetId: string, offset: number, limit: number) {
  return useQuery(datasetQueryOptions(studyId, datasetId, offset, limit));
}

/** The multipart body of an upload: kind and the options that were set, then the file. */
export function uploadForm(input: UploadInput): FormData {
  const form = new FormData();
  form.append("kind", input.kind);
  for (const [key, value] of Object.entries(input.options)) {
    if (typeof value === "string" && value !== "") form.append(key, value);
  }
  form.append("file", input.file.blob, input.file.name);
  return form;
}

/** Uploads a file and answers its preview (nothing is stored yet). */
export function useUploadDataset(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (input: UploadInput) =>
      apiFetch<DatasetPreview>(base(studyId), { method: "POST", body: uploadForm(input) }),
    onSuccess: () => client.invalidateQueries({ queryKey: datasetKeys.all(studyId) }),
  });
}

/** Confirms a preview into a stored version; the roster, study counts and activity change with it. */
export function useConfirmDataset(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: ({ datasetId, ...decisions }: ConfirmInput) =>
      apiFetch<DatasetVersion>(
        `${base(studyId)}/${encodeURIComponent(datasetId)}/confirm`,
        jsonBody("POST", decisions),
      ),
    onSuccess: async () => {
      await Promise.all([
        client.invalidateQueries({ queryKey: datasetKeys.all(studyId) }),
        client.invalidateQueries({ queryKey: rosterKeys.all(studyId) }),
        client.invalidateQueries({ queryKey: studyKeys.all }),
        client.invalidateQueries({ queryKey: activityKeys.all(studyId) }),
      ]);
    },
  });
}

/** True for a stored version (false for a preview still waiting for confirmation). */
export function isVersion(dataset: DatasetVersion | DatasetPreview): dataset is DatasetVersion {
  return dataset.status === "confirmed";
}
