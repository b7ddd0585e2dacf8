/**
 * The life cycle of a study that never loses what was recorded: delete is a
 * soft delete an Owner can undo for 30 days (the app's clock is moved
 * forward), a study with a sealed fit can only be archived, an archived
 * study refuses every change with 409 study_archived and still reads, and
 * the activity trail keeps every step (deleted, restored, archived,
 * unarchived) beside what came before.
 */
import { and, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditEvents, datasetVersions, fits, memberships, studies } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import {
  type Agent,
  type TestApp,
  createTestApp,
  firstLink,
  signInByEmail,
  signInDemo,
  userIdOf,
} from "./helpers";

const dayMs = 24 * 60 * 60 * 1000;
type Persona = "owner" | "analyst" | "reviewer" | "viewer";

let t: TestApp;
const agents = {} as Record<Persona, Agent>;
const ids = {} as Record<Persona, string>;

/** Signs the four demo people in afresh (sessions end when the clock moves past their expiry). */
async function signInAll(): Promise<void> {
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
    ids[role] = await userIdOf(t.db, `${role}@demo.covarion.test`);
  }
}

/** Moves the app's clock forward and signs everyone in again. */
async function advanceClock(ms: number): Promise<void> {
  t.advanceClock(ms);
  await signInAll();
}

beforeAll(async () => {
  t = await createTestApp();
  await signInAll();
});
afterAll(async () => {
  await t?.close();
});

/** A study the demo Owner creates, with the demo Analyst, Reviewer and Viewer as members. */
async function teamStudy(name: string): Promise<string> {
  const res = await agents.owner.post("/api/studies").send({ name }).expect(201);
  const studyId = res.body.id as string;
  await t.db.insert(memberships).values(
    (["analyst", "reviewer", "viewer"] as const).map((role) => ({
      studyId,
      userId: ids[role],
      role,
    })),
  );
  return studyId;
}

async function waitForDone(fitId: string): Promise<void> {
  const start = Date.now();
  for (;;) {
    const res = await agents.analyst.get(`/api/fits/${fitId}`).expect(200);
    if (res.body.status === "done") return;
    if (res.body.status === "failed" || res.body.status === "cancelled")
      throw new Error(`fit ${fitId} ${res.body.status}`);
    if (Date.now() - start > 60_000) throw new Error(`fit ${fitId} stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** A study with the demo tables, a model, a set-aside and a fit that the Reviewer approved and the Owner sealed. */
async function studyWithSealedFit(
  name: string,
): Promise<{ studyId: string; modelId: string; fitId: string; setAsideId: string }> {
  const studyId = await teamStudy(name);
  const [study] = await t.db.select().from(studies).where(eq(studies.id, studyId));
  await seedDemoDatasets(t.db, { studyId, uploadedBy: ids.analyst, now: study.createdAt });
  const model = await agents.analyst
    .post(`/api/studies/${studyId}/models`)
    .send({
      name: "Load effect",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    })
    .expect(201);
  const aside = await agents.analyst
    .post(`/api/studies/${studyId}/set-asides`)
    .send({ participant: "sub-02", reason: "Scanner stopped early" })
    .expect(201);
  const fit = await agents.analyst
    .post(`/api/studies/${studyId}/fits`)
    .send({ modelId: model.body.id })
    .expect(202);
  await waitForDone(fit.body.id);
  await agents.reviewer.post(`/api/fits/${fit.body.id}/approve`).expect(200);
  await agents.owner.post(`/api/fits/${fit.body.id}/seal`).expect(200);
  return { studyId, modelId: model.body.id, fitId: fit.body.id, setAsideId: aside.body.id };
}

const kindsOf = (events: { kind: string }[]) => events.map((e) => e.kind);

describe("a study with sealed fits", () => {
  let sealed: Awaited<ReturnType<typeof studyWithSealedFit>>;
  beforeAll(async () => {
    sealed = await studyWithSealedFit("Sealed harbour study");
  }, 120_000);

  it("cannot be deleted: 409 study_has_sealed_fits says to archive it, and the study stays", async () => {
    const res = await agents.owner
      .delete(`/api/studies/${sealed.studyId}`)
      .send({ confirm: "Sealed harbour study" })
      .expect(409);
    expect(res.body.error.code).toBe("study_has_sealed_fits");
    expect(res.body.error.message).toMatch(/Archive it instead/);
    await agents.viewer.get(`/api/studies/${sealed.studyId}`).expect(200);
    const kinds = kindsOf(
      (await agents.owner.get(`/api/studies/${sealed.studyId}/activity`).expect(200)).body,
    );
    expect(kinds).not.toContain("study.deleted");
  });

  it("Analysts, Reviewers and Viewers cannot archive; the Owner archives and every change of any resource answers 409 study_archived", async () => {
    const { studyId, modelId, fitId, setAsideId } = sealed;
    // An invitation sent before the archive cannot be accepted while it lasts.
    await agents.owner
      .post(`/api/studies/${studyId}/invitations`)
      .send({ email: "late.joiner@lab.example", role: "viewer" })
      .expect(201);
    const token = new URL(
      firstLink(t.mail.latestTo("late.joiner@lab.example").text),
    ).pathname.split("/")[2];

    for (const role of ["analyst", "reviewer", "viewer"] as const)
      await agents[role].post(`/api/studies/${studyId}/archive`).expect(403);
    const archived = await agents.owner.post(`/api/studies/${studyId}/archive`).expect(200);
    expect(archived.body.archivedAt).toEqual(expect.any(String));
    expect(archived.body.capabilities).toContain("study.unarchive");
    expect(archived.body.capabilities).toContain("fits.read");
    expect(archived.body.capabilities).not.toContain("study.update");
    expect(archived.body.capabilities).not.toContain("fits.run");
    expect(archived.body.capabilities).not.toContain("study.archive");
    const listed = (
      (await agents.viewer.get("/api/studies").expect(200)).body as {
        id: string;
        archivedAt: string | null;
      }[]
    ).find((s) => s.id === studyId);
    expect(listed?.archivedAt).toBe(archived.body.archivedAt);

    const pending = (await agents.owner.get(`/api/studies/${studyId}/invitations`).expect(200))
      .body as { id: string }[];
    const writes: [Agent, "post" | "patch" | "put" | "delete", string, object?][] = [
      [agents.owner, "patch", `/api/studies/${studyId}`, { name: "Renamed" }],
      [agents.owner, "patch", `/api/studies/${studyId}`, { restricted: true }],
      [agents.owner, "delete", `/api/studies/${studyId}`, { confirm: "Sealed harbour study" }],
      [agents.owner, "post", `/api/studies/${studyId}/archive`],
      [
        agents.owner,
        "post",
        `/api/studies/${studyId}/invitations`,
        { email: "another@lab.example", role: "viewer" },
      ],
      [agents.owner, "delete", `/api/studies/${studyId}/invitations/${pending[0]?.id}`],
      [agents.owner, "patch", `/api/studies/${studyId}/members/${ids.viewer}`, { role: "analyst" }],
      [agents.viewer, "delete", `/api/studies/${studyId}/members/${ids.viewer}`],
      [agents.analyst, "put", `/api/studies/${studyId}/trait-reliabilities`, []],
      [
        agents.analyst,
        "post",
        `/api/studies/${studyId}/roster/mappings`,
        { mappings: [{ brainId: "7", sheetId: "sub-07" }] },
      ],
      [
        agents.analyst,
        "post",
        `/api/studies/${studyId}/models`,
        { name: "New", regionSelection: "independent-data", spec: { kind: "one-sample" } },
      ],
      [
        agents.analyst,
        "patch",
        `/api/studies/${studyId}/models/${modelId}`,
        { name: "Renamed model" },
      ],
      [agents.analyst, "delete", `/api/studies/${studyId}/models/${modelId}`],
      [agents.analyst, "post", `/api/studies/${studyId}/fits`, { modelId }],
      [agents.analyst, "post", `/api/fits/${fitId}/cancel`],
      [agents.reviewer, "post", `/api/fits/${fitId}/approve`],
      [agents.owner, "post", `/api/fits/${fitId}/seal`],
      [
        agents.analyst,
        "post",
        `/api/studies/${studyId}/set-asides`,
        { participant: "sub-04", reason: "Late decision" },
      ],
      [agents.analyst, "delete", `/api/studies/${studyId}/set-asides/${setAsideId}`],
    ];
    for (const [agent, method, path, body] of writes) {
      const res =
        body === undefined ? await agent[method](path) : await agent[method](path).send(body);
      expect(`${method} ${path} → ${res.status} ${res.body.error?.code}`).toBe(
        `${method} ${path} → 409 study_archived`,
      );
      expect(res.body.error.message).toMatch(/archived/);
    }
    const upload = await agents.analyst
      .post(`/api/studies/${studyId}/datasets`)
      .field("kind", "participants")
      .attach("file", Buffer.from("participant_id\tage\nsub-01\t30\n"), "late.tsv");
    expect([upload.status, upload.body.error?.code]).toEqual([409, "study_archived"]);
    const late = await signInByEmail(t, "late.joiner@lab.example");
    const accept = await late.post(`/api/invitations/${token}/accept`);
    expect([accept.status, accept.body.error?.code]).toEqual([409, "study_archived"]);

    // Nothing changed, and everything still reads.
    const study = await agents.viewer.get(`/api/studies/${studyId}`).expect(200);
    expect(study.body).toMatchObject({
      name: "Sealed harbour study",
      restricted: false,
      counts: { members: 4, models: 1, fits: 1, sealedFits: 1 },
    });
    const fit = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    expect(fit.body.seal).toMatchObject({ intact: true });
    const region = (fit.body.result.regions as { region: string }[])[0].region;
    for (const path of [
      `/api/studies/${studyId}/models`,
      `/api/studies/${studyId}/fits`,
      `/api/studies/${studyId}/datasets`,
      `/api/studies/${studyId}/roster`,
      `/api/studies/${studyId}/set-asides`,
      `/api/studies/${studyId}/members`,
      `/api/studies/${studyId}/trait-reliabilities`,
      `/api/fits/${fitId}/regions/${region}`,
      `/api/fits/${fitId}/regions.csv`,
      `/api/fits/${fitId}/recipe.json`,
      `/api/fits/${fitId}/methods`,
    ]) {
      const res = await agents.analyst.get(path);
      expect(`${path} → ${res.status}`).toBe(`${path} → 200`);
    }
    await agents.analyst.post(`/api/fits/${fitId}/regions/${region}/preview`).expect(200);
    const models = (await agents.analyst.get(`/api/studies/${studyId}/models`).expect(200))
      .body as { name: string }[];
    expect(models.map((m) => m.name)).toEqual(["Load effect"]);
  });

  it("Analysts, Reviewers and Viewers cannot unarchive; the Owner unarchives, changes work again, and both steps are in the activity", async () => {
    const { studyId } = sealed;
    for (const role of ["analyst", "reviewer", "viewer"] as const)
      await agents[role].post(`/api/studies/${studyId}/unarchive`).expect(403);
    const res = await agents.owner.post(`/api/studies/${studyId}/unarchive`).expect(200);
    expect(res.body.archivedAt).toBeNull();
    expect(res.body.capabilities).toContain("study.archive");
    expect(res.body.capabilities).not.toContain("study.unarchive");
    const twice = await agents.owner.post(`/api/studies/${studyId}/unarchive`).expect(409);
    expect(twice.body.error.code).toBe("study_not_archived");
    await agents.owner
      .patch(`/api/studies/${studyId}`)
      .send({ description: "Open again" })
      .expect(200);
    const kinds = kindsOf(
      (await agents.owner.get(`/api/studies/${studyId}/activity?kind=study`).expect(200)).body,
    );
    expect(kinds).toEqual(["study.updated", "study.unarchived", "study.archived", "study.created"]);
    // Still sealed, so still not deletable.
    await agents.owner
      .delete(`/api/studies/${studyId}`)
      .send({ confirm: "Sealed harbour study" })
      .expect(409);
  });
});

describe("archiving", () => {
  it("is refused while a fit is queued or running; cancelling it lets the Owner archive", async () => {
    const studyId = await teamStudy("Queued fit study");
    const model = await agents.analyst
      .post(`/api/studies/${studyId}/models`)
      .send({ name: "Queued", regionSelection: "independent-data", spec: { kind: "one-sample" } })
      .expect(201);
    await seedDemoDatasets(t.db, { studyId, uploadedBy: ids.analyst, now: new Date() });
    const [brain] = await t.db
      .select()
      .from(datasetVersions)
      .where(and(eq(datasetVersions.studyId, studyId), eq(datasetVersions.kind, "brain")));
    // A fit still waiting for a worker (inserted as the queue holds it, so it stays queued while the test runs).
    const [queued] = await t.db
      .insert(fits)
      .values({
        studyId,
        modelId: model.body.id,
        status: "queued",
        brainVersionId: brain.id,
        recipe: sql`'{}'::jsonb`,
        createdBy: ids.analyst,
      })
      .returning();
    const refused = await agents.owner.post(`/api/studies/${studyId}/archive`).expect(409);
    expect(refused.body.error).toMatchObject({
      code: "fits_in_progress",
      details: { fitIds: [queued.id] },
    });
    await agents.analyst.post(`/api/fits/${queued.id}/cancel`).expect(200);
    await agents.owner.post(`/api/studies/${studyId}/archive`).expect(200);
    // An archived study cannot be deleted either: it must be unarchived first.
    const del = await agents.owner
      .delete(`/api/studies/${studyId}`)
      .send({ confirm: "Queued fit study" })
      .expect(409);
    expect(del.body.error.code).toBe("study_archived");
  });
});

describe("deleting and restoring a study", () => {
  // E-mail sign-in sessions follow the real clock, so this runs before the app clock moves.
  it("a deleted study answers 404 to restore for someone who is not its member", async () => {
    const studyId = await teamStudy("Closed dockyard");
    await agents.owner
      .delete(`/api/studies/${studyId}`)
      .send({ confirm: "Closed dockyard" })
      .expect(204);
    const outsider = await signInByEmail(t, "stranger@lab.example");
    const res = await outsider.post(`/api/studies/${studyId}/restore`).expect(404);
    expect(res.body.error.code).toBe("not_found");
    expect(
      ((await outsider.get("/api/studies?deleted=true").expect(200)).body as unknown[]).length,
    ).toBe(0);
    await agents.owner.post(`/api/studies/${studyId}/restore`).expect(200);
  });

  it("a deleted study leaves every list and route; its Owner sees it under recently deleted and restores it within 30 days with everything, activity included", async () => {
    const studyId = await teamStudy("Ferry terminal cohort");
    const model = await agents.analyst
      .post(`/api/studies/${studyId}/models`)
      .send({
        name: "Kept model",
        regionSelection: "independent-data",
        spec: { kind: "one-sample" },
      })
      .expect(201);
    await agents.analyst
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: "sub-09", reason: "Fell asleep in the scanner" })
      .expect(201);
    const historyBefore = kindsOf(
      (await agents.owner.get(`/api/studies/${studyId}/activity`).expect(200)).body,
    );

    await agents.owner
      .delete(`/api/studies/${studyId}`)
      .send({ confirm: "Ferry terminal cohort" })
      .expect(204);
    for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
      const list = (await agents[role].get("/api/studies").expect(200)).body as { id: string }[];
      expect(list.map((s) => s.id)).not.toContain(studyId);
      await agents[role].get(`/api/studies/${studyId}`).expect(404);
    }
    await agents.owner.get(`/api/studies/${studyId}/activity`).expect(404);
    await agents.analyst.get(`/api/studies/${studyId}/models/${model.body.id}`).expect(404);

    const deleted = (await agents.owner.get("/api/studies?deleted=true").expect(200)).body as {
      id: string;
      name: string;
      deletedAt: string;
      restorableUntil: string;
      deletedBy: { id: string };
    }[];
    const entry = deleted.find((s) => s.id === studyId);
    expect(entry).toMatchObject({ name: "Ferry terminal cohort", deletedBy: { id: ids.owner } });
    expect(Date.parse(entry?.restorableUntil ?? "") - Date.parse(entry?.deletedAt ?? "")).toBe(
      30 * dayMs,
    );
    // Only Owners see their deleted studies.
    for (const role of ["analyst", "reviewer", "viewer"] as const) {
      const theirs = (await agents[role].get("/api/studies?deleted=true").expect(200)).body as {
        id: string;
      }[];
      expect(theirs.map((s) => s.id)).not.toContain(studyId);
    }
    await agents.owner.get("/api/studies?deleted=maybe").expect(400);

    for (const role of ["analyst", "reviewer", "viewer"] as const) {
      const refused = await agents[role].post(`/api/studies/${studyId}/restore`).expect(403);
      expect(refused.body.error.code).toBe("forbidden");
    }

    await advanceClock(29 * dayMs);
    const restored = await agents.owner.post(`/api/studies/${studyId}/restore`).expect(200);
    expect(restored.body).toMatchObject({
      id: studyId,
      name: "Ferry terminal cohort",
      role: "owner",
      counts: { members: 4, models: 1 },
    });
    expect(
      ((await agents.viewer.get("/api/studies").expect(200)).body as { id: string }[]).map(
        (s) => s.id,
      ),
    ).toContain(studyId);
    await agents.analyst.get(`/api/studies/${studyId}/models/${model.body.id}`).expect(200);
    const asides = (await agents.analyst.get(`/api/studies/${studyId}/set-asides`).expect(200))
      .body as { participant: string }[];
    expect(asides.map((a) => a.participant)).toEqual(["sub-09"]);
    const history = (await agents.owner.get(`/api/studies/${studyId}/activity`).expect(200))
      .body as { kind: string; actor: { id: string } }[];
    expect(kindsOf(history)).toEqual(["study.restored", "study.deleted", ...historyBefore]);
    expect(history[0].actor.id).toBe(ids.owner);
    expect(
      (
        (await agents.owner.get("/api/studies?deleted=true").expect(200)).body as { id: string }[]
      ).map((s) => s.id),
    ).not.toContain(studyId);

    const again = await agents.owner.post(`/api/studies/${studyId}/restore`).expect(409);
    expect(again.body.error.code).toBe("study_not_deleted");
  });

  it("after 30 days a deleted study can no longer be restored (410) and is no longer listed, but nothing of it is purged", async () => {
    const studyId = await teamStudy("Lighthouse keepers");
    await agents.owner
      .delete(`/api/studies/${studyId}`)
      .send({ confirm: "Lighthouse keepers" })
      .expect(204);
    await advanceClock(30 * dayMs + 60_000);
    const refused = await agents.owner.post(`/api/studies/${studyId}/restore`).expect(410);
    expect(refused.body.error.code).toBe("restore_expired");
    expect(refused.body.error.message).toMatch(
      /can be restored for 30 days, until \d{4}-\d{2}-\d{2}/,
    );
    expect(
      (
        (await agents.owner.get("/api/studies?deleted=true").expect(200)).body as { id: string }[]
      ).map((s) => s.id),
    ).not.toContain(studyId);
    const [row] = await t.db.select().from(studies).where(eq(studies.id, studyId));
    expect(row.deletedAt).toBeInstanceOf(Date);
    const trail = await t.db.select().from(auditEvents).where(eq(auditEvents.studyId, studyId));
    expect(trail.map((e) => e.kind).sort()).toEqual(["study.created", "study.deleted"]);
  });
});
