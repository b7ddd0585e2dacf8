/**
 * Studies: create (the creator becomes Owner), read, update (name,
 * description, restricted flag), soft delete. Every change is recorded in
 * the audit trail in the same transaction.
 */
import { and, eq, inArray, isNull, sql } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { perDatabase } from "../../db/prepared";
import { cachedRead } from "../../db/read-cache";
import { datasetVersions, fits, memberships, models, studies, type Role, type Study } from "../../db/schema";
import { capabilitiesOf } from "../auth/permissions";
import { badRequest } from "../http/errors";
import { recordEvent } from "./audit";

export interface StudyCounts {
  members: number;
  participants: number;
  models: number;
  fits: number;
}

export interface StudySummary {
  id: string;
  name: string;
  description: string;
  restricted: boolean;
  role: Role;
  counts: StudyCounts;
  createdAt: string;
  updatedAt: string;
}

export interface StudyDetail extends StudySummary {
  /** Actions the caller's role allows in this study (see server/auth/permissions.ts). */
  capabilities: string[];
}

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
 * uploaded, the newest participant sheet); models not deleted; fits.
 * The embedded database answers one query at a time, so the counts are
 * subqueries of the query that reads the studies rather than queries of
 * their own. (The outer study is named explicitly: inside a subquery an
 * unqualified id would be the inner table's.)
 */
function countColumns() {
  const outer = sql.raw(`"studies"."id"`);
  const latest = (kind: "brain" | "participants") =>
    sql<number | null>`(select dv.participant_count from ${datasetVersions} dv
      where dv.study_id = ${outer} and dv.kind = ${kind} order by dv.version desc limit 1)`;
  return {
    members: sql<number>`(select count(*) from ${memberships} m where m.study_id = ${outer})`,
    models: sql<number>`(select count(*) from ${models} mo where mo.study_id = ${outer} and mo.deleted_at is null)`,
    fits: sql<number>`(select count(*) from ${fits} f where f.study_id = ${outer})`,
    brainParticipants: latest("brain"),
    sheetParticipants: latest("participants"),
  };
}

function countsOf(row: { members: unknown; models: unknown; fits: unknown; brainParticipants: unknown; sheetParticipants: unknown }): StudyCounts {
  return {
    members: Number(row.members),
    models: Number(row.models),
    fits: Number(row.fits),
    participants: Number(row.brainParticipants ?? row.sheetParticipants ?? 0),
  };
}

/** Counts per study (see countColumns). One query (kept until the next write, see db/read-cache.ts). */
export async function studyCounts(db: Queryable, studyIds: readonly string[]): Promise<Map<string, StudyCounts>> {
  const out = new Map<string, StudyCounts>();
  for (const id of studyIds) out.set(id, { members: 0, participants: 0, models: 0, fits: 0 });
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
  const rows = [...(await cachedRead(db, `studies of ${userId}`, () => studiesOfPerson(db).execute({ userId })))];
  rows.sort((a, b) => b.study.createdAt.getTime() - a.study.createdAt.getTime() || a.study.name.localeCompare(b.study.name));
  return rows.map((r) => summary(r.study, r.role, countsOf(r)));
}

export async function studyDetail(db: Database, study: Study, role: Role): Promise<StudyDetail> {
  const counts = (await studyCounts(db, [study.id])).get(study.id) as StudyCounts;
  return { ...summary(study, role, counts), capabilities: capabilitiesOf(role, study.restricted) };
}

export interface NewStudy {
  name: string;
  description?: string;
  restricted?: boolean;
}

/** Creates a study with `actor` as its Owner. */
export async function createStudy(db: Database, actor: Actor, input: NewStudy, now: Date): Promise<StudyDetail> {
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
    await tx.insert(memberships).values({ studyId: created.id, userId: actor.id, role: "owner", createdAt: now });
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

export interface StudyChanges {
  name?: string;
  description?: string;
  restricted?: boolean;
}

/** Renames, describes or (un)restricts a study; records only the fields that changed. */
export async function updateStudy(db: Database, actor: Actor, study: Study, role: Role, changes: StudyChanges, now: Date): Promise<StudyDetail> {
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
      await recordEvent(tx, { studyId: study.id, actorId: actor.id, kind: "study.updated", targetType: "study", targetId: study.id, before, after, at: now });
    }
    return row;
  });
  return studyDetail(db, updated, role);
}

/**
 * Soft-deletes a study: it disappears from every route, its rows and audit
 * trail stay. `confirmation` must repeat the study's name exactly.
 */
export async function deleteStudy(db: Database, actor: Actor, study: Study, confirmation: string, now: Date): Promise<void> {
  if (confirmation !== study.name) {
    throw badRequest(`To delete this study, type its name exactly: "${study.name}".`, [
      { field: "body.confirm", message: "must repeat the study's name exactly" },
    ]);
  }
  await db.transaction(async (tx) => {
    await tx.update(studies).set({ deletedAt: now, deletedBy: actor.id }).where(eq(studies.id, study.id));
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "study.deleted",
      targetType: "study",
      targetId: study.id,
      before: auditView(study),
      after: { deletedAt: now.toISOString() },
      at: now,
    });
  });
}
