/**
 * Who may do what: the table of action → audience that the server's
 * `authorize` middleware enforces (server/auth/permissions.ts) and the web
 * app names its controls by (a study view lists the caller's actions).
 * No imports, so the web app can use it.
 *
 * Audiences:
 * - `anyone`: no session needed (health, sign-in options, invitation preview);
 * - `signed-in`: any signed-in person (own profile, list/create studies, accept an invitation);
 * - `study`: members of the study whose role is listed; `whenRestricted`
 *   narrows the roles when the study marks participant-level rows as
 *   restricted; `self` lists roles allowed when the route's `:userId` is the
 *   signed-in person (leaving a study). A `write` action is refused in an
 *   archived study; `inState` marks the action about a study in that state.
 *
 * Rights follow PRODUCT.md: Owner manages members and can do everything;
 * Analyst uploads data, builds models, runs fits, sets participants aside;
 * Reviewer reads everything, comments and approves a fit for sealing; Viewer
 * reads results only (no participant-level rows if the study is restricted).
 */

/** A member's role in a study. */
export const roles = ["owner", "analyst", "reviewer", "viewer"] as const;
export type Role = (typeof roles)[number];

export type Audience =
  | { readonly scope: "anyone" }
  | { readonly scope: "signed-in" }
  | {
      readonly scope: "study";
      readonly roles: readonly Role[];
      /** "write": refused in an archived study (409 study_archived). */
      readonly access: "read" | "write";
      readonly whenRestricted?: readonly Role[];
      readonly self?: readonly Role[];
      /** The action is about a study in this state: "archived" passes the archive's refusal, "deleted" reaches a deleted study. */
      readonly inState?: "archived" | "deleted";
    };

interface StudyExtra {
  whenRestricted?: readonly Role[];
  self?: readonly Role[];
  inState?: "archived" | "deleted";
}

const anyone = { scope: "anyone" } as const;
const signedIn = { scope: "signed-in" } as const;
/** A study action that only reads. */
const reads = (who: readonly Role[], extra: StudyExtra = {}) =>
  ({ scope: "study", access: "read", roles: who, ...extra }) as const;
/** A study action that changes something (refused while the study is archived). */
const writes = (who: readonly Role[], extra: StudyExtra = {}) =>
  ({ scope: "study", access: "write", roles: who, ...extra }) as const;

const everyone: readonly Role[] = roles;
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
  "me.preferences": signedIn,
  "studies.list": signedIn,
  "studies.create": signedIn,
  "invitation.read": anyone,
  "invitation.accept": signedIn,
  "planner.use": signedIn,
  /** The route itself also asks that the person owns a study (server/routes/workers.ts). */
  "workers.read": signedIn,

  // A study and its team
  "study.read": reads(everyone),
  "study.update": writes(owner),
  "study.delete": writes(owner),
  "study.archive": writes(owner),
  "study.unarchive": writes(owner, { inState: "archived" }),
  "study.restore": writes(owner, { inState: "deleted" }),
  "members.list": reads(everyone),
  "members.update": writes(owner),
  "members.remove": writes(owner, { self: everyone }),
  "invitations.list": reads(owner),
  "invitations.create": writes(owner),
  "invitations.revoke": writes(owner),
  "activity.list": reads(readers),
  // A person's own e-mail notices of the study: changes nothing of the study, so an archived one accepts it.
  "notices.manage": reads(everyone),

  // Data, models and fits (routes arrive with later work; rights decided here)
  "data.read": reads(everyone),
  "data.upload": writes(makers),
  "data.delete": writes(makers),
  "participants.read": reads(everyone, { whenRestricted: readers }),
  "participants.set-aside": writes(makers),
  "models.read": reads(everyone),
  "models.write": writes(makers),
  "fits.read": reads(everyone),
  "fits.run": writes(makers),
  "fits.export": reads(everyone),
  "fits.participants.read": reads(everyone, { whenRestricted: readers }),
  "fits.approve": writes(["owner", "reviewer"]),
  "fits.seal": writes(owner),
  "plans.read": reads(everyone),
  "plans.register": writes(makers),
  "plans.countersign": writes(["owner", "reviewer"]),
  "comments.read": reads(readers),
  "comments.write": writes(readers),
} as const satisfies Record<string, Audience>;

export type Action = keyof typeof permissions;
