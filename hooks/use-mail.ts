import { queryOptions, useQuery } from "@tanstack/react-query";
import { apiFetch } from "./api";

export interface MailMessage {
  id?: string;
  to: string;
  subject: string;
  text: string;
  html?: string | null;
  sentAt: string;
}

export const mailKeys = {
  all: ["dev-mail"] as const,
};

/** Messages caught by the local mail fake (demo and development only). */
export const mailQueryOptions = queryOptions({
  queryKey: mailKeys.all,
  queryFn: () => apiFetch<MailMessage[]>("/api/dev/mail"),
  refetchInterval: 3000,
});

export function useMail() {
  return useQuery(mailQueryOptions);
}

/** The http(s) links in a plain-text message, in order of appearance. */
export function linksIn(text: string): string[] {
  return Array.from(text.matchAll(/https?:\/\/[^\s<>"')]+/g), (m) => m[0]);
}
