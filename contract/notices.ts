/**
 * E-mail notices about fits, in one place: their kinds, who gets each, the
 * words of the e-mail, the per-study setting that turns them off for one
 * person, and the audit events that record that they were sent. Used by the
 * server (server/services/notices.ts sends them) and the web app (the Team
 * screen's switch). Zod only, so the web app can use it.
 *
 * - `fit.awaiting-approval`: a fit became done and waits for approval. Sent
 *   to the study's Reviewers and Owners other than the person who started
 *   it. The starter is left out whether or not the study's setting "A
 *   second person signs off" is on: while it is on they may not approve it,
 *   and while it is off they know the fit is done since they started it.
 * - `fit.sealed`: a fit was sealed. Sent to the whole team (every member,
 *   the person who sealed it included: the e-mail records the seal's hash).
 *
 * A person turns notices of one study off with the switch on its Team
 * screen; the setting is kept in `user_preferences` under `notices:<studyId>`
 * as `{ enabled: boolean }` (absent: on). Notices are sent after the change
 * commits and never hold up or undo it; the audit trail records who got
 * them (`notice.sent`) or could not be reached (`notice.failed`),
 * never what they said.
 */
import { z } from "zod";
import type { Role } from "./permissions";

export const noticeKinds = ["fit.awaiting-approval", "fit.sealed"] as const;
export type NoticeKind = (typeof noticeKinds)[number];

/** The roles a notice goes to (the fit's starter is then left out of `fit.awaiting-approval`). */
export const noticeAudience: Record<NoticeKind, readonly Role[]> = {
  "fit.awaiting-approval": ["owner", "reviewer"],
  "fit.sealed": ["owner", "analyst", "reviewer", "viewer"],
};

/** A member as the recipient rule sees them. */
export interface NoticeMember {
  userId: string;
  role: Role;
  email: string | null;
  /** The person's notice setting for this study (true when never set). */
  enabled: boolean;
}

/**
 * Who gets a notice of `kind` about a fit `starterId` started: members in
 * the kind's audience with an e-mail address and notices on, the starter
 * left out of `fit.awaiting-approval`. Keeps the members' order. Pure.
 */
export function noticeRecipients(
  kind: NoticeKind,
  members: readonly NoticeMember[],
  starterId: string,
): NoticeMember[] {
  return members.filter(
    (m) =>
      noticeAudience[kind].includes(m.role) &&
      m.email !== null &&
      m.email !== "" &&
      m.enabled &&
      !(kind === "fit.awaiting-approval" && m.userId === starterId),
  );
}

// ─── The per-study setting ───

/** The `user_preferences` key of a person's notice setting for a study. */
export function noticePreferenceKey(studyId: string): string {
  return `notices:${studyId}`;
}

/** The stored value and the body of `PUT /api/studies/:studyId/notices`. */
export const noticeSettingSchema = z.strictObject({
  enabled: z.boolean({ error: "must be true or false" }),
});
export type NoticeSetting = z.infer<typeof noticeSettingSchema>;

/** A person who never set it gets notices. */
export const defaultNoticeSetting: NoticeSetting = { enabled: true };

/** The switch's label and its line on the Team screen. */
export const noticeSettingLabel = "E-mail me about fits";
export const noticeSettingExplanation =
  "An e-mail with a link when a fit of this study waits for approval (Reviewers and Owners, not the person who started it) and when a fit is sealed (everyone). Only for you; others keep their own setting.";

// ─── The e-mail ───

/** What a notice names. */
export interface NoticeFacts {
  studyName: string;
  /** The fit's model, or null when it is not known. */
  modelName: string | null;
  /** Who started the fit (name or e-mail), or null. */
  starter: string | null;
  /** Who sealed the fit (name or e-mail), for `fit.sealed`. */
  sealer?: string | null;
  /** The seal's SHA-256, for `fit.sealed`. */
  sha256?: string | null;
  /** Address of the fit on the app. */
  url: string;
}

/** What happened, as the e-mail's subject and the Activity trail say it ("waits for approval"). */
export const noticeEventWords: Record<NoticeKind, string> = {
  "fit.awaiting-approval": "waits for approval",
  "fit.sealed": "was sealed",
};

function fitName(facts: Pick<NoticeFacts, "modelName">): string {
  return facts.modelName ? `The fit of “${facts.modelName}”` : "A fit";
}

/** Subject, lines, link label and footer of a notice (the mailer turns them into text and HTML). */
export function noticeMail(
  kind: NoticeKind,
  facts: NoticeFacts,
): { subject: string; lines: string[]; linkLabel: string; url: string; footer: string } {
  const what = `${fitName(facts)} in the study “${facts.studyName}” ${noticeEventWords[kind]}`;
  const lines =
    kind === "fit.awaiting-approval"
      ? [
          `${what}.`,
          `${facts.starter ? `${facts.starter} started it. ` : ""}A Reviewer or Owner other than the person who started it checks the results and approves it for sealing.`,
        ]
      : [
          `${what}${facts.sealer ? ` by ${facts.sealer}` : ""}.`,
          `Its recipe and results can no longer change.${facts.sha256 ? ` SHA-256 of the recipe and result: ${facts.sha256}.` : ""}`,
        ];
  return {
    subject: `${what} — Covarion`,
    lines,
    linkLabel: "Open the fit",
    url: facts.url,
    footer:
      "You get this because you are a member of the study. To stop these e-mails for this study, turn off “E-mail me about fits” on its Team screen.",
  };
}

// ─── The audit events ───

export const noticesSentKind = "notice.sent";
export const noticesFailedKind = "notice.failed";

/** What a notice event records (`after`): the kind, the fit and who — never the e-mail's content. */
export interface NoticeEventFacts {
  notice: NoticeKind;
  fitId: string;
  recipients: string[];
  count: number;
  /** For `notice.failed`: the transport's error code (e.g. ECONNREFUSED), when it gave one. */
  error?: string;
}
