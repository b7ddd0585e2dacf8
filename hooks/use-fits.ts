import { useEffect } from "react";
import {
  keepPreviousData,
  queryOptions,
  useMutation,
  useQuery,
  useQueryClient,
} from "@tanstack/react-query";
import { apiBase, apiFetch, jsonBody } from "./api";
import { studyKeys } from "./use-studies";
import { modelKeys } from "./use-models";
import type {
  FitSummaryView,
  FitView,
  ParticipantOrder,
  RegionDetail,
  RegionDetailPoint,
  RegionParticipantsPage,
  RegionPreview,
} from "../contract/views/fits";

// The API's own view types, shared with the server (contract/views/fits.ts).
export type {
  FitSummaryView,
  FitView,
  ParticipantOrder,
  RegionDetail,
  RegionDetailPoint,
  RegionParticipantsPage,
  RegionPreview,
};

/** Which page of a region's participant diagnostics to fetch (GET …/regions/:region/participants). */
export interface ParticipantPageQuery {
  offset: number;
  limit: number;
  sort: ParticipantOrder;
  direction: "asc" | "desc";
  /** Part of a participant id ("" for every participant). */
  search: string;
}

export const fitKeys = {
  all: ["fits"] as const,
  list: (studyId: string) => [...fitKeys.all, "list", studyId] as const,
  detail: (fitId: string) => [...fitKeys.all, "detail", fitId] as const,
  region: (fitId: string, region: string) => [...fitKeys.all, "region", fitId, region] as const,
  participants: (fitId: string, region: string, page: ParticipantPageQuery) =>
    [...fitKeys.all, "participants", fitId, region, page] as const,
  preview: (fitId: string, region: string) => [...fitKeys.all, "preview", fitId, region] as const,
};

const running = (status: string | undefined) => status === "queued" || status === "running";

export const fitsQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: fitKeys.list(studyId),
    queryFn: () => apiFetch<FitSummaryView[]>(`/api/studies/${encodeURIComponent(studyId)}/fits`),
  });

export const fitQueryOptions = (fitId: string) =>
  queryOptions({
    queryKey: fitKeys.detail(fitId),
    queryFn: () => apiFetch<FitView>(`/api/fits/${encodeURIComponent(fitId)}`),
  });

export const regionDetailQueryOptions = (fitId: string, region: string) =>
  queryOptions({
    queryKey: fitKeys.region(fitId, region),
    queryFn: () =>
      apiFetch<RegionDetail>(
        `/api/fits/${encodeURIComponent(fitId)}/regions/${encodeURIComponent(region)}`,
      ),
  });

export const regionParticipantsQueryOptions = (
  fitId: string,
  region: string,
  page: ParticipantPageQuery,
) =>
  queryOptions({
    queryKey: fitKeys.participants(fitId, region, page),
    queryFn: () => {
      const query = new URLSearchParams({
        offset: String(page.offset),
        limit: String(page.limit),
        sort: page.sort,
        direction: page.direction,
      });
      if (page.search) query.set("search", page.search);
      return apiFetch<RegionParticipantsPage>(
        `/api/fits/${encodeURIComponent(fitId)}/regions/${encodeURIComponent(region)}/participants?${query}`,
      );
    },
  });

export function useFits(studyId: string) {
  const query = useQuery({
    ...fitsQueryOptions(studyId),
    refetchInterval: (q) => (q.state.data?.some((f) => running(f.status)) ? 2000 : false),
  });
  return query;
}

/** A fit, kept current while it runs: server-sent progress events, with polling as the fallback. */
export function useFit(fitId: string) {
  const client = useQueryClient();
  const query = useQuery({
    ...fitQueryOptions(fitId),
    refetchInterval: (q) => (running(q.state.data?.status) ? 3000 : false),
  });
  const active = running(query.data?.status);
  useEffect(() => {
    if (!active || typeof EventSource === "undefined") return;
    const source = new EventSource(`${apiBase}/api/fits/${encodeURIComponent(fitId)}/events`, {
      withCredentials: true,
    });
    const onUpdate = (event: MessageEvent) => {
      try {
        const update = JSON.parse(event.data) as Partial<FitView>;
        client.setQueryData<FitView>(fitKeys.detail(fitId), (old) =>
          old ? { ...old, ...pickLive(update) } : old,
        );
        if (update.status && !running(update.status)) {
          source.close();
          void client.invalidateQueries({ queryKey: fitKeys.detail(fitId) });
          void client.invalidateQueries({ queryKey: fitKeys.all });
        }
      } catch {
        // a heartbeat or an unreadable event: polling still keeps the fit current
      }
    };
    source.onmessage = onUpdate;
    for (const name of ["progress", "status", "done", "failed", "cancelled"])
      source.addEventListener(name, onUpdate as EventListener);
    source.onerror = () => source.close();
    return () => source.close();
  }, [active, fitId, client]);
  return query;
}

function pickLive(update: Partial<FitView>): Partial<FitView> {
  const live: Partial<FitView> = {};
  if (update.status) live.status = update.status;
  if (update.progress) live.progress = update.progress;
  if (update.error !== undefined) live.error = update.error;
  return live;
}

export function useRegionDetail(fitId: string, region: string | null, enabled: boolean) {
  return useQuery({
    ...regionDetailQueryOptions(fitId, region ?? ""),
    enabled: enabled && region !== null,
  });
}

/** One page of a finished fit's region participants with every diagnostic; the last page stays shown while the next loads. */
export function useRegionParticipants(
  fitId: string,
  region: string | null,
  page: ParticipantPageQuery,
  enabled: boolean,
) {
  return useQuery({
    ...regionParticipantsQueryOptions(fitId, region ?? "", page),
    enabled: enabled && region !== null,
    placeholderData: keepPreviousData,
  });
}

/** The selected region recomputed at once with the study's current set-asides. */
export function useRegionPreview(
  fitId: string,
  region: string | null,
  setAsideVersion: string,
  enabled: boolean,
) {
  return useQuery({
    queryKey: [...fitKeys.preview(fitId, region ?? ""), setAsideVersion] as const,
    enabled: enabled && region !== null,
    queryFn: () =>
      apiFetch<RegionPreview>(
        `/api/fits/${encodeURIComponent(fitId)}/regions/${encodeURIComponent(region ?? "")}/preview`,
        { method: "POST" },
      ),
  });
}

export function useRunFit(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (modelId: string) =>
      apiFetch<FitView>(
        `/api/studies/${encodeURIComponent(studyId)}/fits`,
        jsonBody("POST", { modelId }),
      ),
    onSuccess: async () => {
      await client.invalidateQueries({ queryKey: fitKeys.all });
      await client.invalidateQueries({ queryKey: modelKeys.all(studyId) });
      await client.invalidateQueries({ queryKey: studyKeys.all });
    },
  });
}

export function useCancelFit(fitId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () =>
      apiFetch<FitView>(`/api/fits/${encodeURIComponent(fitId)}/cancel`, { method: "POST" }),
    onSuccess: () => client.invalidateQueries({ queryKey: fitKeys.all }),
  });
}
