/**
 * Set-asides: excluding a participant from every region or from one
 * region, with a written reason. Nothing is deleted: restoring fills in
 * who restored, when and why (a reason is required, as for setting aside),
 * and both are recorded in the audit trail in the same transaction; each
 * event names the participant, the region (null = every region) and the
 * reason, which is what its activity sentence says
 * (contract/set-aside-words.ts). The active set-asides of a study
 * become a new fit's set-aside list (see fits.ts); fits already made keep
 * the list they were made with.
 *
 * Participants are named by their brain-table id (the id fits use). A new
 * set-aside is checked against the study's current brain table when there
 * is one: the participant and the region must exist there (400).
 *
 * A reader who may not see participant-level rows (a Viewer of a
 * restricted study, `participants.read`) gets the list with every
 * participant id withheld (null): the count, scopes, reasons, who and when
 * stay readable.
 */
import { and, desc, eq, inArray, isNull } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { datasetRows, setAsides, users, type SetAsideRow } from "../../db/schema";
import { HttpError, conflict, notFound } from "../http/errors";
import type { SetAsideView } from "../../contract/views/set-asides";
import { recordEvent } from "./audit";
import { currentVersions } from "./datasets";

export interface NewSetAside {
  participant: string;
  region?: string;
  reason: string;
}

interface Actor {
  id: string;
}

async function views(
  db: Queryable,
  rows: readonly SetAsideRow[],
  participantsVisible = true,
): Promise<SetAsideView[]> {
  const ids = [
    ...new Set(rows.flatMap((r) => [r.createdBy, ...(r.restoredBy ? [r.restoredBy] : [])])),
  ];
  const who =
    ids.length > 0
      ? await db
          .select({ id: users.id, name: users.name })
          .from(users)
          .where(inArray(users.id, ids))
      : [];
  const names = new Map(who.map((u) => [u.id, u.name]));
  return rows.map((r) => ({
    id: r.id,
    participant: participantsVisible ? r.participantId : null,
    region: r.region,
    reason: r.reason,
    active: r.restoredAt === null,
    createdBy: { id: r.createdBy, name: names.get(r.createdBy) ?? null },
    createdAt: r.createdAt.toISOString(),
    restoredBy: r.restoredBy ? { id: r.restoredBy, name: names.get(r.restoredBy) ?? null } : null,
    restoredAt: r.restoredAt?.toISOString() ?? null,
    restoreReason: r.restoreReason,
  }));
}

/**
 * The study's set-asides, newest first; restored ones too unless
 * `activeOnly`; participant ids null unless `participantsVisible` (default true).
 */
export async function listSetAsides(
  db: Queryable,
  studyId: string,
  options: { activeOnly?: boolean; participantsVisible?: boolean } = {},
): Promise<SetAsideView[]> {
  const rows = await db
    .select()
    .from(setAsides)
    .where(
      and(
        eq(setAsides.studyId, studyId),
        options.activeOnly ? isNull(setAsides.restoredAt) : undefined,
      ),
    )
    .orderBy(desc(setAsides.createdAt), desc(setAsides.id));
  return views(db, rows, options.participantsVisible ?? true);
}

/** The active set-asides as a recipe's list, in a stable order (participant, then region; every-region first). */
export async function activeSetAsideList(
  db: Queryable,
  studyId: string,
): Promise<{ participant: string; region?: string; reason: string }[]> {
  const rows = await db
    .select()
    .from(setAsides)
    .where(and(eq(setAsides.studyId, studyId), isNull(setAsides.restoredAt)));
  rows.sort(
    (a, b) =>
      (a.participantId < b.participantId ? -1 : a.participantId > b.participantId ? 1 : 0) ||
      (a.region === null
        ? -1
        : b.region === null
          ? 1
          : a.region < b.region
            ? -1
            : a.region > b.region
              ? 1
              : 0),
  );
  return rows.map((r) =>
    r.region === null
      ? { participant: r.participantId, reason: r.reason }
      : { participant: r.participantId, region: r.region, reason: r.reason },
  );
}

async function checkAgainstBrainTable(
  db: Queryable,
  studyId: string,
  input: NewSetAside,
): Promise<void> {
  const { brain } = await currentVersions(db, studyId);
  if (!brain) return;
  const problems: { field: string; message: string }[] = [];
  const [found] = await db
    .select({ id: datasetRows.participantId })
    .from(datasetRows)
    .where(
      and(eq(datasetRows.datasetId, brain.id), eq(datasetRows.participantId, input.participant)),
    )
    .limit(1);
  if (!found)
    problems.push({
      field: "body.participant",
      message: `no participant '${input.participant}' in the brain table ${brain.fileName} (version ${brain.version})`,
    });
  if (
    input.region !== undefined &&
    !brain.columns.some((c) => c.role === "region" && (c.region ?? c.name) === input.region)
  ) {
    problems.push({
      field: "body.region",
      message: `no region '${input.region}' in the brain table ${brain.fileName} (version ${brain.version})`,
    });
  }
  if (problems.length > 0)
    throw new HttpError(
      400,
      "validation_failed",
      problems.map((p) => `${p.field}: ${p.message}`).join("; "),
      problems,
    );
}

/**
 * Sets a participant aside. Throws 400 (unknown participant or region),
 * 409 when the same set-aside is already active, or the participant is
 * already set aside from every region.
 */
export async function createSetAside(
  db: Database,
  actor: Actor,
  studyId: string,
  input: NewSetAside,
  now: Date,
): Promise<SetAsideView> {
  await checkAgainstBrainTable(db, studyId, input);
  const row = await db.transaction(async (tx) => {
    const active = await tx
      .select()
      .from(setAsides)
      .where(
        and(
          eq(setAsides.studyId, studyId),
          eq(setAsides.participantId, input.participant),
          isNull(setAsides.restoredAt),
        ),
      );
    if (active.some((a) => a.region === null))
      throw conflict(`Participant ${input.participant} is already set aside from every region.`);
    if (input.region !== undefined && active.some((a) => a.region === input.region)) {
      throw conflict(
        `Participant ${input.participant} is already set aside from region ${input.region}.`,
      );
    }
    const [created] = await tx
      .insert(setAsides)
      .values({
        studyId,
        participantId: input.participant,
        region: input.region ?? null,
        reason: input.reason,
        createdBy: actor.id,
        createdAt: now,
      })
      .returning();
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "participant.set_aside",
      targetType: "participant",
      targetId: input.participant,
      after: {
        setAsideId: created.id,
        participant: input.participant,
        region: input.region ?? null,
        reason: input.reason,
      },
      at: now,
    });
    return created;
  });
  const [v] = await views(db, [row]);
  return v;
}

/**
 * Restores a set-aside participant (the row stays, marked restored, with
 * who, when and `reason`, which the route has checked is not empty).
 * Throws 404, or 409 when already restored.
 */
export async function restoreSetAside(
  db: Database,
  actor: Actor,
  studyId: string,
  setAsideId: string,
  reason: string,
  now: Date,
): Promise<SetAsideView> {
  const row = await db.transaction(async (tx) => {
    const [found] = await tx
      .select()
      .from(setAsides)
      .where(and(eq(setAsides.id, setAsideId), eq(setAsides.studyId, studyId)));
    if (!found) throw notFound("Set-aside not found.");
    if (found.restoredAt !== null)
      throw conflict(
        `Participant ${found.participantId} was already restored on ${found.restoredAt.toISOString()}.`,
      );
    const [restored] = await tx
      .update(setAsides)
      .set({ restoredAt: now, restoredBy: actor.id, restoreReason: reason })
      .where(eq(setAsides.id, setAsideId))
      .returning();
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "participant.restored",
      targetType: "participant",
      targetId: found.participantId,
      before: {
        setAsideId,
        participant: found.participantId,
        region: found.region,
        reason: found.reason,
      },
      after: {
        setAsideId,
        participant: found.participantId,
        region: found.region,
        restoredAt: now.toISOString(),
        reason,
      },
      at: now,
    });
    return restored;
  });
  const [v] = await views(db, [row]);
  return v;
}
