/**
 * The words a fit's header and the fits list use for its lineage: N over
 * the regions, the stage badge, who set a participant aside and when, and
 * the earlier fit a refit re-runs. Pure (no React), so it is tested apart.
 */
import type { FitSetAsideView, FitStage } from "../../contract/views/fits";
import { dateTimeWords } from "../../contract/dates";

/** "N = 64", or "N = 58–64" when regions differ; null before the fit is done. */
export function nWords(n: { min: number; max: number } | null): string | null {
  if (!n) return null;
  return n.min === n.max ? `N = ${n.max}` : `N = ${n.min}–${n.max}`;
}

/** The badge tone of each stage of a fit. */
export const stageTone: Record<FitStage, "neutral" | "accent" | "danger" | "success"> = {
  queued: "accent",
  running: "accent",
  done: "success",
  failed: "danger",
  cancelled: "neutral",
  approved: "accent",
  sealed: "success",
};

/** A date and time as people read it ("3 Dec 2026, 17:21"). */
export function whenWords(iso: string): string {
  return dateTimeWords(iso);
}

/** "sub-12 · all regions", or "A participant · L_dlpfc" when ids are withheld. */
export function setAsideTitle(s: Pick<FitSetAsideView, "participant" | "region">): string {
  return `${s.participant ?? "A participant"} · ${s.region ?? "all regions"}`;
}

/** "Set aside by Tomas Ferreira on 3 Dec 2026, 17:21" (or what is known of it). */
export function setAsideByline(s: Pick<FitSetAsideView, "createdBy" | "createdAt">): string {
  const who = s.createdBy ? (s.createdBy.name ?? "a member") : null;
  if (!who && !s.createdAt) return "Who set it aside is not recorded";
  return `Set aside${who ? ` by ${who}` : ""}${s.createdAt ? ` on ${whenWords(s.createdAt)}` : ""}`;
}

/** "Refit of Load effect (3 Dec 2026, 17:02)" — the earlier fit by its model's name and when it ran, or its short id. */
export function refitOfWords(
  modelName: string,
  refitOf: string,
  refitOfCreatedAt: string | null,
): string {
  return `Refit of ${modelName} (${refitOfCreatedAt ? whenWords(refitOfCreatedAt) : `fit ${refitOf.slice(0, 8)}`})`;
}

/** "Set aside: 2" — the count the header and the list show. */
export function setAsideCountWords(count: number): string {
  return `Set aside: ${count}`;
}
