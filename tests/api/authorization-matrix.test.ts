/**
 * The authorization matrix: every API route × {Owner, Analyst, Reviewer,
 * Viewer, signed-in non-member, signed-out} with the expected status.
 *
 * Routes are enumerated from the app's router itself: a route added
 * without a row here fails "every route has a row". Each case runs on a
 * fresh study, so destructive cases do not disturb the others. Auth.js's
 * own endpoints under /api/auth are outside the matrix (they are guarded by
 * Auth.js's CSRF check and the sign-in rate limit, tested elsewhere).
 */
import { randomBytes } from "node:crypto";
import { eq } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import {
  fits,
  invitations,
  memberships,
  models,
  plans,
  setAsides,
  studies,
  users,
} from "../../db/schema";
import { planSchema } from "../../contract/plans";
import { planSha256 } from "../../server/services/plans";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { type Action, type Audience, permissions } from "../../contract/permissions";
import { listRoutes } from "../../server/http/route-list";
import type { FitJobs } from "../../server/jobs/fit-jobs";
import { modelSpecSchema } from "../../contract/spec";
import { createFit } from "../../server/services/fits";
import { hashToken } from "../../server/services/invitations";
import { createTestApp, signInByEmail, userIdOf, type TestApp } from "./helpers";

const personas = ["owner", "analyst", "reviewer", "viewer", "outsider", "anonymous"] as const;
type Persona = (typeof personas)[number];
type Expected = Record<Persona, number>;

interface Fixture {
  studyId: string;
  studyName: string;
  targetUserId: string;
  invitationId: string;
  token: string;
  n: number;
  modelId: string;
  setAsideId: string;
  planId: string;
  /** Rows with `data`: a finished fit and a queued one on the demo tables. */
  fitId: string;
  queuedFitId: string;
}

interface Row {
  path: (f: Fixture) => string;
  body?: (f: Fixture) => unknown;
  expected: Expected;
  /** The fixture study needs the demo tables, a finished fit and a queued one. */
  data?: boolean;
  /** The fixture study is deleted (restoring) or archived (unarchiving) before the request. */
  state?: "deleted" | "archived";
}

const all = (status: number): Expected => ({
  owner: status,
  analyst: status,
  reviewer: status,
  viewer: status,
  outsider: status,
  anonymous: status,
});
const signedIn = (status: number): Expected => ({ ...all(status), anonymous: 401 });
const members = (status: number): Expected => ({ ...all(status), outsider: 404, anonymous: 401 });
const ownerOnly = (status: number): Expected => ({
  owner: status,
  analyst: 403,
  reviewer: 403,
  viewer: 403,
  outsider: 404,
  anonymous: 401,
});
const makers = (status: number): Expected => ({
  owner: status,
  analyst: status,
  reviewer: 403,
  viewer: 403,
  outsider: 404,
  anonymous: 401,
});

const matrixPlan = planSchema.parse({
  title: "Matrix plan",
  models: [
    {
      name: "Matrix model",
      spec: { kind: "one-sample" },
      regionSelection: "independent-data",
      direction: "positive",
    },
  ],
  correction: "none",
  missing: "keep",
});

const matrix: Record<string, Row> = {
  "GET /api/health": { path: () => "/api/health", expected: all(200) },
  "GET /api/auth-options": { path: () => "/api/auth-options", expected: all(200) },
  "GET /api/me": { path: () => "/api/me", expected: signedIn(200) },
  "GET /api/me/preferences": { path: () => "/api/me/preferences", expected: signedIn(200) },
  "PUT /api/me/preferences/:key": {
    path: () => "/api/me/preferences/region-table.columns",
    body: () => ({ value: ["df"] }),
    expected: signedIn(200),
  },
  "DELETE /api/me/preferences/:key": {
    path: () => "/api/me/preferences/region-table.columns",
    expected: signedIn(204),
  },
  // An Owner of any study sees the worker processes, and so do the server admins (ADMIN_EMAILS
  // names the viewer and the outsider here, in another case); the others own no study.
  "GET /api/system/workers": {
    path: () => "/api/system/workers",
    expected: { ...signedIn(403), owner: 200, viewer: 200, outsider: 200 },
  },
  "GET /api/dev/mail": { path: () => "/api/dev/mail", expected: all(200) },
  "POST /api/dev/demo-sign-in": {
    path: () => "/api/dev/demo-sign-in",
    body: () => ({ email: "viewer@demo.covarion.test" }),
    expected: all(200),
  },
  "GET /api/studies": { path: () => "/api/studies", expected: signedIn(200) },
  "POST /api/planner": {
    path: () => "/api/planner",
    body: () => ({ design: "correlation", effect: 0.3 }),
    expected: signedIn(200),
  },
  // The power curve as a figure: a planner answer, not a study's, so anyone signed in.
  "POST /api/planner/:file": {
    path: () => "/api/planner/figure.txt",
    body: () => ({ design: "correlation", effect: 0.3 }),
    expected: signedIn(200),
  },
  "POST /api/studies": {
    path: () => "/api/studies",
    body: (f) => ({ name: `Matrix study ${f.n}` }),
    expected: signedIn(201),
  },
  "GET /api/studies/:studyId": { path: (f) => `/api/studies/${f.studyId}`, expected: members(200) },
  "PATCH /api/studies/:studyId": {
    path: (f) => `/api/studies/${f.studyId}`,
    body: () => ({ name: "Renamed" }),
    expected: ownerOnly(200),
  },
  "DELETE /api/studies/:studyId": {
    path: (f) => `/api/studies/${f.studyId}`,
    body: (f) => ({ confirm: f.studyName }),
    expected: ownerOnly(204),
  },
  // The study's life cycle: only its Owner restores a deleted study, archives and unarchives.
  "POST /api/studies/:studyId/restore": {
    path: (f) => `/api/studies/${f.studyId}/restore`,
    expected: ownerOnly(200),
    state: "deleted",
  },
  "POST /api/studies/:studyId/archive": {
    path: (f) => `/api/studies/${f.studyId}/archive`,
    expected: ownerOnly(200),
  },
  "POST /api/studies/:studyId/unarchive": {
    path: (f) => `/api/studies/${f.studyId}/unarchive`,
    expected: ownerOnly(200),
    state: "archived",
  },
  "GET /api/studies/:studyId/members": {
    path: (f) => `/api/studies/${f.studyId}/members`,
    expected: members(200),
  },
  "PATCH /api/studies/:studyId/members/:userId": {
    path: (f) => `/api/studies/${f.studyId}/members/${f.targetUserId}`,
    body: () => ({ role: "analyst" }),
    expected: ownerOnly(200),
  },
  "DELETE /api/studies/:studyId/members/:userId": {
    path: (f) => `/api/studies/${f.studyId}/members/${f.targetUserId}`,
    expected: ownerOnly(204),
  },
  "GET /api/studies/:studyId/invitations": {
    path: (f) => `/api/studies/${f.studyId}/invitations`,
    expected: ownerOnly(200),
  },
  "POST /api/studies/:studyId/invitations": {
    path: (f) => `/api/studies/${f.studyId}/invitations`,
    body: (f) => ({ email: `invitee${f.n}@lab.example`, role: "viewer" }),
    expected: ownerOnly(201),
  },
  "DELETE /api/studies/:studyId/invitations/:invitationId": {
    path: (f) => `/api/studies/${f.studyId}/invitations/${f.invitationId}`,
    expected: ownerOnly(204),
  },
  "GET /api/invitations/:token": { path: (f) => `/api/invitations/${f.token}`, expected: all(200) },
  // The fixture's invitation is addressed to the outsider: only they may accept it; members get 403 (wrong address).
  "POST /api/invitations/:token/accept": {
    path: (f) => `/api/invitations/${f.token}/accept`,
    expected: {
      owner: 403,
      analyst: 403,
      reviewer: 403,
      viewer: 403,
      outsider: 200,
      anonymous: 401,
    },
  },
  // Data intake (datasets and roster). The fixture study has no datasets: an unknown dataset answers 404
  // to members, a JSON body without a file 400 to those who may upload, mappings 409 before both tables exist.
  "POST /api/studies/:studyId/datasets": {
    path: (f) => `/api/studies/${f.studyId}/datasets`,
    body: () => ({}),
    expected: {
      owner: 400,
      analyst: 400,
      reviewer: 403,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
  },
  "GET /api/studies/:studyId/datasets": {
    path: (f) => `/api/studies/${f.studyId}/datasets`,
    expected: members(200),
  },
  "GET /api/studies/:studyId/datasets/:datasetId": {
    path: (f) => `/api/studies/${f.studyId}/datasets/00000000-0000-4000-8000-000000000000`,
    expected: members(404),
  },
  "POST /api/studies/:studyId/datasets/:datasetId/confirm": {
    path: (f) => `/api/studies/${f.studyId}/datasets/00000000-0000-4000-8000-000000000000/confirm`,
    body: () => ({}),
    expected: {
      owner: 404,
      analyst: 404,
      reviewer: 403,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
  },
  "GET /api/studies/:studyId/roster": {
    path: (f) => `/api/studies/${f.studyId}/roster`,
    expected: members(200),
  },
  "POST /api/studies/:studyId/roster/mappings": {
    path: (f) => `/api/studies/${f.studyId}/roster/mappings`,
    body: () => ({ mappings: [{ brainId: "7", sheetId: "sub-07" }] }),
    expected: {
      owner: 409,
      analyst: 409,
      reviewer: 403,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
  },
  "GET /api/studies/:studyId/roster.csv": {
    path: (f) => `/api/studies/${f.studyId}/roster.csv`,
    expected: members(200),
  },
  // A person's own e-mail notices of the study (kept in their preferences).
  "GET /api/studies/:studyId/notices": {
    path: (f) => `/api/studies/${f.studyId}/notices`,
    expected: members(200),
  },
  "PUT /api/studies/:studyId/notices": {
    path: (f) => `/api/studies/${f.studyId}/notices`,
    body: () => ({ enabled: false }),
    expected: members(200),
  },
  "GET /api/studies/:studyId/activity": {
    path: (f) => `/api/studies/${f.studyId}/activity`,
    expected: {
      owner: 200,
      analyst: 200,
      reviewer: 200,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
  },
  // Reliability of the measures. The fixture study has no data: an empty list may be stated, the brain reliability answers 409.
  "GET /api/studies/:studyId/trait-reliabilities": {
    path: (f) => `/api/studies/${f.studyId}/trait-reliabilities`,
    expected: members(200),
  },
  "PUT /api/studies/:studyId/trait-reliabilities": {
    path: (f) => `/api/studies/${f.studyId}/trait-reliabilities`,
    body: () => [],
    expected: {
      owner: 200,
      analyst: 200,
      reviewer: 403,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
  },
  "GET /api/studies/:studyId/reliability": {
    path: (f) => `/api/studies/${f.studyId}/reliability`,
    expected: members(409),
  },
  // Models, fits and set-asides. Routes under /api/fits/:fitId find the fit's study first: non-members get 404.
  "GET /api/studies/:studyId/models": {
    path: (f) => `/api/studies/${f.studyId}/models`,
    expected: members(200),
  },
  "POST /api/studies/:studyId/models": {
    path: (f) => `/api/studies/${f.studyId}/models`,
    body: () => ({
      name: "Matrix new model",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    }),
    expected: makers(201),
  },
  "GET /api/studies/:studyId/models/:modelId": {
    path: (f) => `/api/studies/${f.studyId}/models/${f.modelId}`,
    expected: members(200),
  },
  "PATCH /api/studies/:studyId/models/:modelId": {
    path: (f) => `/api/studies/${f.studyId}/models/${f.modelId}`,
    body: () => ({ name: "Renamed model" }),
    expected: makers(200),
  },
  "DELETE /api/studies/:studyId/models/:modelId": {
    path: (f) => `/api/studies/${f.studyId}/models/${f.modelId}`,
    expected: makers(204),
  },
  "GET /api/studies/:studyId/fits": {
    path: (f) => `/api/studies/${f.studyId}/fits`,
    expected: members(200),
  },
  "POST /api/studies/:studyId/fits": {
    path: (f) => `/api/studies/${f.studyId}/fits`,
    body: (f) => ({ modelId: f.modelId }),
    expected: makers(202),
    data: true,
  },
  "GET /api/fits/:fitId": {
    path: (f) => `/api/fits/${f.fitId}`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/events": {
    path: (f) => `/api/fits/${f.fitId}/events`,
    expected: members(200),
    data: true,
  },
  "POST /api/fits/:fitId/cancel": {
    path: (f) => `/api/fits/${f.queuedFitId}/cancel`,
    expected: makers(200),
    data: true,
  },
  "GET /api/fits/:fitId/regions/:region": {
    path: (f) => `/api/fits/${f.fitId}/regions/L_dlpfc`,
    expected: members(200),
    data: true,
  },
  // Participant rows: the fixture study is not restricted, so every member pages them (a restricted study's Viewers get 403, tests/api/fits.test.ts).
  "GET /api/fits/:fitId/regions/:region/participants": {
    path: (f) => `/api/fits/${f.fitId}/regions/L_dlpfc/participants`,
    expected: members(200),
    data: true,
  },
  "POST /api/fits/:fitId/regions/:region/preview": {
    path: (f) => `/api/fits/${f.fitId}/regions/L_dlpfc/preview`,
    expected: members(200),
    data: true,
  },
  // Exports, approval and sealing of a fit. The fixture's fit is done but not approved: an Owner passes the seal's rights check and gets 409.
  "GET /api/fits/:fitId/regions.csv": {
    path: (f) => `/api/fits/${f.fitId}/regions.csv`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/recipe.json": {
    path: (f) => `/api/fits/${f.fitId}/recipe.json`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/report.zip": {
    path: (f) => `/api/fits/${f.fitId}/report.zip`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/report.sha256": {
    path: (f) => `/api/fits/${f.fitId}/report.sha256`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/methods": {
    path: (f) => `/api/fits/${f.fitId}/methods`,
    expected: members(200),
    data: true,
  },
  // Figures: the fixture study is not restricted, so every member downloads the participant plots too (a restricted study's Viewer gets 403, tests/api/figures.test.ts).
  "GET /api/fits/:fitId/figures": {
    path: (f) => `/api/fits/${f.fitId}/figures`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/figures/:file": {
    path: (f) => `/api/fits/${f.fitId}/figures/L_dlpfc-influence.svg`,
    expected: members(200),
    data: true,
  },
  // Manuscript tables and results sentences: every member; set-aside ids in the notes follow fits.participants.read (tests/api/manuscript-tables.test.ts).
  "GET /api/fits/:fitId/regions.md": {
    path: (f) => `/api/fits/${f.fitId}/regions.md`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/regions.tex": {
    path: (f) => `/api/fits/${f.fitId}/regions.tex`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/regions.docx": {
    path: (f) => `/api/fits/${f.fitId}/regions.docx`,
    expected: members(200),
    data: true,
  },
  "GET /api/fits/:fitId/sentences": {
    path: (f) => `/api/fits/${f.fitId}/sentences`,
    expected: members(200),
    data: true,
  },
  "POST /api/fits/:fitId/approve": {
    path: (f) => `/api/fits/${f.fitId}/approve`,
    expected: {
      owner: 200,
      analyst: 403,
      reviewer: 200,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
    data: true,
  },
  "POST /api/fits/:fitId/seal": {
    path: (f) => `/api/fits/${f.fitId}/seal`,
    expected: ownerOnly(409),
    data: true,
  },
  "GET /api/studies/:studyId/set-asides": {
    path: (f) => `/api/studies/${f.studyId}/set-asides`,
    expected: members(200),
  },
  "POST /api/studies/:studyId/set-asides": {
    path: (f) => `/api/studies/${f.studyId}/set-asides`,
    body: () => ({ participant: "sub-02", reason: "Matrix case" }),
    expected: makers(201),
  },
  "DELETE /api/studies/:studyId/set-asides/:setAsideId": {
    path: (f) => `/api/studies/${f.studyId}/set-asides/${f.setAsideId}`,
    body: () => ({ reason: "Matrix restore" }),
    expected: makers(200),
  },
  // Analysis plans: registered by Owners and Analysts, read by every member, never changed.
  "GET /api/studies/:studyId/plans": {
    path: (f) => `/api/studies/${f.studyId}/plans`,
    expected: members(200),
  },
  "POST /api/studies/:studyId/plans": {
    path: (f) => `/api/studies/${f.studyId}/plans`,
    body: () => ({ plan: matrixPlan }),
    expected: makers(201),
  },
  "GET /api/plans/:planId": { path: (f) => `/api/plans/${f.planId}`, expected: members(200) },
  "PATCH /api/plans/:planId": {
    path: (f) => `/api/plans/${f.planId}`,
    body: () => ({ title: "Changed" }),
    expected: makers(409),
  },
  "DELETE /api/plans/:planId": { path: (f) => `/api/plans/${f.planId}`, expected: makers(409) },
  "POST /api/plans/:planId/countersign": {
    path: (f) => `/api/plans/${f.planId}/countersign`,
    // The fixture's plan is the Owner's own: a second person countersigns.
    expected: {
      owner: 409,
      analyst: 403,
      reviewer: 200,
      viewer: 403,
      outsider: 404,
      anonymous: 401,
    },
  },
};

let t: TestApp;
const cookies = new Map<Persona, string>();
const ids = new Map<Persona, string>();
let counter = 0;

beforeAll(async () => {
  t = await createTestApp({
    env: { ADMIN_EMAILS: "viewer@demo.covarion.test, Outsider@Lab.example" },
  });
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    const email = `${role}@demo.covarion.test`;
    const res = await request(t.url).post("/api/dev/demo-sign-in").send({ email }).expect(200);
    cookies.set(role, String(res.headers["set-cookie"]).split(";")[0]);
    ids.set(role, await userIdOf(t.db, email));
  }
  cookies.set("outsider", await sessionCookieOf("outsider@lab.example"));
  ids.set("outsider", await userIdOf(t.db, "outsider@lab.example"));
});
afterAll(async () => {
  await t?.close();
});

/** The session cookie of a person signed in through the e-mail link. */
async function sessionCookieOf(email: string): Promise<string> {
  const agent = await signInByEmail(t, email);
  const jar = (
    agent as unknown as {
      jar: { getCookie(name: string, access: unknown): { value: string } | undefined };
    }
  ).jar;
  const url = new URL(t.url);
  const cookie = jar.getCookie("authjs.session-token", {
    domain: url.hostname,
    path: "/",
    secure: false,
    script: false,
  });
  if (!cookie) throw new Error("no session cookie after e-mail sign-in");
  return `authjs.session-token=${cookie.value}`;
}

async function makeFixture(withData = false, state?: "deleted" | "archived"): Promise<Fixture> {
  counter += 1;
  const now = new Date();
  const name = `Matrix fixture ${counter}`;
  const [study] = await t.db
    .insert(studies)
    .values({ name, createdBy: ids.get("owner") })
    .returning();
  const [target] = await t.db
    .insert(users)
    .values({ email: `target${counter}@lab.example`, name: "Target" })
    .returning();
  await t.db.insert(memberships).values([
    ...(["owner", "analyst", "reviewer", "viewer"] as const).map((role) => ({
      studyId: study.id,
      userId: ids.get(role) as string,
      role,
    })),
    { studyId: study.id, userId: target.id, role: "viewer" as const },
  ]);
  const token = randomBytes(32).toString("base64url");
  const [inv] = await t.db
    .insert(invitations)
    .values({
      studyId: study.id,
      email: "outsider@lab.example",
      role: "viewer",
      tokenHash: hashToken(token),
      invitedBy: ids.get("owner") as string,
      expiresAt: new Date(now.getTime() + 7 * 24 * 3600 * 1000),
    })
    .returning();
  const owner = ids.get("owner") as string;
  const [model] = await t.db
    .insert(models)
    .values({
      studyId: study.id,
      name: "Matrix model",
      spec: modelSpecSchema.parse({ kind: "one-sample" }),
      regionSelection: "independent-data",
      createdBy: owner,
      updatedBy: owner,
    })
    .returning();
  const [aside] = await t.db
    .insert(setAsides)
    .values({
      studyId: study.id,
      participantId: "sub-01",
      reason: "Matrix fixture",
      createdBy: owner,
    })
    .returning();
  const [plan] = await t.db
    .insert(plans)
    .values({
      studyId: study.id,
      plan: matrixPlan,
      sha256: planSha256(matrixPlan),
      registeredBy: owner,
      registeredAt: now,
      dataSeen: false,
    })
    .returning();
  let fitId = "";
  let queuedFitId = "";
  if (withData) {
    await seedDemoDatasets(t.db, { studyId: study.id, uploadedBy: owner, now });
    const jobs = t.app.locals.fitJobs as FitJobs;
    // The Analyst starts the fit, so the Owner and the Reviewer may approve it ("A second person signs off" is on).
    const fit = await createFit(
      t.db,
      jobs,
      { id: ids.get("analyst") as string },
      study,
      model.id,
      now,
      "matrix",
    );
    await jobs.whenIdle();
    const [done] = await t.db.select().from(fits).where(eq(fits.id, fit.id));
    const { id: _id, ...copy } = done;
    const [queued] = await t.db
      .insert(fits)
      .values({
        ...copy,
        status: "queued",
        progress: 0,
        result: null,
        startedAt: null,
        finishedAt: null,
      })
      .returning();
    fitId = fit.id;
    queuedFitId = queued.id;
  }
  if (state === "deleted")
    await t.db
      .update(studies)
      .set({ deletedAt: now, deletedBy: owner })
      .where(eq(studies.id, study.id));
  if (state === "archived")
    await t.db
      .update(studies)
      .set({ archivedAt: now, archivedBy: owner })
      .where(eq(studies.id, study.id));
  return {
    studyId: study.id,
    studyName: name,
    targetUserId: target.id,
    invitationId: inv.id,
    token,
    n: counter,
    modelId: model.id,
    setAsideId: aside.id,
    planId: plan.id,
    fitId,
    queuedFitId,
  };
}

function routeKeys(): string[] {
  return listRoutes(t.app)
    .filter((r) => r.path.startsWith("/api/") && !r.path.startsWith("/api/auth/"))
    .map((r) => `${r.method} ${r.path}`);
}

describe("authorization matrix", () => {
  it("every API route has a row, and every row a route", () => {
    const keys = routeKeys();
    expect(keys.length).toBeGreaterThan(10);
    expect(keys.filter((k) => !(k in matrix))).toEqual([]);
    expect(Object.keys(matrix).filter((k) => !keys.includes(k))).toEqual([]);
  });

  it("every API route carries exactly one authorize() middleware", () => {
    const bad = listRoutes(t.app)
      .filter((r) => r.path.startsWith("/api/") && !r.path.startsWith("/api/auth/"))
      .filter((r) => r.actions.length !== 1)
      .map((r) => `${r.method} ${r.path}: ${r.actions.join(", ") || "none"}`);
    expect(bad).toEqual([]);
  });

  // An archived study is read-only for every role: each change answers 409 study_archived, each read as before
  // (the Owner, who may do everything, asks). Which actions change something is decided in the permission table.
  describe("in an archived study", () => {
    for (const [key, row] of Object.entries(matrix)) {
      const action = () =>
        listRoutes(t.app).find((r) => `${r.method} ${r.path}` === key)?.actions[0] as
          | Action
          | undefined;
      it(`${key}`, async ({ skip }) => {
        const audience = permissions[action() as Action] as Audience | undefined;
        if (!audience || audience.scope !== "study") return skip();
        expect(
          audience.access,
          `${key}: the permission table says whether ${action()} reads or changes`,
        ).toMatch(/^(read|write)$/);
        if (audience.inState !== undefined) return skip();
        const fixture = await makeFixture(row.data === true, "archived");
        const method = key.split(" ")[0].toLowerCase() as
          | "get"
          | "post"
          | "put"
          | "patch"
          | "delete";
        const req = request(t.url)
          [method](row.path(fixture))
          .set("Cookie", cookies.get("owner") as string);
        const res = row.body ? await req.send(row.body(fixture) as object) : await req;
        if (audience.access === "write")
          expect([res.status, res.body.error?.code]).toEqual([409, "study_archived"]);
        else expect(res.status).toBe(row.expected.owner);
      });
    }
  });

  for (const [key, row] of Object.entries(matrix)) {
    it(`${key}`, async () => {
      const method = key.split(" ")[0];
      const got: Partial<Expected> = {};
      for (const persona of personas) {
        const fixture = await makeFixture(row.data === true, row.state);
        const path = row.path(fixture);
        let req = request(t.url)[
          method.toLowerCase() as "get" | "post" | "put" | "patch" | "delete"
        ](path);
        const cookie = cookies.get(persona);
        if (cookie) req = req.set("Cookie", cookie);
        const res = row.body ? await req.send(row.body(fixture) as object) : await req;
        got[persona] = res.status;
        if (res.status >= 400)
          expect(res.body.error, `${key} as ${persona}: envelope`).toMatchObject({
            code: expect.any(String),
            message: expect.any(String),
          });
      }
      expect(got).toEqual(row.expected);
    });
  }
});
