/**
 * Invitations by e-mail. An Owner invites an address with a role; the
 * e-mail (sent through the same mailer as sign-in links) carries a
 * single-use link to the app page /invitations/<token>, valid for 7 days.
 * Only a SHA-256 hash of the token is stored. Accepting requires being
 * signed in with the invited address; Owners can revoke pending ones.
 * Every step is audited in the same transaction as the change.
 */
import { createHash, randomBytes } from "node:crypto";
import { and, desc, eq, gt, isNull } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import {
  invitations,
  memberships,
  studies,
  users,
  type Invitation,
  type Study,
} from "../../db/schema";
import type { Role } from "../../contract/permissions";
import type {
  InvitationPreview,
  InvitationStatus,
  InvitationView,
} from "../../contract/views/team";
import { conflict, forbidden, HttpError, notFound } from "../http/errors";
import { assertNotArchived } from "../auth/permissions";
import { recordEvent } from "./audit";
import { linkMail, type Mailer } from "./mailer";

export const invitationLifetimeMs = 7 * 24 * 60 * 60 * 1000;

export function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

export function statusOf(invitation: Invitation, now: Date): InvitationStatus {
  if (invitation.acceptedAt) return "accepted";
  if (invitation.revokedAt) return "revoked";
  if (invitation.expiresAt.getTime() <= now.getTime()) return "expired";
  return "pending";
}

const roleWords: Record<Role, string> = {
  owner: "Owner",
  analyst: "Analyst",
  reviewer: "Reviewer",
  viewer: "Viewer",
};

/** Pending invitations of a study, newest first. */
export async function listPendingInvitations(
  db: Queryable,
  studyId: string,
  now: Date,
): Promise<InvitationView[]> {
  const rows = await db
    .select({ invitation: invitations, inviterName: users.name, inviterEmail: users.email })
    .from(invitations)
    .innerJoin(users, eq(users.id, invitations.invitedBy))
    .where(
      and(
        eq(invitations.studyId, studyId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        gt(invitations.expiresAt, now),
      ),
    )
    .orderBy(desc(invitations.createdAt));
  return rows.map((r) => view(r.invitation, r.inviterName, r.inviterEmail, now));
}

function view(
  inv: Invitation,
  inviterName: string | null,
  inviterEmail: string | null,
  now: Date,
): InvitationView {
  return {
    id: inv.id,
    email: inv.email,
    role: inv.role,
    status: statusOf(inv, now),
    invitedBy: { id: inv.invitedBy, name: inviterName, email: inviterEmail },
    createdAt: inv.createdAt.toISOString(),
    expiresAt: inv.expiresAt.toISOString(),
  };
}

export interface InviteDeps {
  db: Database;
  mailer: Mailer;
  publicUrl: string;
  now: Date;
}

/**
 * Creates an invitation and e-mails its link. 409 when the address already
 * belongs to a member or has a pending invitation. The e-mail is sent
 * before the row is written (a slow mail server must not hold a database
 * transaction open); the checks run again inside the transaction that
 * writes the row and its audit event.
 */
export async function invite(
  deps: InviteDeps,
  actor: { id: string; name: string | null; email: string },
  study: Study,
  input: { email: string; role: Role },
): Promise<InvitationView> {
  const { db, now } = deps;
  const token = randomBytes(32).toString("base64url");
  const url = `${deps.publicUrl}/invitations/${token}`;
  await assertInvitable(db, study.id, input.email, now);
  const inviter = actor.name ? `${actor.name} (${actor.email})` : actor.email;
  await deps.mailer.send(
    linkMail({
      to: input.email,
      subject: `Invitation to the study "${study.name}" on Covarion`,
      lines: [
        `${inviter} invites you to join the study "${study.name}" on Covarion as ${roleWords[input.role]}.`,
        `Open the link below and sign in with this address (${input.email}) to accept. The link works once and expires in 7 days.`,
      ],
      linkLabel: "Accept the invitation",
      url,
      footer: "If you did not expect this invitation, you can ignore this e-mail.",
    }),
  );
  return db.transaction(async (tx) => {
    await assertInvitable(tx, study.id, input.email, now);
    const [row] = await tx
      .insert(invitations)
      .values({
        studyId: study.id,
        email: input.email,
        role: input.role,
        tokenHash: hashToken(token),
        invitedBy: actor.id,
        createdAt: now,
        expiresAt: new Date(now.getTime() + invitationLifetimeMs),
      })
      .returning();
    await recordEvent(tx, {
      studyId: study.id,
      actorId: actor.id,
      kind: "invitation.sent",
      targetType: "invitation",
      targetId: row.id,
      after: { email: row.email, role: row.role, expiresAt: row.expiresAt.toISOString() },
      at: now,
    });
    return view(row, actor.name, actor.email, now);
  });
}

async function assertInvitable(
  db: Queryable,
  studyId: string,
  email: string,
  now: Date,
): Promise<void> {
  const existingMember = await db
    .select({ userId: memberships.userId })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.studyId, studyId), eq(users.email, email)))
    .limit(1);
  if (existingMember.length > 0) throw conflict(`${email} is already a member of this study.`);
  const pending = await db
    .select({ id: invitations.id })
    .from(invitations)
    .where(
      and(
        eq(invitations.studyId, studyId),
        eq(invitations.email, email),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        gt(invitations.expiresAt, now),
      ),
    )
    .limit(1);
  if (pending.length > 0)
    throw conflict(`${email} already has a pending invitation; revoke it to send a new one.`);
}

/** Revokes a pending invitation of the study. 404 if unknown, 409 if no longer pending. */
export async function revoke(
  db: Database,
  actorId: string,
  studyId: string,
  invitationId: string,
  now: Date,
): Promise<void> {
  await db.transaction(async (tx) => {
    const [inv] = await tx
      .select()
      .from(invitations)
      .where(and(eq(invitations.id, invitationId), eq(invitations.studyId, studyId)))
      .limit(1);
    if (!inv) throw notFound("Invitation not found.");
    const status = statusOf(inv, now);
    if (status !== "pending")
      throw conflict(`This invitation is ${status} and can no longer be revoked.`);
    await tx
      .update(invitations)
      .set({ revokedAt: now, revokedBy: actorId })
      .where(eq(invitations.id, inv.id));
    await recordEvent(tx, {
      studyId,
      actorId,
      kind: "invitation.revoked",
      targetType: "invitation",
      targetId: inv.id,
      before: { email: inv.email, role: inv.role, status },
      after: { status: "revoked" },
      at: now,
    });
  });
}

async function findByToken(db: Queryable, token: string) {
  const rows = await db
    .select({
      invitation: invitations,
      study: studies,
      inviterName: users.name,
      inviterEmail: users.email,
    })
    .from(invitations)
    .innerJoin(studies, eq(studies.id, invitations.studyId))
    .innerJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.tokenHash, hashToken(token)), isNull(studies.deletedAt)))
    .limit(1);
  return rows[0] ?? null;
}

/** What the invitation page shows before accepting. 404 for an unknown token. */
export async function previewInvitation(
  db: Database,
  token: string,
  now: Date,
): Promise<InvitationPreview> {
  const found = await findByToken(db, token);
  if (!found) throw notFound("This invitation link is not valid.");
  const { invitation: inv } = found;
  return {
    studyName: found.study.name,
    email: inv.email,
    role: inv.role,
    status: statusOf(inv, now),
    invitedBy: { name: found.inviterName, email: found.inviterEmail },
    expiresAt: inv.expiresAt.toISOString(),
  };
}

/**
 * Accepts an invitation for the signed-in person. 404 unknown token; 410
 * when already used, revoked or expired; 403 when signed in with another
 * address; 409 when already a member.
 */
export async function accept(
  db: Database,
  user: { id: string; email: string },
  token: string,
  now: Date,
): Promise<{ studyId: string; role: Role }> {
  return db.transaction(async (tx) => {
    const found = await findByToken(tx, token);
    if (!found) throw notFound("This invitation link is not valid.");
    const inv = found.invitation;
    const status = statusOf(inv, now);
    if (status === "accepted")
      throw new HttpError(410, "invitation_used", "This invitation has already been used.");
    if (status === "revoked")
      throw new HttpError(
        410,
        "invitation_revoked",
        "This invitation was revoked by the study's Owner.",
      );
    if (status === "expired")
      throw new HttpError(
        410,
        "invitation_expired",
        "This invitation has expired; ask the study's Owner for a new one.",
      );
    if (user.email.toLowerCase() !== inv.email) {
      throw forbidden(
        `This invitation was sent to ${inv.email}; you are signed in as ${user.email}. Sign in with the invited address to accept it.`,
      );
    }
    assertNotArchived(found.study);
    const already = await tx
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.studyId, inv.studyId), eq(memberships.userId, user.id)))
      .limit(1);
    if (already.length > 0)
      throw conflict(`You are already a member of this study (${already[0]?.role}).`);
    await tx
      .insert(memberships)
      .values({ studyId: inv.studyId, userId: user.id, role: inv.role, createdAt: now });
    await tx
      .update(invitations)
      .set({ acceptedAt: now, acceptedBy: user.id })
      .where(eq(invitations.id, inv.id));
    await recordEvent(tx, {
      studyId: inv.studyId,
      actorId: user.id,
      kind: "invitation.accepted",
      targetType: "invitation",
      targetId: inv.id,
      before: { status },
      after: { email: inv.email, role: inv.role, status: "accepted" },
      at: now,
    });
    return { studyId: inv.studyId, role: inv.role };
  });
}
