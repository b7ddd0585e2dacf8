/**
 * Sign-in and sign-out through the server's Auth.js endpoints, plus the
 * list of sign-in methods (and demo accounts in demo mode) it offers.
 */
import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiBase, apiFetch, ApiError } from "./api";
import type { AuthOptions, DemoAccount } from "../contract/views/system";
import { meKeys } from "./use-me";

export type { AuthOptions, DemoAccount };

export const authKeys = {
  options: ["auth-options"] as const,
};

export const authOptionsQueryOptions = queryOptions({
  queryKey: authKeys.options,
  queryFn: () => apiFetch<AuthOptions>("/api/auth-options"),
  staleTime: Number.POSITIVE_INFINITY,
});

export function useAuthOptions() {
  return useQuery(authOptionsQueryOptions);
}

/** Posts a form to an Auth.js action and returns the address it wants the browser to visit next. */
async function authAction(action: string, fields: Record<string, string>): Promise<string> {
  const { csrfToken } = await apiFetch<{ csrfToken: string }>("/api/auth/csrf");
  const body = new URLSearchParams({ ...fields, csrfToken });
  const response = await fetch(`${apiBase}/api/auth/${action}`, {
    method: "POST",
    credentials: "include",
    headers: { "Content-Type": "application/x-www-form-urlencoded", "X-Auth-Return-Redirect": "1" },
    body: body.toString(),
  });
  const payload = (await response.json().catch(() => null)) as { url?: string } | null;
  if (!response.ok || !payload?.url) {
    throw new ApiError(
      response.status,
      "sign_in_failed",
      "Sign-in could not be started. Try again in a moment.",
    );
  }
  const url = new URL(payload.url, window.location.origin);
  const error = url.searchParams.get("error");
  if (error) throw new ApiError(400, "sign_in_failed", describeAuthError(error));
  return url.toString();
}

export function describeAuthError(code: string): string {
  switch (code) {
    case "Verification":
      return "That sign-in link has expired or was already used. Ask for a new one.";
    case "AccessDenied":
      return "Access was denied.";
    case "EmailSignin":
      return "The sign-in e-mail could not be sent.";
    default:
      return "Sign-in did not complete. Try again.";
  }
}

export function useEmailSignIn(providerId: string, callbackPath = "/studies") {
  return useMutation({
    mutationFn: (email: string) =>
      authAction(`signin/${providerId}`, {
        email,
        callbackUrl: `${window.location.origin}${callbackPath}`,
      }),
  });
}

export function useInstitutionSignIn(providerId: string) {
  return useMutation({
    mutationFn: async () => {
      const next = await authAction(`signin/${providerId}`, {
        callbackUrl: `${window.location.origin}/studies`,
      });
      window.location.assign(next);
    },
  });
}

export function useDemoSignIn() {
  const client = useQueryClient();
  return useMutation({
    mutationFn: (email: string) =>
      apiFetch<unknown>("/api/dev/demo-sign-in", {
        method: "POST",
        body: JSON.stringify({ email }),
      }),
    onSuccess: () => client.invalidateQueries({ queryKey: meKeys.all }),
  });
}

/** Signs out through Auth.js, then opens `returnTo` (the sign-in page unless a screen wants to come back to itself). */
export function useSignOut(returnTo = "/sign-in") {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () =>
      authAction("signout", { callbackUrl: `${window.location.origin}${returnTo}` }),
    onSuccess: () => {
      client.clear();
      window.location.assign(returnTo);
    },
  });
}
