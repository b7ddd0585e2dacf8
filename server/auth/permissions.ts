/**
 * The one permission module: a table of action → who may do it, and the
 * `authorize(action)` middleware every API route carries. No route decides
 * rights by itself.
 *
 * Audiences:
 * - `anyone`: no session needed (health, sign-in options, invitation preview);
 * - `signed-in`: any signed-in person (own profile, list/create studies, accept an invitation);
 * - `study`: members of the study named by `:studyId` (or, on routes such
 *   as `/fits/:fitId`, of the study the route's `studyOf` resolver finds)
 *   whose role is listed.
 *   A study that does not exist, is deleted, or that you do not belong to
 *   answers 404 (its existence is not revealed); a member whose role is not
 *   listed gets 403. `whenRestricted` narrows the roles when the study marks
 *   participant-level rows as restricted. `self` lists roles allowed when the
 *   route's `:userId` is the signed-in person (leaving a study).
 *
 * Rights follow PRODUCT.md: Owner manages members and can do everything;
 * Analyst uploads data, builds models, runs fits, sets participants aside;
 * Reviewer reads everything, comments and approves a fit for sealing; Viewer
 * reads results only (no participant-level rows if the study is restricted).
 *
 * After `authorize` passes, `res.locals.user` is the signed-in person and,
 * for study actions, `res.locals.study` and `res.locals.role` are set.
 */
import { and, eq, isNull, sql } from "drizzle-orm";
import type { RequestHandler, Response } from "express";
import type { Database } from "../../db/client";
import { perDatabase } from "../../db/prepared";
import { cachedRead } from "../../db/read-cache";
import { memberships, studies, type Role, type Study, roles as allRoles } from "../../db/schema";
import { forbidden, notFound, unauthorized } from "../http/errors";
import { idSchema } from "../http/validate";
import { currentUser, type SessionUser } from "./session";

export type Audience =
  | { readonly scope: "anyone" }
  | { readonly scope: "signed-in" }
  | {
      readonly scope: "study";
      readonly roles: readonly Role[];
      readonly whenRestricted?: readonly Role[];
      readonly self?: readonly Role[];
    };

const anyone = { scope: "anyone" } as const;
const signedIn = { scope: "signed-in" } as const;
const study = (roles: readonly Role[], extra: { whenRestricted?: readonly Role[]; self?: readonly Role[] } = {}) =>
  ({ scope: "study", roles, ...extra }) as const;

const everyone: readonly Role[] = allRoles;
const owner: readonly Role[] = ["owner"];
const makers: readonly Role[] = ["owner", "analyst"];
const readers: readonly Role[] = ["owner", "analyst", "reviewer"];

/** Action → audience. Add a row here for every new route's action. */
export const permissions = {
  // Public and personal
  "health.read": anyone,
  "auth.options": anyone,
  "dev.mail": anyone,
  "dev.demo-sign-in": anyone,
  "me.read": signedIn,
  "studies.list": signedIn,
  "studies.create": signedIn,
  "invitation.read": anyone,
  "invitation.accept": signedIn,
  "planner.use": signedIn,

  // A study and its team
  "study.read": study(everyone),
  "study.update": study(owner),
  "study.delete": study(owner),
  "members.list": study(everyone),
  "members.update": study(owner),
  "members.remove": study(owner, { self: everyone }),
  "invitations.list": study(owner),
  "invitations.create": study(owner),
  "invitations.revoke": study(owner),
  "activity.list": study(readers),

  // Data, models and fits (routes arrive with later work; rights decided here)
  "data.read": study(everyone),
  "data.upload": study(makers),
  "data.delete": study(makers),
  "participants.read": study(everyone, { whenRestricted: readers }),
  "participants.set-aside": study(makers),
  "models.read": study(everyone),
  "models.write": study(makers),
  "fits.read": study(everyone),
  "fits.run": study(makers),
  "fits.export": study(everyone),
  "fits.participants.read": study(everyone, { whenRestricted: readers }),
  "fits.approve": study(["owner", "reviewer"]),
  "fits.seal": study(owner),
  "comments.read": study(readers),
  "comments.write": study(readers),
} as const satisfies Record<string, Audience>;

export type Action = keyof typeof permissions;

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
export function roleMay(action: Action, role: Role, options: { restricted?: boolean; isSelf?: boolean } = {}): boolean {
  const audience: Audience = permissions[action];
  if (audience.scope !== "study") return true;
  let allowed = audience.roles.includes(role) || (options.isSelf === true && (audience.self?.includes(role) ?? false));
  if (allowed && options.restricted && audience.whenRestricted) allowed = audience.whenRestricted.includes(role);
  return allowed;
}

/** Every action the role may perform in a study (for the web app to show or hide controls). */
export function capabilitiesOf(role: Role, restricted: boolean): Action[] {
  return (Object.keys(permissions) as Action[]).filter(
    (a) => permissions[a].scope === "study" && roleMay(a, role, { restricted }),
  );
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
    const studyId = studyOf ? await studyOf.resolve(db, req.params as Record<string, string>) : String(req.params.studyId ?? "");
    const found = studyId === null ? null : await findMembership(db, studyId, user);
    if (!found) throw notFound(studyOf ? (studyOf.notFound ?? "Not found.") : "Study not found.");
    const isSelf = typeof req.params.userId === "string" && req.params.userId === user.id;
    if (!roleMay(action, found.role, { restricted: found.study.restricted, isSelf })) {
      throw forbidden(`Your role in this study (${found.role}) does not allow ${action}.`);
    }
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
    .where(and(eq(memberships.studyId, sql.placeholder("studyId")), eq(memberships.userId, sql.placeholder("userId")), isNull(studies.deletedAt)))
    .limit(1)
    .prepare("membership_row"),
);

/** The person's membership of a (not deleted) study, or null. Kept until the next write (db/read-cache.ts). */
async function findMembership(db: Database, studyId: string, user: SessionUser): Promise<AuthorizedStudy | null> {
  if (!idSchema.safeParse(studyId).success) return null;
  const [found] = await cachedRead(db, `membership ${studyId} ${user.id}`, () => membershipRow(db).execute({ studyId, userId: user.id }));
  return found ?? null;
}

/** The study and role `authorize` found (study routes only). */
export function authorizedStudy(res: Response): AuthorizedStudy {
  const study = res.locals.study as Study | undefined;
  const role = res.locals.role as Role | undefined;
  if (!study || !role) throw new Error("authorizedStudy() called on a route without a study-scoped authorize()");
  return { study, role };
}
