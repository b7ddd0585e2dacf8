/**
 * A study's team: list members, change a member's role, remove a member
 * (or leave). The last Owner can neither be demoted nor leave: a study
 * always keeps at least one Owner. Changes are audited in the same
 * transaction.
 */
import { and, asc, count, eq } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import type { Role } from "../../contract/permissions";
import { memberships, users } from "../../db/schema";
import { conflict, notFound } from "../http/errors";
import type { MemberView } from "../../contract/views/team";
import { recordEvent } from "./audit";

const roleOrder: Record<Role, number> = { owner: 0, analyst: 1, reviewer: 2, viewer: 3 };

export async function listMembers(db: Queryable, studyId: string): Promise<MemberView[]> {
  const rows = await db
    .select({
      userId: memberships.userId,
      email: users.email,
      name: users.name,
      role: memberships.role,
      joinedAt: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.studyId, studyId))
    .orderBy(asc(memberships.createdAt));
  return rows
    .map((r) => ({ ...r, joinedAt: r.joinedAt.toISOString() }))
    .sort(
      (a, b) =>
        roleOrder[a.role] - roleOrder[b.role] || (a.email ?? "").localeCompare(b.email ?? ""),
    );
}

async function memberOf(tx: Queryable, studyId: string, userId: string): Promise<MemberView> {
  const rows = await tx
    .select({
      userId: memberships.userId,
      email: users.email,
      name: users.name,
      role: memberships.role,
      joinedAt: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.studyId, studyId), eq(memberships.userId, userId)))
    .limit(1);
  const row = rows[0];
  if (!row) throw notFound("That person is not a member of this study.");
  return { ...row, joinedAt: row.joinedAt.toISOString() };
}

async function ownerCount(tx: Queryable, studyId: string): Promise<number> {
  const [row] = await tx
    .select({ n: count() })
    .from(memberships)
    .where(and(eq(memberships.studyId, studyId), eq(memberships.role, "owner")));
  return Number(row?.n ?? 0);
}

const lastOwnerMessage = "A study needs at least one Owner: make someone else Owner first.";

/** Changes a member's role. Throws 404 for a non-member, 409 when it would leave no Owner. */
export async function changeRole(
  db: Database,
  actorId: string,
  studyId: string,
  userId: string,
  role: Role,
  now: Date,
): Promise<MemberView> {
  const changed = await db.transaction(async (tx) => {
    const member = await memberOf(tx, studyId, userId);
    if (member.role === role) return member;
    if (member.role === "owner" && (await ownerCount(tx, studyId)) <= 1)
      throw conflict(lastOwnerMessage);
    await tx
      .update(memberships)
      .set({ role })
      .where(and(eq(memberships.studyId, studyId), eq(memberships.userId, userId)));
    await recordEvent(tx, {
      studyId,
      actorId,
      kind: "member.role_changed",
      targetType: "user",
      targetId: userId,
      before: { email: member.email, name: member.name, role: member.role },
      after: { email: member.email, name: member.name, role },
      at: now,
    });
    return { ...member, role };
  });
  return changed;
}

/** Removes a member (or, when `actorId === userId`, leaves). 409 when it would leave no Owner. */
export async function removeMember(
  db: Database,
  actorId: string,
  studyId: string,
  userId: string,
  now: Date,
): Promise<void> {
  await db.transaction(async (tx) => {
    const member = await memberOf(tx, studyId, userId);
    if (member.role === "owner" && (await ownerCount(tx, studyId)) <= 1)
      throw conflict(lastOwnerMessage);
    await tx
      .delete(memberships)
      .where(and(eq(memberships.studyId, studyId), eq(memberships.userId, userId)));
    await recordEvent(tx, {
      studyId,
      actorId,
      kind: actorId === userId ? "member.left" : "member.removed",
      targetType: "user",
      targetId: userId,
      before: { email: member.email, name: member.name, role: member.role },
      at: now,
    });
  });
}
