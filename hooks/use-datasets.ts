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
  PersonRef,
  RowsPage,
  StoredColumn,
} from "../contract/views/datasets";

// The API's own view types, shared with the server (contract/views/datasets.ts).
export type {
  ColumnPreview,
  DatasetKind,
  DatasetVersion,
  IdentifierDecisionRecord,
  IdentifierKind,
  PersonRef,
  RowsPage,
  StoredColumn,
};

/** One problem of an uploaded file; `message` already names the file, row and column. */
export interface IntakeProblem {
  file: string;
  row?: number;
  column?: string;
  code: string;
  message: string;
}

export interface UploadOptions {
  idColumn?: string;
  seSuffix?: string;
  layout?: "wide" | "long";
  /** "none": the brain table has no session column. */
  sessionColumn?: string;
}

/** What the server answers to an upload: the preview, before anything is stored. */
export interface DatasetPreview {
  id: string;
  studyId: string;
  status: "preview";
  kind: DatasetKind;
  file: string;
  fileName: string;
  sha256: string;
  byteSize: number;
  delimiter: string;
  delimiterName: string;
  rowCount: number;
  columnCount: number;
  idColumn: string;
  idColumnGuessed: boolean;
  layout?: "wide" | "long";
  regions?: string[];
  sessions?: string[];
  participants: number;
  /** In the file's column order. */
  columns: ColumnPreview[];
  /** First rows as written, with their spreadsheet row numbers (header = row 1). */
  rows: { row: number; cells: string[] }[];
  problems: IntakeProblem[];
  problemCount: number;
  identifierColumns: { column: string; kind: IdentifierKind; reason: string }[];
  options: {
    idColumn?: string;
    seSuffix?: string;
    layout?: "wide" | "long";
    sessionColumn?: string | null;
  };
  uploadedBy: PersonRef;
  uploadedAt: string;
  expiresAt: string;
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
