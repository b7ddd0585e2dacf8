import { queryOptions, useQuery } from "@tanstack/react-query";
import type { Me } from "../contract/views/system";
import { ApiError, apiFetch } from "./api";

export type { Me };

export const meKeys = {
  all: ["me"] as const,
};

/** The signed-in person, or null when signed out (401 is an answer, not an error). */
export const meQueryOptions = queryOptions({
  queryKey: meKeys.all,
  queryFn: async (): Promise<Me | null> => {
    try {
      return await apiFetch<Me>("/api/me");
    } catch (error) {
      if (error instanceof ApiError && error.status === 401) return null;
      throw error;
    }
  },
  staleTime: 60_000,
});

export function useMe() {
  return useQuery(meQueryOptions);
}
