/**
 * Studies: create (the creator becomes Owner), read, update (name,
 * description, restricted flag, "A second person signs off" — see
 * contract/sign-off.ts), and the life cycle that never loses what
 * was recorded:
 *
 * - delete is a soft delete an Owner can undo for 30 days (restore); after
 *   that the study stays stored but can no longer be restored;
 * - a study with a sealed fit cannot be deleted, only archived: read-only
 *   for every role (the permission module refuses its changes), still
 *   readable, and an Owner can unarchive it.
 *
 * Every change is recorded in the audit trail in the same transaction; the
 * trail itself is never deleted, so a restored study shows its whole history.
 */
import { and, desc, eq, gte, inArray, isNotNull, isNull, sql } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { perDatabase } from "../../db/prepared";
import { cachedRead } from "../../db/read-cache";
import {
  datasetVersions,
  fitSeals,
  fits,
  memberships,
  models,
  studies,
  users,
  type Study,
} from "../../db/schema";
import type { Role } from "../../contract/permissions";
import { capabilitiesOf } from "../auth/permissions";
import { badRequest, HttpError } from "../http/errors";
import {
  restorableUntil,
  restoreWindowDays,
  restoreWindowMs,
} from "../../contract/study-lifecycle";
import type {
  DeletedStudy,
  StudyChanges,
  StudyCounts,
  StudyDetail,
  StudySummary,
} from "../../contract/views/studies";
import { recordEvent } from "./audit";

interface Actor {
  id: string;
}

/** The fields an audit event shows for a study. */
function auditView(study: Study) {
  return { name: study.name, description: study.description, restricted: study.restricted };
}

/**
 * The counts of the study in the query's `studies` row, as columns:
 * members; participants in the newest brain table (or, before one is
 * uploaded, the newest participant sheet); models not deleted; fits; sealed fits.
 * The embedded database answers one query at a time, so the counts are
 * subqueries of the query that reads the studies rather than queries of
 * their own. (The outer study is named explicitly: inside a subquery an
 * unqualified id would be the inner table's.)
 */
function countColumns() {
  const outer = sql.raw(`"studies"."id"`);
  const latest = (kind: "brain" | "participants") =>
    sql<number | null>`(select dv.participant_count from ${datasetVersions} dv
      where dv.study_id = ${outer} and dv.kind = ${kind} and dv.complete order by dv.version desc limit 1)`;
  return {
    members: sql<number>`(select count(*) from ${memberships} m where m.study_id = ${outer})`,
    models: sql<number>`(select count(*) from ${models} mo where mo.study_id = ${outer} and mo.deleted_at is null)`,
    fits: sql<number>`(select count(*) from ${fits} f where f.study_id = ${outer})`,
    sealedFits: sql<number>`(select count(*) from ${fitSeals} s where s.fit_id in (select f.id from ${fits} f where f.study_id = ${outer}))`,
    brainParticipants: latest("brain"),
    sheetParticipants: latest("participants"),
  };
}

function countsOf(row: {
  members: unknown;
  models: unknown;
  fits: unknown;
  sealedFits: unknown;
  brainParticipants: unknown;
  sheetParticipants: unknown;
}): StudyCounts {
  return {
    members: Number(row.members),
    models: Number(row.models),
    fits: Number(row.fits),
    sealedFits: Number(row.sealedFits),
    participants: Number(row.brainParticipants ?? row.sheetParticipants ?? 0),
  };
}

/** Counts per study (see countColumns). One query (kept until the next write, see db/read-cache.ts). */
export async function studyCounts(
  db: Queryable,
  studyIds: readonly string[],
): Promise<Map<string, StudyCounts>> {
  const out = new Map<string, StudyCounts>();
  for (const id of studyIds)
    out.set(id, { members: 0, participants: 0, models: 0, fits: 0, sealedFits: 0 });
  if (studyIds.length === 0) return out;
  const ids = [...studyIds].sort();
  const rows = await cachedRead(db, `counts of ${ids.join(",")}`, () =>
    db
      .select({ studyId: studies.id, ...countColumns() })
      .from(studies)
      .where(inArray(studies.id, ids)),
  );
  for (const row of rows) out.set(row.studyId, countsOf(row));
  return out;
}

function summary(study: Study, role: Role, counts: StudyCounts): StudySummary {
  return {
    id: study.id,
    name: study.name,
    description: study.description,
    restricted: study.restricted,
    role,
    counts,
    createdAt: study.createdAt.toISOString(),
    updatedAt: study.updatedAt.toISOString(),
    archivedAt: study.archivedAt?.toISOString() ?? null,
  };
}

const studiesOfPerson = perDatabase((db) =>
  db
    .select({ study: studies, role: memberships.role, ...countColumns() })
    .from(memberships)
    .innerJoin(studies, eq(studies.id, memberships.studyId))
    .where(and(eq(memberships.userId, sql.placeholder("userId")), isNull(studies.deletedAt)))
    .prepare("studies_of_person"),
);

/** Studies the person belongs to (not deleted), most recently created first, with their counts. One query (kept until the next write). */
export async function listStudies(db: Database, userId: string): Promise<StudySummary[]> {
  const rows = [
    ...(await cachedRead(db, `studies of ${userId}`, () =>
      studiesOfPerson(db).execute({ userId }),
    )),
  ];
  rows.sort(
    (a, b) =>
      b.study.createdAt.getTime() - a.study.createdAt.getTime() ||
      a.study.name.localeCompare(b.study.name),
  );
  return rows.map((r) => summary(r.study, r.role, countsOf(r)));
}

export async function studyDetail(db: Database, study: Study, role: Role): Promise<StudyDetail> {
  const counts = (await studyCounts(db, [study.id])).get(study.id) as StudyCounts;
  return {
    ...summary(study, role, counts),
    capabilities: capabilitiesOf(role, study),
    secondPersonSignOff: study.secondPersonSignOff,
  };
}

export interface NewStudy {
  name: string;
  description?: string;
  restricted?: boolean;
}

/** Creates a study with `actor` as its Owner. */
export async function createStudy(
  db: Database,
  actor: Actor,
  input: NewStudy,
  now: Date,
): Promise<StudyDetail> {
  const study = await db.transaction(async (tx) => {
    const [created] = await tx
      .insert(studies)
      .values({
        name: input.name,
        description: input.description ?? "",
        restricted: input.restricted ?? false,
        createdBy: actor.id,
        createdAt: now,
        updatedAt: now,
      })
      .returning();
    await tx
      .insert(memberships)
      .values({ studyId: created.id, userId: actor.id, role: "owner", createdAt: now });
    await recordEvent(tx, {
      studyId: created.id,
      actorId: actor.id,
      kind: "study.created",
      targetType: "study",
      targetId: created.id,
      after: auditView(created),
      at: now,
    });
    return created;
  });
  return studyDetail(db, study, "owner");
}

/**
 * Renames, describes or (un)restricts a study, or turns "A second person
 * signs off" on or off; records only the fields that changed (the setting
 * as its own event, study.sign_off_changed).
 */
export async function updateStudy(
  db: Database,
  actor: Actor,
  study: Study,
  role: Role,
  changes: StudyChanges,
  now: Date,
): Promise<StudyDetail> {
  const updated = await db.transaction(async (tx) => {
    const [row] = await tx
      .update(studies)
      .set({ ...changes, updatedAt: now })
      .where(eq(studies.id, study.id))
      .returning();
    const before: Record<string, unknown> = {};
    const after: Record<string, unknown> = {};
    const was = auditView(study);
    const now2 = auditView(row);
    for (const key of Object.keys(was) as (keyof typeof was)[]) {
      if (was[key] !== now2[key]) {
        before[key] = was[key];
        after[key] = now2[key];
      }
    }
    if (Object.keys(after).length > 0) {
      await recordEvent(tx, {
        studyId: study.id,
        actorId: actor.id,
        kind: "study.updated",
        targetType: "study",
        targetId: study.id,
        before,
        after,
        at: now,
      });
    }
    if (row.secondPersonSignOff !== study.secondPersonSignOff) {
      await recordEvent(tx, {
        studyId: study.id,
        actorId: actor.id,
        kind: "study.sign_off_changed",
        targetType: "study",
        targetId: study.id,
        before: { secondPersonSignOff: study.secondPersonSignOff },
        after: { secondPersonSignOff: row.secondPersonSignOff },
        at: now,
      });
    }
    return row;
  });
  return studyDetail(db, updated, role);
}

/** A deleted study its Owner can still restore. */
/**
 * Deleted studies `userId` owns that can still be restored at `now`, most
 * recently deleted first. Studies past the restore window stay stored and
 * are not listed.
 */
export async function listDeletedStudies(
  db: Database,
  userId: string,
  now: Date,
): Promise<DeletedStudy[]> {
  const cutoff = new Date(now.getTime() - restoreWindowMs);
  const rows = await db
    .select({ study: studies, deletedByName: users.name })
    .from(memberships)
    .innerJoin(studies, eq(studies.id, memberships.studyId))
    .leftJoin(users, eq(users.id, studies.deletedBy))
    .where(
      and(
        eq(memberships.userId, userId),
        eq(memberships.role, "owner"),
        isNotNull(studies.deletedAt),
        gte(studies.deletedAt, cutoff),
      ),
    )
    .orderBy(desc(studies.deletedAt));
  return rows.map(({ study, deletedByName }) => {
    const deletedAt = study.deletedAt as Date;
    return {
      id: study.id,
      name: study.name,
      description: study.description,
      deletedAt: deletedAt.toISOString(),
      deletedBy: study.deletedBy ? { id: study.deletedBy, name: deletedByName } : null,
      restorableUntil: restorableUntil(deletedAt).toISOString(),
    };
  });
}

/** True when a fit of the study is sealed. */
async function hasSealedFit(db: Queryable, studyId: string): Promise<boolean> {
  const rows = await db
    .select({ fitId: fitSeals.fitId })
    .from(fitSeals)
    .innerJoin(fits, eq(fits.id, fitSeals.fitId))
    .where(eq(fits.studyId, studyId))
    .limit(1);
  return rows.length > 0;
}

/**
 * Soft-deletes a study: it disappears from every route, its rows and audit
 * trail stay, and an Owner can restore it for 30 days. `confirmation` must
 * repeat the study's name exactly. A study with a sealed fit is never
 * deleted (409 study_has_sealed_fits): archive it instead.
 */
export async function deleteStudy(
  db: Database,
  actor: Actor,
  study: Study,
  confirmation: string,
  now: Date,
): Promise<void> {
  await db.transaction(async (tx) => {
    if (await hasSealedFit(tx, study.id)) {
      throw new HttpError(
        409,
        "study_has_sealed_fits",
        `The study "${study.name}" has sealed fits, so it cannot be deleted. Archive it instead: it becomes read-only for every role and stays readable.`,
      );
    }
    if (confirmation !== study.name) {
      throw badRequest(`To delete this study, type its name exactly: "${study.name}".`, [
        { field: "body.confirm", message: "must repeat the study's name exactly" },
      ]);
    }
    await tx
      .update(studies)
      .set({ deletedAt: now, deletedBy: actor.id })
      .where(eq(studies.id, study.id));
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "study.deleted",
      targetType: "study",
      targetId: study.id,
      before: auditView(study),
      after: { deletedAt: now.toISOString(), restorableUntil: restorableUntil(now).toISOString() },
      at: now,
    });
  });
}

/**
 * Restores a deleted study within the restore window: everything it held,
 * its audit trail included, is back as it was. 409 study_not_deleted when it
 * is not deleted; 410 restore_expired after the window (the study stays
 * stored).
 */
export async function restoreStudy(
  db: Database,
  actor: Actor,
  study: Study,
  role: Role,
  now: Date,
): Promise<StudyDetail> {
  if (!study.deletedAt)
    throw new HttpError(
      409,
      "study_not_deleted",
      `The study "${study.name}" is not deleted; there is nothing to restore.`,
    );
  const until = restorableUntil(study.deletedAt);
  if (now.getTime() > until.getTime()) {
    throw new HttpError(
      410,
      "restore_expired",
      `The study "${study.name}" was deleted on ${day(study.deletedAt)}. A deleted study can be restored for ${restoreWindowDays} days, until ${day(until)}; that time has passed, so it can no longer be restored.`,
    );
  }
  const restored = await db.transaction(async (tx) => {
    const [row] = await tx
      .update(studies)
      .set({ deletedAt: null, deletedBy: null, updatedAt: now })
      .where(eq(studies.id, study.id))
      .returning();
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "study.restored",
      targetType: "study",
      targetId: study.id,
      before: { deletedAt: study.deletedAt?.toISOString(), deletedBy: study.deletedBy },
      after: auditView(row),
      at: now,
    });
    return row;
  });
  return studyDetail(db, restored, role);
}

/**
 * Archives a study: read-only for every role, still readable. 409 when a
 * fit is still queued or running (it would change the study after the
 * archive): wait for it or cancel it first.
 */
export async function archiveStudy(
  db: Database,
  actor: Actor,
  study: Study,
  role: Role,
  now: Date,
): Promise<StudyDetail> {
  const archived = await db.transaction(async (tx) => {
    const running = await tx
      .select({ id: fits.id })
      .from(fits)
      .where(and(eq(fits.studyId, study.id), inArray(fits.status, ["queued", "running"])));
    if (running.length > 0) {
      throw new HttpError(
        409,
        "fits_in_progress",
        `The study "${study.name}" has ${running.length} fit${running.length === 1 ? "" : "s"} queued or running. Wait until ${running.length === 1 ? "it finishes" : "they finish"} or cancel ${running.length === 1 ? "it" : "them"}, then archive.`,
        { fitIds: running.map((r) => r.id) },
      );
    }
    const [row] = await tx
      .update(studies)
      .set({ archivedAt: now, archivedBy: actor.id, updatedAt: now })
      .where(eq(studies.id, study.id))
      .returning();
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "study.archived",
      targetType: "study",
      targetId: study.id,
      before: { archivedAt: null },
      after: { archivedAt: now.toISOString() },
      at: now,
    });
    return row;
  });
  return studyDetail(db, archived, role);
}

/** Unarchives a study: its members can change it again. 409 study_not_archived when it is not archived. */
export async function unarchiveStudy(
  db: Database,
  actor: Actor,
  study: Study,
  role: Role,
  now: Date,
): Promise<StudyDetail> {
  if (!study.archivedAt)
    throw new HttpError(409, "study_not_archived", `The study "${study.name}" is not archived.`);
  const unarchived = await db.transaction(async (tx) => {
    const [row] = await tx
      .update(studies)
      .set({ archivedAt: null, archivedBy: null, updatedAt: now })
      .where(eq(studies.id, study.id))
      .returning();
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "study.unarchived",
      targetType: "study",
      targetId: study.id,
      before: { archivedAt: study.archivedAt?.toISOString(), archivedBy: study.archivedBy },
      after: { archivedAt: null },
      at: now,
    });
    return row;
  });
  return studyDetail(db, unarchived, role);
}

/** A date as YYYY-MM-DD (UTC) for messages. */
function day(at: Date): string {
  return at.toISOString().slice(0, 10);
}
