/**
 * E-mail notices about fits (contract/notices.ts holds the kinds, the
 * recipient rule and the words): a fit that became done and waits for
 * approval, and a fit that was sealed.
 *
 * `FitNotices.fitDone` / `fitSealed` are called after the change has
 * committed (the fit jobs' "done" status event; the seal route after
 * `sealFit`) and return at once: the e-mails go out in the background
 * through the same mailer as sign-in links (the local mail fake in demo and
 * development). Nothing here throws to the caller: a failure is logged and
 * recorded in the audit trail (`notice.failed`, with who could not be
 * reached), and the fit or seal stays as it is. `whenIdle()` resolves once
 * every notice started so far has been sent or has failed (tests, shutdown).
 *
 * Each person's per-study setting lives in `user_preferences` under
 * `notices:<studyId>` (`readNoticeSetting` / `writeNoticeSetting`).
 */
import { and, eq, inArray, isNull } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import {
  fitSeals,
  fits,
  memberships,
  models,
  studies,
  userPreferences,
  users,
} from "../../db/schema";
import {
  defaultNoticeSetting,
  type NoticeEventFacts,
  type NoticeKind,
  type NoticeMember,
  type NoticeSetting,
  noticeMail,
  noticePreferenceKey,
  noticeRecipients,
  noticeSettingSchema,
  noticesFailedKind,
  noticesSentKind,
} from "../../contract/notices";
import { recordEvent } from "./audit";
import { linkMail, type Mailer } from "./mailer";

export interface NoticeDeps {
  db: Database;
  mailer: Mailer;
  /** The app's public address; links point at `${publicUrl}/studies/<id>/fits/<id>`. */
  publicUrl: string;
  clock: () => Date;
  log: (error: unknown, context: string) => void;
}

/** A person's notice setting for a study (on when never set, or when stored under an older shape). */
export async function readNoticeSetting(
  db: Queryable,
  userId: string,
  studyId: string,
): Promise<NoticeSetting> {
  const [row] = await db
    .select({ value: userPreferences.value })
    .from(userPreferences)
    .where(
      and(
        eq(userPreferences.userId, userId),
        eq(userPreferences.key, noticePreferenceKey(studyId)),
      ),
    );
  const checked = noticeSettingSchema.safeParse(row?.value);
  return checked.success ? checked.data : defaultNoticeSetting;
}

/** Stores a person's notice setting for a study. */
export async function writeNoticeSetting(
  db: Queryable,
  userId: string,
  studyId: string,
  setting: NoticeSetting,
  now: Date,
): Promise<NoticeSetting> {
  const key = noticePreferenceKey(studyId);
  await db
    .insert(userPreferences)
    .values({ userId, key, value: setting, updatedAt: now })
    .onConflictDoUpdate({
      target: [userPreferences.userId, userPreferences.key],
      set: { value: setting, updatedAt: now },
    });
  return setting;
}

/** The members of a study with their e-mail and notice setting, in a stable order. */
async function noticeMembers(db: Queryable, studyId: string): Promise<NoticeMember[]> {
  const rows = await db
    .select({ userId: memberships.userId, role: memberships.role, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.studyId, studyId))
    .orderBy(memberships.createdAt, memberships.userId);
  if (rows.length === 0) return [];
  const settings = await db
    .select({ userId: userPreferences.userId, value: userPreferences.value })
    .from(userPreferences)
    .where(
      and(
        eq(userPreferences.key, noticePreferenceKey(studyId)),
        inArray(
          userPreferences.userId,
          rows.map((r) => r.userId),
        ),
      ),
    );
  const off = new Set(
    settings
      .filter((s) => noticeSettingSchema.safeParse(s.value).data?.enabled === false)
      .map((s) => s.userId),
  );
  return rows.map((r) => ({ ...r, enabled: !off.has(r.userId) }));
}

function personName(person: { name: string | null; email: string | null } | undefined) {
  return person?.name?.trim() || person?.email || null;
}

export class FitNotices {
  private readonly pending = new Set<Promise<void>>();

  constructor(private readonly deps: NoticeDeps) {}

  /** A fit became done: its Reviewers and Owners other than its starter are told it waits for approval. */
  fitDone(fitId: string): void {
    this.start("fit.awaiting-approval", fitId);
  }

  /** A fit was sealed: the whole team is told. */
  fitSealed(fitId: string): void {
    this.start("fit.sealed", fitId);
  }

  /** Resolves once every notice started so far was sent or failed. */
  async whenIdle(): Promise<void> {
    while (this.pending.size > 0) await Promise.allSettled([...this.pending]);
  }

  private start(kind: NoticeKind, fitId: string): void {
    const job = this.send(kind, fitId).catch((error) =>
      this.deps.log(error, `${kind} notices of fit ${fitId}`),
    );
    this.pending.add(job);
    void job.finally(() => this.pending.delete(job));
  }

  private async send(kind: NoticeKind, fitId: string): Promise<void> {
    const { db } = this.deps;
    const [fit] = await db
      .select({
        id: fits.id,
        studyId: fits.studyId,
        modelId: fits.modelId,
        createdBy: fits.createdBy,
        status: fits.status,
      })
      .from(fits)
      .where(eq(fits.id, fitId));
    if (!fit || fit.status !== "done") return;
    const [study] = await db
      .select({ name: studies.name })
      .from(studies)
      .where(and(eq(studies.id, fit.studyId), isNull(studies.deletedAt)));
    if (!study) return;
    const [[model], [seal], members] = await Promise.all([
      db.select({ name: models.name }).from(models).where(eq(models.id, fit.modelId)),
      kind === "fit.sealed"
        ? db
            .select({ sha256: fitSeals.sha256, sealedBy: fitSeals.sealedBy, model: fitSeals.model })
            .from(fitSeals)
            .where(eq(fitSeals.fitId, fit.id))
        : Promise.resolve([]),
      noticeMembers(db, fit.studyId),
    ]);
    if (kind === "fit.sealed" && !seal) return;
    const recipients = noticeRecipients(kind, members, fit.createdBy);
    if (recipients.length === 0) return;
    const people = await db
      .select({ id: users.id, name: users.name, email: users.email })
      .from(users)
      .where(inArray(users.id, [fit.createdBy, ...(seal ? [seal.sealedBy] : [])]));
    const sealedModel = (seal?.model as { name?: string } | null | undefined)?.name;
    const mail = noticeMail(kind, {
      studyName: study.name,
      modelName: sealedModel ?? model?.name ?? null,
      starter: personName(people.find((p) => p.id === fit.createdBy)),
      sealer: seal ? personName(people.find((p) => p.id === seal.sealedBy)) : null,
      sha256: seal?.sha256 ?? null,
      url: `${this.deps.publicUrl}/studies/${fit.studyId}/fits/${fit.id}`,
    });
    const sent: string[] = [];
    const failed: string[] = [];
    let errorCode: string | undefined;
    for (const person of recipients) {
      try {
        await this.deps.mailer.send(linkMail({ to: person.email as string, ...mail }));
        sent.push(person.userId);
      } catch (error) {
        failed.push(person.userId);
        errorCode ??= (error as { code?: unknown }).code?.toString();
        this.deps.log(error, `${kind} notice of fit ${fit.id} to ${person.userId}`);
      }
    }
    const at = this.deps.clock();
    const event = (recipientIds: string[], error?: string): NoticeEventFacts => ({
      notice: kind,
      fitId: fit.id,
      recipients: recipientIds,
      count: recipientIds.length,
      ...(error ? { error } : {}),
    });
    await db.transaction(async (tx) => {
      if (sent.length > 0)
        await recordEvent(tx, {
          studyId: fit.studyId,
          actorId: null,
          kind: noticesSentKind,
          targetType: "fit",
          targetId: fit.id,
          after: event(sent),
          at,
        });
      if (failed.length > 0)
        await recordEvent(tx, {
          studyId: fit.studyId,
          actorId: null,
          kind: noticesFailedKind,
          targetType: "fit",
          targetId: fit.id,
          after: event(failed, errorCode ?? "send_failed"),
          at,
        });
    });
  }
}
