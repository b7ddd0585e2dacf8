/**
 * What the screens remember for the signed-in person, wherever they sign in
 * (GET /api/me/preferences, PUT /api/me/preferences/:key; keys and shapes in
 * contract/preferences.ts). `usePreference` answers the fallback until the
 * stored value arrives and when none is stored; a change shows at once and
 * is written in the background (a refused write puts the stored value back).
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useCallback } from "react";
import type { PreferenceKey, PreferenceValue, Preferences } from "../contract/preferences";
import { apiFetch, jsonBody } from "./api";

export const preferenceKeys = {
  all: ["me", "preferences"] as const,
};

export const preferencesQueryOptions = queryOptions({
  queryKey: preferenceKeys.all,
  queryFn: async () =>
    (await apiFetch<{ preferences: Preferences }>("/api/me/preferences")).preferences,
  staleTime: 5 * 60_000,
});

export function usePreference<K extends PreferenceKey>(
  key: K,
  fallback: PreferenceValue<K>,
): { value: PreferenceValue<K>; setValue: (next: PreferenceValue<K>) => void; loaded: boolean } {
  const client = useQueryClient();
  const query = useQuery(preferencesQueryOptions);
  const mutation = useMutation({
    mutationFn: (next: PreferenceValue<K>) =>
      apiFetch<{ key: K; value: PreferenceValue<K> }>(
        `/api/me/preferences/${encodeURIComponent(key)}`,
        jsonBody("PUT", { value: next }),
      ),
    onMutate: async (next) => {
      await client.cancelQueries({ queryKey: preferenceKeys.all });
      const before = client.getQueryData<Preferences>(preferenceKeys.all);
      client.setQueryData<Preferences>(preferenceKeys.all, { ...before, [key]: next });
      return { before };
    },
    onError: (_error, _next, context) => {
      client.setQueryData(preferenceKeys.all, context?.before);
    },
    onSettled: () => client.invalidateQueries({ queryKey: preferenceKeys.all }),
  });
  const { mutate } = mutation;
  const setValue = useCallback((next: PreferenceValue<K>) => mutate(next), [mutate]);
  const stored = query.data?.[key] as PreferenceValue<K> | undefined;
  return { value: stored ?? fallback, setValue, loaded: query.isSuccess || query.isError };
}
