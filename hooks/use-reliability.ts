/**
 * Reliability of a study's measures: the brain reliability per region (from
 * the current brain table's sessions) and the trait reliabilities the study
 * states, with their sources.
 *
 * The brain reliability answers 409 when the brain table has no sessions to
 * compare; `brainReliabilityQueryOptions` turns that answer into
 * `{ available: false, reason }` so screens show it as a state, not an
 * error. Saving trait reliabilities invalidates them, the activity trail and
 * the fits (whose association rows carry the attenuation computed from them).
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { ApiError, apiFetch, jsonBody } from "./api";
import { activityKeys } from "./use-activity";
import { fitKeys } from "./use-fits";
import type {
  BrainReliabilityView,
  IccInterval,
  RegionReliability,
  TraitReliabilityInput,
  TraitReliabilityView,
} from "../contract/views/reliability";

export type { IccInterval, RegionReliability, TraitReliabilityInput };
export type BrainReliability = BrainReliabilityView;
export type TraitReliability = TraitReliabilityView;

export type BrainReliabilityState =
  | { available: true; reliability: BrainReliability }
  | { available: false; reason: string };

export const reliabilityKeys = {
  all: (studyId: string) => ["reliability", studyId] as const,
  brain: (studyId: string) => [...reliabilityKeys.all(studyId), "brain"] as const,
  traits: (studyId: string) => [...reliabilityKeys.all(studyId), "traits"] as const,
};

const base = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}`;

/** Reads the brain reliability; a 409 (no sessions to compare) becomes `{ available: false, reason }`. */
export async function fetchBrainReliability(
  studyId: string,
  fetcher = apiFetch,
): Promise<BrainReliabilityState> {
  try {
    return {
      available: true,
      reliability: await fetcher<BrainReliability>(`${base(studyId)}/reliability`),
    };
  } catch (e) {
    if (e instanceof ApiError && e.status === 409) return { available: false, reason: e.message };
    throw e;
  }
}

export const brainReliabilityQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: reliabilityKeys.brain(studyId),
    queryFn: () => fetchBrainReliability(studyId),
  });

export const traitReliabilitiesQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: reliabilityKeys.traits(studyId),
    queryFn: () => apiFetch<TraitReliability[]>(`${base(studyId)}/trait-reliabilities`),
  });

export function useBrainReliability(studyId: string) {
  return useQuery(brainReliabilityQueryOptions(studyId));
}

export function useTraitReliabilities(studyId: string) {
  return useQuery(traitReliabilitiesQueryOptions(studyId));
}

/** Replaces the study's list of trait reliabilities (Owners and Analysts; audited). */
export function useSaveTraitReliabilities(studyId: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (entries: TraitReliabilityInput[]) =>
      apiFetch<TraitReliability[]>(
        `${base(studyId)}/trait-reliabilities`,
        jsonBody("PUT", entries),
      ),
    onSuccess: async (saved) => {
      client.setQueryData(reliabilityKeys.traits(studyId), saved);
      await Promise.all([
        client.invalidateQueries({ queryKey: reliabilityKeys.traits(studyId) }),
        client.invalidateQueries({ queryKey: activityKeys.all(studyId) }),
        client.invalidateQueries({ queryKey: fitKeys.all }),
      ]);
    },
  });
}
