/**
 * The one permission module: the `authorize(action)` middleware every API
 * route carries, enforcing the table of action → audience in
 * contract/permissions.ts. No route decides rights by itself.
 *
 * A study-scoped action concerns the study named by `:studyId` (or, on
 * routes such as `/fits/:fitId`, the study the route's `studyOf` resolver
 * finds). A study that does not exist, is deleted, or that you do not
 * belong to answers 404 (its existence is not revealed); a member whose
 * role is not listed gets 403.
 *
 * An archived study is read-only for every role: `authorize` answers 409
 * `study_archived` to every change (`writes(…)`) of it, here and nowhere
 * else (only `study.unarchive`, marked `inState: "archived"`, passes). An
 * action marked `inState: "deleted"` (restoring) reaches a deleted study,
 * which every other action treats as not found.
 *
 * After `authorize` passes, `res.locals.user` is the signed-in person and,
 * for study actions, `res.locals.study` and `res.locals.role` are set.
 */
import { and, eq, isNull, sql } from "drizzle-orm";
import type { RequestHandler, Response } from "express";
import type { Database } from "../../db/client";
import { perDatabase } from "../../db/prepared";
import { cachedRead } from "../../db/read-cache";
import { memberships, studies, type Study } from "../../db/schema";
import { type Action, type Audience, permissions, type Role } from "../../contract/permissions";
import { forbidden, HttpError, notFound, unauthorized } from "../http/errors";
import { idSchema } from "../http/validate";
import { currentUser, type SessionUser } from "./session";

/** The middleware's tag, read by the route list (tests and `listRoutes`). */
export const permissionTag = Symbol.for("covarion.permission");

export interface AuthorizedStudy {
  study: Study;
  role: Role;
}

/**
 * True when `role` may perform `action` in a study with the given
 * `restricted` flag; `isSelf` tells whether the route targets the person
 * themselves. Pure; used by `authorize` and by screens' capability lists.
 */
export function roleMay(
  action: Action,
  role: Role,
  options: { restricted?: boolean; isSelf?: boolean } = {},
): boolean {
  const audience: Audience = permissions[action];
  if (audience.scope !== "study") return true;
  let allowed =
    audience.roles.includes(role) ||
    (options.isSelf === true && (audience.self?.includes(role) ?? false));
  if (allowed && options.restricted && audience.whenRestricted)
    allowed = audience.whenRestricted.includes(role);
  return allowed;
}

/** The state of a study that decides which actions it accepts. */
export type StudyState = Pick<Study, "name" | "archivedAt" | "deletedAt">;

/** The answer to any change of an archived study (409 study_archived). */
export function studyArchived(study: Pick<Study, "name">): HttpError {
  return new HttpError(
    409,
    "study_archived",
    `The study "${study.name}" is archived: it is read-only for every role. An Owner can unarchive it (Team → Archive) to change it again.`,
  );
}

/**
 * The archive rule, in one place: null when `action` may proceed in the
 * study's current state, else the error to answer. Changes of an archived
 * study are refused, except the action that unarchives it.
 */
export function stateRefusal(action: Action, study: StudyState): HttpError | null {
  const audience: Audience = permissions[action];
  if (audience.scope !== "study") return null;
  if (study.archivedAt && audience.access === "write" && audience.inState !== "archived")
    return studyArchived(study);
  return null;
}

/** Throws 409 study_archived when the study is archived (for changes reached without a study-scoped route, e.g. accepting an invitation). */
export function assertNotArchived(study: StudyState): void {
  if (study.archivedAt) throw studyArchived(study);
}

/**
 * Every action the role may perform in the study as it is now (for the web
 * app to show or hide controls): an archived study lists only reads and
 * unarchiving; actions about another state (restoring a deleted study,
 * unarchiving a study that is not archived) are left out.
 */
export function capabilitiesOf(
  role: Role,
  study: StudyState & Pick<Study, "restricted">,
): Action[] {
  const state = study.deletedAt ? "deleted" : study.archivedAt ? "archived" : undefined;
  return (Object.keys(permissions) as Action[]).filter((a) => {
    const audience: Audience = permissions[a];
    if (audience.scope !== "study" || !roleMay(a, role, { restricted: study.restricted }))
      return false;
    if (audience.inState !== undefined && audience.inState !== state) return false;
    return stateRefusal(a, study) === null;
  });
}

/**
 * For study actions on routes without `:studyId` (e.g. `/fits/:fitId`):
 * finds the study of the resource the route's params name, or null when
 * there is none. The resource then answers 404 exactly as a study you do
 * not belong to.
 */
export interface StudyOf {
  resolve: (db: Database, params: Record<string, string>) => Promise<string | null>;
  /** The 404 message (default "Not found."). */
  notFound?: string;
}

/** The middleware: checks `action` for this request, answering 401/403/404 through the error envelope. */
export function authorize(action: Action, options: { studyOf?: StudyOf } = {}): RequestHandler {
  const audience: Audience = permissions[action];
  if (!audience) throw new Error(`authorize: unknown action ${String(action)}`);
  const { studyOf } = options;
  const handler: RequestHandler = async (req, res, next) => {
    if (audience.scope === "anyone") return next();
    const user = currentUser(res);
    if (!user) throw unauthorized();
    if (audience.scope === "signed-in") return next();
    const db = (req.app.locals as { db: Database }).db;
    const studyId = studyOf
      ? await studyOf.resolve(db, req.params as Record<string, string>)
      : String(req.params.studyId ?? "");
    const found =
      studyId === null
        ? null
        : await findMembership(db, studyId, user, audience.inState === "deleted");
    if (!found) throw notFound(studyOf ? (studyOf.notFound ?? "Not found.") : "Study not found.");
    const isSelf = typeof req.params.userId === "string" && req.params.userId === user.id;
    if (!roleMay(action, found.role, { restricted: found.study.restricted, isSelf })) {
      throw forbidden(`Your role in this study (${found.role}) does not allow ${action}.`);
    }
    const refusal = stateRefusal(action, found.study);
    if (refusal) throw refusal;
    res.locals.study = found.study;
    res.locals.role = found.role;
    next();
  };
  Object.defineProperty(handler, permissionTag, { value: action });
  Object.defineProperty(handler, "name", { value: `authorize(${action})` });
  return handler;
}

const membershipRow = perDatabase((db) =>
  db
    .select({ study: studies, role: memberships.role })
    .from(memberships)
    .innerJoin(studies, eq(studies.id, memberships.studyId))
    .where(
      and(
        eq(memberships.studyId, sql.placeholder("studyId")),
        eq(memberships.userId, sql.placeholder("userId")),
        isNull(studies.deletedAt),
      ),
    )
    .limit(1)
    .prepare("membership_row"),
);

/**
 * The person's membership of a (not deleted) study, or null; with
 * `includeDeleted`, of a deleted study too (restoring). Kept until the next
 * write (db/read-cache.ts).
 */
async function findMembership(
  db: Database,
  studyId: string,
  user: SessionUser,
  includeDeleted = false,
): Promise<AuthorizedStudy | null> {
  if (!idSchema.safeParse(studyId).success) return null;
  if (includeDeleted) {
    const [any] = await db
      .select({ study: studies, role: memberships.role })
      .from(memberships)
      .innerJoin(studies, eq(studies.id, memberships.studyId))
      .where(and(eq(memberships.studyId, studyId), eq(memberships.userId, user.id)))
      .limit(1);
    return any ?? null;
  }
  const [found] = await cachedRead(db, `membership ${studyId} ${user.id}`, () =>
    membershipRow(db).execute({ studyId, userId: user.id }),
  );
  return found ?? null;
}

/** The study and role `authorize` found (study routes only). */
export function authorizedStudy(res: Response): AuthorizedStudy {
  const study = res.locals.study as Study | undefined;
  const role = res.locals.role as Role | undefined;
  if (!study || !role)
    throw new Error("authorizedStudy() called on a route without a study-scoped authorize()");
  return { study, role };
}

/** Whether the caller may see participant-level rows of the authorized study (`fits.participants.read`). */
export function participantsVisible(res: Response): boolean {
  const { study, role } = authorizedStudy(res);
  return roleMay("fits.participants.read", role, { restricted: study.restricted });
}
