/**
 * The audit trail: `recordEvent` appends one event inside the caller's
 * transaction, so the event and the change it records commit together or
 * not at all. Nothing updates or deletes events (a database trigger refuses
 * it). `listEvents` reads a study's trail newest first.
 *
 *   await db.transaction(async (tx) => {
 *     const [before] = await tx.select()…;
 *     await tx.update(studies).set(changes)…;
 *     await recordEvent(tx, { studyId, actorId: user.id, kind: "study.updated",
 *       targetType: "study", targetId: studyId, before, after });
 *   });
 *
 * Kinds are dotted lower-case words, `<thing>.<what happened>`:
 * study.created, study.updated, study.deleted, member.role_changed,
 * member.removed, member.left, invitation.sent, invitation.accepted,
 * invitation.revoked; later work adds its own (dataset.uploaded,
 * participant.set_aside, fit.run, fit.sealed, …).
 */
import { and, desc, eq, like, lt, or, type SQL } from "drizzle-orm";
import type { ActivityEvent } from "../../contract/views/activity";
import type { Queryable } from "../../db/client";
import { auditEvents, users } from "../../db/schema";

export interface NewEvent {
  studyId: string | null;
  actorId: string | null;
  kind: string;
  targetType?: string | null;
  targetId?: string | null;
  before?: unknown;
  after?: unknown;
  /** Defaults to the database clock. */
  at?: Date;
}

export const eventKindPattern = /^[a-z][a-z_-]*(\.[a-z][a-z_-]*)+$/;

/** Appends one event. Throws when `kind` is not a dotted lower-case name. */
export async function recordEvent(tx: Queryable, event: NewEvent): Promise<void> {
  if (!eventKindPattern.test(event.kind))
    throw new Error(`recordEvent: kind "${event.kind}" is not a dotted lower-case name`);
  await tx.insert(auditEvents).values({
    studyId: event.studyId,
    actorId: event.actorId,
    kind: event.kind,
    targetType: event.targetType ?? null,
    targetId: event.targetId ?? null,
    before: event.before === undefined ? null : toJson(event.before),
    after: event.after === undefined ? null : toJson(event.after),
    ...(event.at ? { at: event.at } : {}),
  });
}

/** Dates become ISO strings; undefined fields are dropped. */
function toJson(value: unknown): unknown {
  return JSON.parse(JSON.stringify(value));
}

export interface EventFilter {
  /** Only events by this person (user id). */
  person?: string;
  /** Exact kind ("invitation.sent") or a prefix ("invitation"). */
  kind?: string;
  /** Only events older than this sequence number (paging). */
  beforeSeq?: number;
  limit: number;
}

/** A study's events, newest first. */
export async function listEvents(
  db: Queryable,
  studyId: string,
  filter: EventFilter,
): Promise<ActivityEvent[]> {
  const conditions: SQL[] = [eq(auditEvents.studyId, studyId)];
  if (filter.person) conditions.push(eq(auditEvents.actorId, filter.person));
  if (filter.kind) {
    const byKind = or(
      eq(auditEvents.kind, filter.kind),
      like(auditEvents.kind, `${filter.kind.replace(/[\\%_]/g, "\\$&")}.%`),
    );
    if (byKind) conditions.push(byKind);
  }
  if (filter.beforeSeq !== undefined) conditions.push(lt(auditEvents.seq, filter.beforeSeq));
  const rows = await db
    .select({ event: auditEvents, actorName: users.name, actorEmail: users.email })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.actorId))
    .where(and(...conditions))
    .orderBy(desc(auditEvents.seq))
    .limit(filter.limit);
  return rows.map(({ event, actorName, actorEmail }) => ({
    id: event.id,
    seq: event.seq,
    kind: event.kind,
    at: event.at.toISOString(),
    actor: event.actorId ? { id: event.actorId, name: actorName, email: actorEmail } : null,
    targetType: event.targetType,
    targetId: event.targetId,
    before: event.before,
    after: event.after,
  }));
}
