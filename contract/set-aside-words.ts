/**
 * Set-asides in plain words, in one place: the activity sentences ("Maren
 * Lindqvist set aside sub-41 from L_dlpfc: ‘motion spikes’"), a
 * set-aside's scope and the "Set aside on ⟨date⟩ by ⟨name⟩: ⟨reason⟩" line
 * of the participant card and the study's Set aside section. Pure strings
 * (no framework imports: the web app imports this module).
 *
 * A participant id may be withheld (null) from a Viewer of a restricted
 * study; the words then say "a participant".
 */
import { dateWords } from "./dates";

/** What an activity sentence about a set-aside needs (from the audit event). */
export interface SetAsideEventFacts {
  action: "set aside" | "restored";
  /** null when withheld. */
  participant: string | null;
  /** null = every region. */
  region: string | null;
  /** The reason written for this change (setting aside or restoring), or null when none was recorded. */
  reason: string | null;
}

/** The audit event kinds of set-asides (written by the set-aside service). */
export const setAsideEventKinds = {
  setAside: "participant.set_aside",
  restored: "participant.restored",
} as const;

/** How a participant is named in sentences. */
export function participantWords(participant: string | null): string {
  return participant ?? "a participant";
}

/** A set-aside's scope as a short label: "All regions" or the region's name. */
export function scopeLabel(region: string | null): string {
  return region ?? "All regions";
}

/** A reason in quotation marks, as sentences quote it. */
export function quotedReason(reason: string): string {
  return `‘${reason}’`;
}

/**
 * The predicate of an activity sentence (the actor's name goes before it):
 * "set aside sub-41 from L_dlpfc: ‘motion spikes’",
 * "restored sub-41 to every region: ‘motion rechecked’".
 */
export function setAsideEventWords(facts: SetAsideEventFacts): string {
  const who = participantWords(facts.participant);
  const where = facts.region ?? "every region";
  const what =
    facts.action === "set aside" ? `set aside ${who} from ${where}` : `restored ${who} to ${where}`;
  return facts.reason ? `${what}: ${quotedReason(facts.reason)}` : what;
}

/** The whole activity sentence: "Maren Lindqvist restored sub-41 to L_dlpfc: ‘motion rechecked’". */
export function setAsideEventSentence(actor: string, facts: SetAsideEventFacts): string {
  return `${actor} ${setAsideEventWords(facts)}`;
}

function textField(value: unknown, key: string): string | null {
  if (!value || typeof value !== "object") return null;
  const v = (value as Record<string, unknown>)[key];
  return typeof v === "string" && v.length > 0 ? v : null;
}

/**
 * The facts of a set-aside audit event (`kind`, `before`, `after` as the
 * activity API answers them), or null when the event is about something
 * else. A restore event names the participant and region in `after` (and,
 * in events recorded before it did, in `before`); its reason is the
 * restore's reason.
 */
export function setAsideEventFacts(event: {
  kind: string;
  targetId?: string | null;
  before: unknown;
  after: unknown;
}): SetAsideEventFacts | null {
  const { before, after } = event;
  if (event.kind === setAsideEventKinds.setAside) {
    return {
      action: "set aside",
      participant: textField(after, "participant") ?? event.targetId ?? null,
      region: textField(after, "region"),
      reason: textField(after, "reason"),
    };
  }
  if (event.kind === setAsideEventKinds.restored) {
    const named = after && typeof after === "object" && "participant" in after ? after : before;
    return {
      action: "restored",
      participant: textField(named, "participant") ?? event.targetId ?? null,
      region: textField(named, "region"),
      reason: textField(after, "reason"),
    };
  }
  return null;
}

/** A date as the set-aside lines show it ("3 Dec 2026"), in the reader's time zone. */
export function setAsideDate(iso: string): string {
  return dateWords(iso);
}

/** "Set aside on 3 Dec 2026 by Maren Lindqvist: motion spikes" (the participant card, the Set aside section). */
export function setAsideLine(s: {
  createdAt: string;
  createdBy: { name: string | null };
  reason: string;
}): string {
  return `Set aside on ${setAsideDate(s.createdAt)} by ${s.createdBy.name ?? "a former member"}: ${s.reason}`;
}

/** "Restored on 4 Dec 2026 by Tomas Ferreira: motion rechecked", or null while the set-aside is active. */
export function restoredLine(s: {
  restoredAt: string | null;
  restoredBy: { name: string | null } | null;
  restoreReason: string | null;
}): string | null {
  if (s.restoredAt === null) return null;
  const by = ` by ${s.restoredBy?.name ?? "a former member"}`;
  return `Restored on ${setAsideDate(s.restoredAt)}${by}${s.restoreReason ? `: ${s.restoreReason}` : " (no reason recorded)"}`;
}
