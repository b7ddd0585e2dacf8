import { queryOptions, useQuery } from "@tanstack/react-query";
import type { MailMessage } from "../contract/views/system";
import { apiFetch } from "./api";

export type { MailMessage };

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

/** An http(s) address; a full stop or comma right after it ends the sentence, not the address. */
const linkPattern = /https?:\/\/[^\s<>"')]*[^\s<>"').,;:!?]/g;

/** A link's address: always absolute (http or https), so it is an external address to the router. */
export type MailSegment =
  | { kind: "text"; text: string }
  | { kind: "link"; href: `http${string}:${string}` };

/** A plain-text message cut into its text and its links, in order, so each link can be shown where it stands. */
export function mailSegments(text: string): MailSegment[] {
  const segments: MailSegment[] = [];
  let at = 0;
  for (const match of text.matchAll(linkPattern)) {
    const start = match.index ?? 0;
    if (start > at) segments.push({ kind: "text", text: text.slice(at, start) });
    segments.push({ kind: "link", href: match[0] as `http${string}:${string}` });
    at = start + match[0].length;
  }
  if (at < text.length) segments.push({ kind: "text", text: text.slice(at) });
  return segments;
}
