/**
 * Models, fits as background jobs, region detail, set-asides and the
 * one-region preview, through the real app on the demo study's data.
 */
import { type IncomingHttpHeaders, request as httpRequest } from "node:http";
import { createGunzip, gunzipSync, constants as zlibConstants } from "node:zlib";
import { eq } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fitRegions, fits, models, studies, users } from "../../db/schema";
import { demoPeople, demoStudy } from "../../db/seed";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { recipeSchema } from "../../contract/recipe";
import type { FitJobs } from "../../server/jobs/fit-jobs";
import { createFitJobs } from "../../server/services/fit-store";
import { currentVersions } from "../../server/services/datasets";
import { createRng } from "../../server/stats/rng";
import { REGION_DETAIL_KEYS, loadFitView, regionDetail } from "../../server/services/fits";
import { createTestApp, signInByEmail, type TestApp } from "./helpers";

let t: TestApp;
let studyId: string;
const cookies = new Map<string, string>();

async function demoCookie(role: string): Promise<string> {
  const res = await request(t.url)
    .post("/api/dev/demo-sign-in")
    .send({ email: `${role}@demo.covarion.test` })
    .expect(200);
  return String(res.headers["set-cookie"]).split(";")[0];
}

const as = (role: string) => {
  const cookie = cookies.get(role);
  const r = request(t.url);
  const wrap = <T extends { set(name: string, value: string): T }>(req: T) =>
    cookie ? req.set("Cookie", cookie) : req;
  return {
    get: (path: string) => wrap(r.get(path)),
    post: (path: string) => wrap(r.post(path)),
    patch: (path: string) => wrap(r.patch(path)),
    put: (path: string) => wrap(r.put(path)),
    delete: (path: string) => wrap(r.delete(path)),
  };
};

interface SseEvent {
  event: string;
  data: {
    id: string;
    status: string;
    progress: { fraction: number; secondsLeft: number | null };
    error: unknown;
  };
}

/** Reads a fit's event stream until the server closes it. */
function readEvents(
  fitId: string,
  role: string,
  onEvent?: (e: SseEvent) => void,
): Promise<{ events: SseEvent[]; chunks: number; contentType: string }> {
  return new Promise((resolve, reject) => {
    const req = httpRequest(
      `${t.url}/api/fits/${fitId}/events`,
      { headers: { Cookie: cookies.get(role) as string, "Accept-Encoding": "gzip" } },
      (res) => {
        if (res.statusCode !== 200) reject(new Error(`events answered ${res.statusCode}`));
        let buffer = "";
        let chunks = 0;
        const events: SseEvent[] = [];
        res.on("data", () => {
          chunks += 1;
        });
        // Compression is on: the stream is gzip, flushed after every event.
        const body =
          res.headers["content-encoding"] === "gzip"
            ? res.pipe(createGunzip({ finishFlush: zlibConstants.Z_SYNC_FLUSH }))
            : res;
        body.setEncoding("utf8");
        body.on("data", (chunk: string) => {
          buffer += chunk;
          let cut = buffer.indexOf("\n\n");
          while (cut >= 0) {
            const block = buffer.slice(0, cut);
            buffer = buffer.slice(cut + 2);
            const event = /^event: (.*)$/m.exec(block)?.[1];
            const data = /^data: (.*)$/m.exec(block)?.[1];
            if (event && data) {
              const e = { event, data: JSON.parse(data) } as SseEvent;
              events.push(e);
              onEvent?.(e);
            }
            cut = buffer.indexOf("\n\n");
          }
        });
        body.on("end", () =>
          resolve({ events, chunks, contentType: String(res.headers["content-type"]) }),
        );
        body.on("error", reject);
      },
    );
    req.on("error", reject);
    req.end();
  });
}

async function waitForStatus(
  fitId: string,
  wanted: readonly string[],
  timeoutMs = 60_000,
): Promise<Record<string, unknown>> {
  const start = Date.now();
  for (;;) {
    const res = await as("analyst").get(`/api/fits/${fitId}`).expect(200);
    if (wanted.includes(res.body.status)) return res.body;
    if (Date.now() - start > timeoutMs) throw new Error(`fit ${fitId} stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const associationModel = {
  name: "Accuracy with age as covariate",
  regionSelection: "anatomical-or-prior",
  spec: {
    kind: "association",
    predictor: "accuracy",
    covariates: ["age"],
    inference: "permutation",
    resamples: 2000,
    correction: "holm",
    seed: 7,
  },
};

async function createModel(body: Record<string, unknown>): Promise<string> {
  const res = await as("analyst").post(`/api/studies/${studyId}/models`).send(body).expect(201);
  return res.body.id as string;
}

async function runFit(modelId: string): Promise<string> {
  const res = await as("analyst")
    .post(`/api/studies/${studyId}/fits`)
    .send({ modelId })
    .expect(202);
  return res.body.id as string;
}

beforeAll(async () => {
  t = await createTestApp();
  const [study] = await t.db.select().from(studies).where(eq(studies.name, demoStudy.name));
  studyId = study.id;
  const { brain } = await currentVersions(t.db, studyId);
  if (!brain) {
    const [owner] = await t.db.select().from(users).where(eq(users.email, demoPeople[0].email));
    await seedDemoDatasets(t.db, { studyId, uploadedBy: owner.id, now: new Date() });
  }
  for (const role of ["owner", "analyst", "reviewer", "viewer"])
    cookies.set(role, await demoCookie(role));
  const outsider = await signInByEmail(t, "outsider@lab.example");
  const jar = (
    outsider as unknown as {
      jar: { getCookie(name: string, access: unknown): { value: string } | undefined };
    }
  ).jar;
  const cookie = jar.getCookie("authjs.session-token", {
    domain: "127.0.0.1",
    path: "/",
    secure: false,
    script: false,
  });
  cookies.set("outsider", `authjs.session-token=${cookie?.value}`);
});
afterAll(async () => {
  await t?.close();
});

describe("models", () => {
  it("an Analyst creates, reads, renames and deletes a model; each change is in the activity trail", async () => {
    const created = await as("analyst")
      .post(`/api/studies/${studyId}/models`)
      .send({ ...associationModel, name: "Life cycle" })
      .expect(201);
    expect(created.body).toMatchObject({
      name: "Life cycle",
      regionSelection: "anatomical-or-prior",
      circular: false,
      caution: null,
      fitCount: 0,
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        estimator: "ols",
        inference: "permutation",
        resamples: 2000,
        setAside: [],
      },
    });
    const id = created.body.id as string;
    await as("viewer").get(`/api/studies/${studyId}/models/${id}`).expect(200);
    const renamed = await as("analyst")
      .patch(`/api/studies/${studyId}/models/${id}`)
      .send({ name: "Life cycle, renamed", regionSelection: "same-data" })
      .expect(200);
    expect(renamed.body).toMatchObject({
      name: "Life cycle, renamed",
      circular: true,
      caution: expect.stringContaining("same data"),
    });
    const listed = await as("reviewer").get(`/api/studies/${studyId}/models`).expect(200);
    expect(listed.body.map((m: { id: string }) => m.id)).toContain(id);
    await as("analyst").delete(`/api/studies/${studyId}/models/${id}`).expect(204);
    await as("analyst").get(`/api/studies/${studyId}/models/${id}`).expect(404);
    const after = await as("analyst").get(`/api/studies/${studyId}/models`).expect(200);
    expect(after.body.map((m: { id: string }) => m.id)).not.toContain(id);
    const activity = await as("owner")
      .get(`/api/studies/${studyId}/activity?kind=model`)
      .expect(200);
    const kinds = activity.body
      .filter((e: { targetId: string }) => e.targetId === id)
      .map((e: { kind: string }) => e.kind);
    expect(kinds).toEqual(["model.deleted", "model.updated", "model.created"]);
    const updated = activity.body.find(
      (e: { kind: string; targetId: string }) => e.kind === "model.updated" && e.targetId === id,
    );
    expect(updated.before).toEqual({
      name: "Life cycle",
      regionSelection: "anatomical-or-prior",
      circular: false,
    });
  });

  it("refuses models that do not fit together or do not match the study's data, naming each field", async () => {
    const post = (body: unknown) =>
      as("analyst")
        .post(`/api/studies/${studyId}/models`)
        .send(body as object);
    const noPredictor = await post({
      name: "x",
      regionSelection: "independent-data",
      spec: { kind: "association" },
    }).expect(400);
    expect(noPredictor.body.error.code).toBe("validation_failed");
    expect(noPredictor.body.error.details).toContainEqual({
      field: "body.spec.predictor",
      message: expect.stringContaining("needs a predictor"),
    });
    const maxT = await post({
      name: "x",
      regionSelection: "independent-data",
      spec: { kind: "one-sample", correction: "maxt" },
    }).expect(400);
    expect(maxT.body.error.details).toContainEqual({
      field: "body.spec.correction",
      message: "max-T correction requires permutation inference",
    });
    const unknown = await post({
      name: "x",
      regionSelection: "independent-data",
      spec: { kind: "association", predictor: "shoe_size", regions: ["L_dlpfc", "L_amygdala"] },
    }).expect(400);
    expect(unknown.body.error.details).toEqual([
      {
        field: "body.spec.regions.1",
        message: expect.stringContaining("no region 'L_amygdala' in the brain table"),
      },
      {
        field: "body.spec.predictor",
        message: expect.stringContaining("no column 'shoe_size' in the participant sheet"),
      },
    ]);
    const category = await post({
      name: "x",
      regionSelection: "independent-data",
      spec: { kind: "association", predictor: "sex" },
    }).expect(400);
    expect(category.body.error.details[0]).toMatchObject({
      field: "body.spec.predictor",
      message: expect.stringContaining("is a category"),
    });
    const noAnswer = await post({ name: "x", spec: { kind: "one-sample" } }).expect(400);
    expect(noAnswer.body.error.details[0].field).toBe("body.regionSelection");
    const extra = await post({
      name: "x",
      regionSelection: "independent-data",
      spec: { kind: "one-sample", colour: "red" },
    }).expect(400);
    expect(extra.body.error.details[0].field).toBe("body.spec");
    await createModel({
      name: "Twice",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    });
    const twice = await post({
      name: "Twice",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    }).expect(409);
    expect(twice.body.error.code).toBe("conflict");
  });

  it("role rules: Viewers and Reviewers read but cannot write; non-members get 404; signed-out people 401", async () => {
    const body = {
      name: "Not allowed",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    };
    await as("viewer").post(`/api/studies/${studyId}/models`).send(body).expect(403);
    await as("reviewer").post(`/api/studies/${studyId}/models`).send(body).expect(403);
    await as("viewer").get(`/api/studies/${studyId}/models`).expect(200);
    await as("outsider").get(`/api/studies/${studyId}/models`).expect(404);
    await as("anonymous").get(`/api/studies/${studyId}/models`).expect(401);
  });
});

describe("fits", () => {
  let doneFitId: string;

  it("a fit on the demo study goes queued → running → done with results for every region, and streams its progress", async () => {
    const modelId = await createModel(associationModel);
    const created = await as("analyst")
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId })
      .expect(202);
    expect(created.body).toMatchObject({
      status: "queued",
      progress: { fraction: 0, secondsLeft: null },
      model: { id: modelId },
      result: null,
    });
    doneFitId = created.body.id;
    const stream = await readEvents(doneFitId, "viewer");
    expect(stream.contentType).toMatch(/^text\/event-stream/);
    const statuses = stream.events.map((e) => e.data.status);
    expect(statuses.at(-1)).toBe("done");
    expect(stream.events.at(-1)?.event).toBe("status");
    // Events arrive one by one (flushed), not in one chunk at the end.
    expect(stream.chunks).toBeGreaterThan(1);
    const fractions = stream.events
      .filter((e) => e.event === "progress")
      .map((e) => e.data.progress.fraction);
    expect(fractions.length).toBeGreaterThan(0);
    expect([...fractions].sort((a, b) => a - b)).toEqual(fractions);
    const fit = await as("viewer").get(`/api/fits/${doneFitId}`).expect(200);
    expect(fit.body).toMatchObject({
      status: "done",
      progress: { fraction: 1, secondsLeft: null },
      error: null,
      participantsVisible: true,
    });
    expect(fit.body.datasets.brain).toMatchObject({
      version: 1,
      fileName: "harbour-bay_lantern-3-vs-1_brain-table.csv",
      sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
    });
    expect(fit.body.datasets.participants).toMatchObject({
      fileName: "harbour-bay_participants.tsv",
    });
    const regions = fit.body.result.regions as {
      region: string;
      estimate: number;
      p: number;
      pAdjusted: number;
      flagged: unknown;
    }[];
    expect(regions.map((r) => r.region)).toEqual([
      "L_dlpfc",
      "R_dlpfc",
      "L_parietal",
      "R_parietal",
      "L_insula",
      "R_insula",
      "dACC",
      "L_caudate",
      "R_caudate",
      "precuneus",
    ]);
    for (const r of regions) {
      expect(Number.isFinite(r.estimate)).toBe(true);
      expect(r.p).toBeGreaterThan(0);
      expect(r.pAdjusted).toBeGreaterThanOrEqual(r.p);
      expect(r.flagged).toMatchObject({
        outlier: expect.any(Number),
        leverage: expect.any(Number),
        influence: expect.any(Number),
      });
      // The nested parts of a region's row are in its region detail, not in the fit view.
      for (const key of REGION_DETAIL_KEYS) expect(r, `${r.region} ${key}`).not.toHaveProperty(key);
    }
    expect(fit.body.result.participants).toBeUndefined();
    const detail = await as("viewer").get(`/api/fits/${doneFitId}/regions/L_dlpfc`).expect(200);
    expect(detail.body.result.permutation.rearrangements).toBe(2001); // 2000 random rearrangements and the identity (common practice, no source)
    // The region detail's row is the region's whole stored row.
    const [stored] = await t.db.select().from(fits).where(eq(fits.id, doneFitId));
    expect(detail.body.result).toEqual((stored.result as { regions: unknown[] }).regions[0]);
    expect(new Date(fit.body.startedAt).getTime()).toBeLessThanOrEqual(
      new Date(fit.body.finishedAt).getTime(),
    );
    // The recipe is a recipe the recipe command accepts: model fields with defaults, files and their hashes, software version.
    const recipe = recipeSchema.parse(fit.body.recipe);
    expect(recipe).toMatchObject({
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
      seed: 7,
      resamples: 2000,
      softwareVersion: expect.any(String),
      // The demo brain table has two sessions; the fit names the one it used, as the recipe command does.
      session: "1",
    });
    expect(recipe.inputs?.brainTable.sha256).toBe(fit.body.datasets.brain.sha256);
    const list = await as("viewer").get(`/api/studies/${studyId}/fits`).expect(200);
    expect(list.body[0]).toMatchObject({
      id: doneFitId,
      status: "done",
      model: { id: modelId, name: associationModel.name },
    });
    const activity = await as("owner")
      .get(`/api/studies/${studyId}/activity?kind=fit.run`)
      .expect(200);
    expect(activity.body[0]).toMatchObject({
      targetId: doneFitId,
      after: { modelId, seed: 7, setAside: 0 },
    });
  });

  it("Viewers and Reviewers cannot run fits (403); non-members do not see a fit (404)", async () => {
    const modelId = await createModel({
      name: "Role rules",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    });
    const viewer = await as("viewer")
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId })
      .expect(403);
    expect(viewer.body.error.code).toBe("forbidden");
    await as("reviewer").post(`/api/studies/${studyId}/fits`).send({ modelId }).expect(403);
    await as("outsider").get(`/api/fits/${doneFitId}`).expect(404);
    await as("outsider").get(`/api/fits/${doneFitId}/regions/L_dlpfc`).expect(404);
    await as("anonymous").get(`/api/fits/${doneFitId}`).expect(401);
    const missing = await as("analyst")
      .get("/api/fits/00000000-0000-4000-8000-000000000000")
      .expect(404);
    expect(missing.body.error.message).toBe("Fit not found.");
    await as("viewer").post(`/api/fits/${doneFitId}/cancel`).expect(403);
    await as("analyst")
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId: "00000000-0000-4000-8000-000000000000" })
      .expect(404);
  });

  it("a long permutation fit can be cancelled while running; it stays cancelled", async () => {
    const modelId = await createModel({
      name: "Long permutation",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "permutation",
        resamples: 1_000_000,
      },
    });
    const fitId = await runFit(modelId);
    let cancelAsked = false;
    const stream = readEvents(fitId, "analyst", (e) => {
      if (!cancelAsked && e.event === "progress" && e.data.progress.fraction > 0.1) {
        cancelAsked = true;
        as("analyst")
          .post(`/api/fits/${fitId}/cancel`)
          .expect(200)
          .then(
            () => {},
            (error: unknown) => console.error(error),
          );
      }
    });
    const { events } = await stream;
    expect(cancelAsked).toBe(true);
    expect(events.at(-1)?.data.status).toBe("cancelled");
    const fit = await as("analyst").get(`/api/fits/${fitId}`).expect(200);
    expect(fit.body).toMatchObject({ status: "cancelled", result: null });
    expect(fit.body.progress.fraction).toBeLessThan(1);
    const again = await as("analyst").post(`/api/fits/${fitId}/cancel`).expect(409);
    expect(again.body.error.message).toBe("This fit has already finished (cancelled).");
    const activity = await as("owner")
      .get(`/api/studies/${studyId}/activity?kind=fit.cancelled`)
      .expect(200);
    expect(activity.body[0]).toMatchObject({ targetId: fitId, before: { status: "running" } });
    // The pool keeps working after a cancel.
    const next = await runFit(
      await createModel({
        name: "After cancel",
        regionSelection: "independent-data",
        spec: { kind: "one-sample" },
      }),
    );
    await waitForStatus(next, ["done"]);
  });

  it("a fit whose model does not fit the data fails with the reason", async () => {
    // Saving such a model is refused (models-preconditions.test.ts); a model saved before the data changed can still meet data it does not fit.
    const [analyst] = await t.db
      .select()
      .from(users)
      .where(eq(users.email, "analyst@demo.covarion.test"));
    const spec = { kind: "two-group", group: "group", levels: ["patient", "nobody"] };
    const [saved] = await t.db
      .insert(models)
      .values({
        studyId,
        name: "Absent level",
        spec,
        regionSelection: "independent-data",
        createdBy: analyst.id,
        updatedBy: analyst.id,
      })
      .returning();
    const modelId = saved.id;
    const fit = await waitForStatus(await runFit(modelId), ["done", "failed"]);
    expect(fit).toMatchObject({
      status: "failed",
      error: {
        code: "stats_precondition",
        message: "levels: level 'nobody' is not present in column 'group'",
      },
      result: null,
    });
  });

  it("restart: a fit left queued or running is re-queued and gives the same numbers", async () => {
    const [original] = await t.db.select().from(fits).where(eq(fits.id, doneFitId));
    const [left] = await t.db
      .insert(fits)
      .values({
        studyId,
        modelId: original.modelId,
        status: "running",
        progress: 0.4,
        brainVersionId: original.brainVersionId,
        sheetVersionId: original.sheetVersionId,
        recipe: original.recipe,
        createdBy: original.createdBy,
        startedAt: new Date(),
      })
      .returning();
    const restarted = createFitJobs(t.db, { threads: 1 });
    try {
      const requeued = await restarted.recover();
      expect(requeued).toEqual([left.id]);
      await restarted.whenIdle();
    } finally {
      await restarted.close();
    }
    const [after] = await t.db.select().from(fits).where(eq(fits.id, left.id));
    expect(after.status).toBe("done");
    expect(after.result).toEqual(original.result);
    const rowsOf = async (id: string) =>
      (
        await t.db
          .select()
          .from(fitRegions)
          .where(eq(fitRegions.fitId, id))
          .orderBy(fitRegions.position)
      ).map((r) => [r.region, r.participants, r.plot]);
    expect(await rowsOf(left.id)).toEqual(await rowsOf(original.id));
  });
});

describe("region detail, set-aside and preview", () => {
  let fitId: string;
  let modelId: string;

  beforeAll(async () => {
    modelId = await createModel({
      name: "Accuracy, parametric",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        inference: "permutation",
        resamples: 500,
      },
    });
    fitId = await runFit(modelId);
    await waitForStatus(fitId, ["done"]);
  });

  it("gives one point per participant with trait, contrast value, diagnostics and flags, the fitted line's band and the null histogram", async () => {
    const res = await as("viewer").get(`/api/fits/${fitId}/regions/L_dlpfc`).expect(200);
    const d = res.body;
    expect(d).toMatchObject({
      fitId,
      region: "L_dlpfc",
      kind: "association",
      estimator: "ols",
      inference: "permutation",
      level: 0.95,
      participantsVisible: true,
    });
    expect(d.axes).toEqual({ x: "accuracy", y: "contrast value", group: null, levels: null });
    expect(d.points).toHaveLength(d.n);
    expect(d.n).toBe(d.result.n);
    for (const p of d.points) {
      expect(typeof p.participant).toBe("string");
      expect(Number.isFinite(p.x)).toBe(true);
      expect(Number.isFinite(p.y)).toBe(true);
      expect(Array.isArray(p.flags)).toBe(true);
    }
    const flagged = d.points.filter((p: { flags: string[] }) => p.flags.length > 0).length;
    expect(flagged).toBeGreaterThan(0);
    expect(
      d.flagCounts.outlier + d.flagCounts.leverage + d.flagCounts.influence,
    ).toBeGreaterThanOrEqual(flagged);
    expect(d.band.lines).toHaveLength(1);
    expect(d.band.lines[0].points).toHaveLength(50);
    for (const q of d.band.lines[0].points) expect(q.low).toBeLessThanOrEqual(q.high);
    // Every rearrangement evaluated (the identity included) is counted once (exact enumeration of the bins).
    expect(d.nullHistogram.counts.reduce((a: number, b: number) => a + b, 0)).toBe(
      d.result.permutation.rearrangements,
    );
    expect(d.groupMeans).toBeNull();
    // Sent with the points as the region's kept text: the very JSON of the object form, key for key.
    const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    expect(res.text).toBe(JSON.stringify(await regionDetail(t.db, row, "L_dlpfc", true)));
    expect(res.headers["content-type"]).toBe("application/json; charset=utf-8");
    await as("viewer").get(`/api/fits/${fitId}/regions/nowhere`).expect(404);
  });

  it("a two-group fit's region has each group's mean with its interval and a group label per point", async () => {
    const twoGroup = await createModel({
      name: "Patients versus controls",
      regionSelection: "independent-data",
      spec: { kind: "two-group", group: "group", levels: ["patient", "control"] },
    });
    const id = await runFit(twoGroup);
    await waitForStatus(id, ["done"]);
    const d = (await as("analyst").get(`/api/fits/${id}/regions/dACC`).expect(200)).body;
    expect(d.groupMeans.map((g: { label: string }) => g.label)).toEqual(["patient", "control"]);
    expect(d.groupMeans[0].n + d.groupMeans[1].n).toBe(d.n);
    expect(new Set(d.points.map((p: { group: string }) => p.group))).toEqual(
      new Set(["patient", "control"]),
    );
    expect(d.band).toBeNull();
  });

  it("sets a participant aside with a reason, previews the region at once, restores, all logged", async () => {
    const detail = (await as("analyst").get(`/api/fits/${fitId}/regions/L_dlpfc`).expect(200)).body;
    const target = [...detail.points].sort(
      (a: { cooksDistance: number }, b: { cooksDistance: number }) =>
        b.cooksDistance - a.cooksDistance,
    )[0].participant as string;
    const noReason = await as("analyst")
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: target })
      .expect(400);
    expect(noReason.body.error.details[0]).toMatchObject({ field: "body.reason" });
    const unknown = await as("analyst")
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: "sub-999", reason: "x" })
      .expect(400);
    expect(unknown.body.error.details[0]).toMatchObject({
      field: "body.participant",
      message: expect.stringContaining("no participant 'sub-999'"),
    });
    await as("viewer")
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: target, reason: "x" })
      .expect(403);
    const reason = "Excessive head motion noted at the scan, decided before the analysis";
    const created = await as("analyst")
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: target, region: "L_dlpfc", reason })
      .expect(201);
    expect(created.body).toMatchObject({
      participant: target,
      region: "L_dlpfc",
      reason,
      active: true,
      restoredAt: null,
    });
    await as("analyst")
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: target, region: "L_dlpfc", reason })
      .expect(409);

    const preview = (
      await as("analyst").post(`/api/fits/${fitId}/regions/L_dlpfc/preview`).expect(200)
    ).body;
    expect(preview).toMatchObject({
      region: "L_dlpfc",
      inference: "parametric",
      changes: { added: 1, restored: 0 },
      setAside: { count: 1 },
    });
    expect(preview.preview.n).toBe(detail.n - 1);
    expect(preview.fit.n).toBe(detail.n);
    expect(preview.fit.estimate).toBe(detail.result.estimate);
    expect(preview.preview.estimate).not.toBe(preview.fit.estimate);
    // Other regions are unaffected by a set-aside from L_dlpfc only.
    const other = (
      await as("analyst").post(`/api/fits/${fitId}/regions/R_dlpfc/preview`).expect(200)
    ).body;
    expect(other.preview.n).toBe(other.fit.n);
    expect(other.preview.estimate).toBeCloseTo(other.fit.estimate, 12);

    // A refit is a new fit with the set-aside in its recipe; the old fit stays as it was.
    const refit = await as("analyst")
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId })
      .expect(202);
    const refitDone = await waitForStatus(refit.body.id, ["done"]);
    expect((refitDone.recipe as { setAside: unknown[] }).setAside).toEqual([
      { participant: target, region: "L_dlpfc", reason },
    ]);
    const refitRegion = (
      refitDone.result as { regions: { region: string; n: number; estimate: number }[] }
    ).regions.find((r) => r.region === "L_dlpfc");
    expect(refitRegion?.n).toBe(detail.n - 1);
    expect(refitRegion?.estimate).toBeCloseTo(preview.preview.estimate, 12);
    const refitDetail = (
      await as("analyst").get(`/api/fits/${refit.body.id}/regions/L_dlpfc`).expect(200)
    ).body;
    expect(refitDetail.setAside).toEqual([{ participant: target, scope: "this region", reason }]);
    expect(refitDetail.points.map((p: { participant: string }) => p.participant)).not.toContain(
      target,
    );
    const old = (await as("analyst").get(`/api/fits/${fitId}`).expect(200)).body;
    expect(old.recipe.setAside).toEqual([]);

    const restored = await as("analyst")
      .delete(`/api/studies/${studyId}/set-asides/${created.body.id}`)
      .send({ reason: "Motion was within limits after re-checking" })
      .expect(200);
    expect(restored.body).toMatchObject({
      active: false,
      restoreReason: "Motion was within limits after re-checking",
      restoredBy: { name: "Tomas Ferreira" },
    });
    await as("analyst")
      .delete(`/api/studies/${studyId}/set-asides/${created.body.id}`)
      .send({ reason: "Twice" })
      .expect(409);
    const list = (await as("analyst").get(`/api/studies/${studyId}/set-asides`).expect(200)).body;
    expect(list.find((s: { id: string }) => s.id === created.body.id)).toMatchObject({
      active: false,
      reason,
    });
    expect(
      (await as("analyst").get(`/api/studies/${studyId}/set-asides?active=true`).expect(200)).body,
    ).toEqual([]);
    const back = (
      await as("analyst").post(`/api/fits/${fitId}/regions/L_dlpfc/preview`).expect(200)
    ).body;
    expect(back.preview.n).toBe(detail.n);
    expect(back.preview.estimate).toBeCloseTo(detail.result.estimate, 12);

    const activity = (
      await as("reviewer").get(`/api/studies/${studyId}/activity?kind=participant`).expect(200)
    ).body;
    expect(activity.map((e: { kind: string }) => e.kind).slice(0, 2)).toEqual([
      "participant.restored",
      "participant.set_aside",
    ]);
    expect(activity[1]).toMatchObject({
      targetId: target,
      after: { participant: target, region: "L_dlpfc", reason },
    });
    expect(activity[0]).toMatchObject({
      targetId: target,
      after: { reason: "Motion was within limits after re-checking" },
    });
  });

  it("in a restricted study, Viewers get counts and numbers but no participant-level rows", async () => {
    await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      const d = (await as("viewer").get(`/api/fits/${fitId}/regions/L_dlpfc`).expect(200)).body;
      expect(d).toMatchObject({ participantsVisible: false, points: null, setAside: null });
      expect(d.n).toBeGreaterThan(0);
      expect(d.flagCounts.outlier + d.flagCounts.leverage + d.flagCounts.influence).toBeGreaterThan(
        0,
      );
      expect(d.band.lines[0].points).toHaveLength(50);
      expect(JSON.stringify(d)).not.toMatch(/sub-\d/);
      const fit = (await as("viewer").get(`/api/fits/${fitId}`).expect(200)).body;
      expect(fit).toMatchObject({ participantsVisible: false, recipe: null });
      expect(JSON.stringify(fit)).not.toMatch(/sub-\d/);
      const asides = (await as("viewer").get(`/api/studies/${studyId}/set-asides`).expect(200))
        .body as { participant: string | null }[];
      expect(asides.length).toBeGreaterThan(0);
      expect(asides.every((s) => s.participant === null)).toBe(true);
      const reviewer = (await as("reviewer").get(`/api/fits/${fitId}/regions/L_dlpfc`).expect(200))
        .body;
      expect(reviewer.points.length).toBe(reviewer.n);
    } finally {
      await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
  });
});

/** A GET through node's own client, with the bytes exactly as sent (nothing decoded). */
function rawGet(
  path: string,
  role: string,
  headers: Record<string, string> = {},
): Promise<{ status: number; headers: IncomingHttpHeaders; bytes: Buffer }> {
  return new Promise((resolve, reject) => {
    const req = httpRequest(
      `${t.url}${path}`,
      { headers: { Cookie: cookies.get(role) as string, ...headers } },
      (res) => {
        const chunks: Buffer[] = [];
        res.on("data", (c: Buffer) => chunks.push(c));
        res.on("end", () =>
          resolve({
            status: res.statusCode ?? 0,
            headers: res.headers,
            bytes: Buffer.concat(chunks),
          }),
        );
        res.on("error", reject);
      },
    );
    req.on("error", reject);
    req.end();
  });
}

describe("a finished fit's view: kept, compressed once, with a strong ETag", () => {
  let fitId: string;
  let modelId: string;

  beforeAll(async () => {
    modelId = await createModel({
      name: "Accuracy, kept view",
      regionSelection: "anatomical-or-prior",
      spec: { kind: "association", predictor: "accuracy" },
    });
    fitId = await runFit(modelId);
    await waitForStatus(fitId, ["done"]);
  });

  it("the gzip answer decodes once to exactly the view's JSON, the plain answer is that text; each has its own strong ETag", async () => {
    const zipped = await rawGet(`/api/fits/${fitId}`, "analyst", {
      "Accept-Encoding": "gzip, deflate, br",
    });
    expect(zipped.status).toBe(200);
    expect(zipped.headers["content-encoding"]).toBe("gzip");
    expect(zipped.headers["content-type"]).toBe("application/json; charset=utf-8");
    expect(zipped.headers["cache-control"]).toBe("private, no-cache, no-transform");
    expect(zipped.headers.vary).toMatch(/Accept-Encoding/);
    expect(zipped.headers.etag).toMatch(/^"[A-Za-z0-9_-]{43}"$/);
    expect(Number(zipped.headers["content-length"])).toBe(zipped.bytes.length);
    // One gunzip gives the JSON (the compression middleware did not compress it again), byte for byte what the view serialises to.
    const text = gunzipSync(zipped.bytes).toString("utf8");
    const view = await loadFitView(t.db, t.app.locals.fitJobs as FitJobs, studyId, fitId, true);
    expect(text).toBe(JSON.stringify(view));
    expect(JSON.parse(text)).toMatchObject({
      id: fitId,
      status: "done",
      participantsVisible: true,
      result: { regions: expect.any(Array) },
    });

    const plain = await rawGet(`/api/fits/${fitId}`, "analyst");
    expect(plain.status).toBe(200);
    expect(plain.headers["content-encoding"]).toBeUndefined();
    expect(plain.headers["cache-control"]).toBe("private, no-cache, no-transform");
    expect(plain.bytes.toString("utf8")).toBe(text);
    expect(plain.headers.etag).toMatch(/^"[A-Za-z0-9_-]{43}"$/);
    expect(plain.headers.etag).not.toBe(zipped.headers.etag);
    // A client that accepts only brotli gets the plain text, not a second encoding of it.
    const brOnly = await rawGet(`/api/fits/${fitId}`, "analyst", { "Accept-Encoding": "br" });
    expect(brOnly.headers["content-encoding"]).toBeUndefined();
    expect(brOnly.bytes.toString("utf8")).toBe(text);

    const again = await rawGet(`/api/fits/${fitId}`, "reviewer", { "Accept-Encoding": "gzip" });
    expect(again.headers.etag).toBe(zipped.headers.etag);
    expect(again.bytes.equals(zipped.bytes)).toBe(true);
  });

  it("If-None-Match answers 304 with no body until what the view shows changes: approval, the model's name, a stated trait reliability", async () => {
    const gzip = { "Accept-Encoding": "gzip" };
    const first = await rawGet(`/api/fits/${fitId}`, "analyst", gzip);
    const etag = first.headers.etag as string;
    const same = await rawGet(`/api/fits/${fitId}`, "analyst", { ...gzip, "If-None-Match": etag });
    expect(same.status).toBe(304);
    expect(same.bytes.length).toBe(0);
    expect(same.headers.etag).toBe(etag);
    expect(same.headers["cache-control"]).toBe("private, no-cache, no-transform");
    expect(
      (
        await rawGet(`/api/fits/${fitId}`, "analyst", {
          ...gzip,
          "If-None-Match": `"other", W/${etag}`,
        })
      ).status,
    ).toBe(304);
    expect(
      (await rawGet(`/api/fits/${fitId}`, "analyst", { ...gzip, "If-None-Match": '"other"' }))
        .status,
    ).toBe(200);
    // The plain answer's ETag does not validate the gzip answer.
    const plainTag = (await rawGet(`/api/fits/${fitId}`, "analyst")).headers.etag as string;
    expect(
      (await rawGet(`/api/fits/${fitId}`, "analyst", { ...gzip, "If-None-Match": plainTag }))
        .status,
    ).toBe(200);

    const changed = async (before: string) => {
      const res = await rawGet(`/api/fits/${fitId}`, "analyst", {
        ...gzip,
        "If-None-Match": before,
      });
      expect(res.status).toBe(200);
      expect(res.headers.etag).not.toBe(before);
      return {
        etag: res.headers.etag as string,
        body: JSON.parse(gunzipSync(res.bytes).toString("utf8")),
      };
    };
    await as("reviewer").post(`/api/fits/${fitId}/approve`).expect(200);
    const approved = await changed(etag);
    expect(approved.body.approval).toMatchObject({ by: { name: expect.any(String) } });

    await as("analyst")
      .patch(`/api/studies/${studyId}/models/${modelId}`)
      .send({ name: "Accuracy, kept view, renamed" })
      .expect(200);
    const renamed = await changed(approved.etag);
    expect(renamed.body.model.name).toBe("Accuracy, kept view, renamed");

    const attenuated = (body: { result: { regions: Record<string, unknown>[] } }) =>
      body.result.regions.filter((r) => r.attenuation !== undefined).length;
    expect(attenuated(renamed.body)).toBe(0);
    await as("analyst")
      .put(`/api/studies/${studyId}/trait-reliabilities`)
      .send([{ column: "accuracy", reliability: 0.8, source: "kept-view test" }])
      .expect(200);
    try {
      const stated = await changed(renamed.etag);
      expect(attenuated(stated.body)).toBeGreaterThan(0);
      // Nothing changed since: 304 again.
      expect(
        (await rawGet(`/api/fits/${fitId}`, "analyst", { ...gzip, "If-None-Match": stated.etag }))
          .status,
      ).toBe(304);
    } finally {
      await as("analyst").put(`/api/studies/${studyId}/trait-reliabilities`).send([]).expect(200);
    }
  });

  it("Viewers of a restricted study get their own body (no recipe, no participant id) with its own ETag", async () => {
    const full = await rawGet(`/api/fits/${fitId}`, "viewer", { "Accept-Encoding": "gzip" });
    await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      const withheld = await rawGet(`/api/fits/${fitId}`, "viewer", {
        "Accept-Encoding": "gzip",
        "If-None-Match": full.headers.etag as string,
      });
      expect(withheld.status).toBe(200);
      expect(withheld.headers.etag).not.toBe(full.headers.etag);
      const text = gunzipSync(withheld.bytes).toString("utf8");
      expect(JSON.parse(text)).toMatchObject({ participantsVisible: false, recipe: null });
      expect(text).not.toMatch(/sub-\d/);
      const reviewer = await rawGet(`/api/fits/${fitId}`, "reviewer", {
        "Accept-Encoding": "gzip",
      });
      expect(JSON.parse(gunzipSync(reviewer.bytes).toString("utf8")).recipe).not.toBeNull();
    } finally {
      await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
  });

  it("a fit that is not done is answered afresh, not from a kept body (no strong ETag)", async () => {
    const long = await createModel({
      name: "Long, not kept",
      regionSelection: "independent-data",
      spec: { kind: "one-sample", inference: "permutation", resamples: 1_000_000 },
    });
    const id = await runFit(long);
    const res = await rawGet(`/api/fits/${id}`, "analyst", { "Accept-Encoding": "gzip" });
    expect(res.status).toBe(200);
    // Express's own weak ETag of the JSON it just wrote, if any; never a kept body's strong one.
    expect(String(res.headers.etag ?? "W/")).toMatch(/^W\//);
    expect(res.headers["cache-control"]).not.toBe("private, no-cache, no-transform");
    expect(["queued", "running"]).toContain(
      JSON.parse(gunzipSync(res.bytes).toString("utf8")).status,
    );
    await as("analyst").post(`/api/fits/${id}/cancel`).expect(200);
  });
});

describe("per-participant diagnostics, a page at a time", () => {
  let fitId: string;
  const base = () => `/api/fits/${fitId}/regions/L_dlpfc/participants`;

  beforeAll(async () => {
    fitId = await runFit(
      await createModel({
        name: "Accuracy and age, pages",
        regionSelection: "anatomical-or-prior",
        spec: { kind: "association", predictor: "accuracy", covariates: ["age"] },
      }),
    );
    await waitForStatus(fitId, ["done"]);
  });

  it("pages in the fit's order cover every participant once, with every diagnostic, matching the region detail's points", async () => {
    const detail = (await as("analyst").get(`/api/fits/${fitId}/regions/L_dlpfc`).expect(200)).body;
    const first = (await as("analyst").get(base()).expect(200)).body;
    expect(first).toMatchObject({
      fitId,
      region: "L_dlpfc",
      n: detail.n,
      total: detail.n,
      offset: 0,
      limit: 100,
      sort: "position",
      direction: "asc",
      search: null,
    });
    const rows: Record<string, unknown>[] = [];
    for (let offset = 0; offset < detail.n; offset += 7) {
      const page = (await as("reviewer").get(`${base()}?offset=${offset}&limit=7`).expect(200))
        .body;
      expect(page.rows.length).toBe(Math.min(7, detail.n - offset));
      rows.push(...page.rows);
    }
    expect(rows).toEqual(first.rows);
    expect(rows.map((r) => r.participant)).toEqual(
      detail.points.map((p: { participant: string }) => p.participant),
    );
    for (const [i, row] of rows.entries()) {
      expect(Object.keys(row).sort()).toEqual([
        "cooksDistance",
        "dffits",
        "fitted",
        "flags",
        "group",
        "leverage",
        "mahalanobis",
        "participant",
        "residual",
        "studentizedResidual",
        "x",
        "y",
      ]);
      expect(row).toMatchObject(detail.points[i]);
    }
    // The region detail keeps only what its plots draw.
    expect(Object.keys(detail.points[0]).sort()).toEqual([
      "cooksDistance",
      "flags",
      "group",
      "leverage",
      "participant",
      "studentizedResidual",
      "x",
      "y",
    ]);
    const beyond = (await as("analyst").get(`${base()}?offset=${detail.n}`).expect(200)).body;
    expect(beyond).toMatchObject({ total: detail.n, rows: [] });
  });

  it("orders by a column either way with missing values last and ties in the fit's order, and searches participant ids", async () => {
    const all = (await as("analyst").get(`${base()}?limit=1000`).expect(200)).body.rows as {
      participant: string;
      cooksDistance: number | null;
      flags: string[];
    }[];
    const position = new Map(all.map((r, i) => [r.participant, i]));
    for (const direction of ["asc", "desc"] as const) {
      const sorted = (
        await as("analyst")
          .get(`${base()}?limit=1000&sort=cooksDistance&direction=${direction}`)
          .expect(200)
      ).body.rows as typeof all;
      expect(sorted.length).toBe(all.length);
      const values = sorted.map((r) => r.cooksDistance);
      const present = values.filter((v): v is number => v !== null);
      expect(values.slice(present.length).every((v) => v === null)).toBe(true);
      expect(present).toEqual([...present].sort((a, b) => (direction === "asc" ? a - b : b - a)));
      for (let i = 1; i < sorted.length; i++) {
        if (sorted[i].cooksDistance === sorted[i - 1].cooksDistance)
          expect(position.get(sorted[i].participant)).toBeGreaterThan(
            position.get(sorted[i - 1].participant) as number,
          );
      }
    }
    // Pages of a sorted order are slices of it.
    const top = (
      await as("analyst")
        .get(`${base()}?sort=cooksDistance&direction=desc&offset=3&limit=5`)
        .expect(200)
    ).body.rows;
    const whole = (
      await as("analyst").get(`${base()}?sort=cooksDistance&direction=desc&limit=1000`).expect(200)
    ).body.rows;
    expect(top).toEqual(whole.slice(3, 8));
    // Flagged participants first.
    const flagged = all.filter((r) => r.flags.length > 0).length;
    expect(flagged).toBeGreaterThan(0);
    const byFlags = (
      await as("analyst").get(`${base()}?sort=flags&direction=desc&limit=1000`).expect(200)
    ).body.rows as typeof all;
    expect(byFlags.slice(0, flagged).every((r) => r.flags.length > 0)).toBe(true);
    expect(byFlags.slice(flagged).every((r) => r.flags.length === 0)).toBe(true);
    const byId = (
      await as("analyst").get(`${base()}?sort=participant&direction=desc&limit=3`).expect(200)
    ).body.rows as typeof all;
    // Ids in natural order ("sub-2" before "sub-10").
    const natural = new Intl.Collator("en", { numeric: true }).compare;
    expect(byId.map((r) => r.participant)).toEqual(
      all
        .map((r) => r.participant)
        .sort(natural)
        .reverse()
        .slice(0, 3),
    );
    const found = (
      await as("analyst")
        .get(`${base()}?search=${encodeURIComponent(all[4].participant.toUpperCase())}`)
        .expect(200)
    ).body;
    expect(found.total).toBeGreaterThanOrEqual(1);
    expect(found.rows.map((r: { participant: string }) => r.participant)).toContain(
      all[4].participant,
    );
    expect(
      found.rows.every((r: { participant: string }) =>
        r.participant.toLowerCase().includes(all[4].participant.toLowerCase()),
      ),
    ).toBe(true);
    // A search within an order, a page at a time: the matching rows of that order, sliced.
    const stem = all[0].participant.slice(0, -1);
    const matching = whole.filter((r: { participant: string }) => r.participant.includes(stem));
    expect(matching.length).toBeGreaterThan(4);
    const searchedPage = (
      await as("analyst")
        .get(`${base()}?sort=cooksDistance&direction=desc&search=${stem}&offset=2&limit=3`)
        .expect(200)
    ).body;
    expect(searchedPage.total).toBe(matching.length);
    expect(searchedPage.rows).toEqual(matching.slice(2, 5));
  });

  it("refuses a bad page naming the field; 404 for an unknown region, 409 before the fit is done", async () => {
    for (const [query, field] of [
      ["limit=0", "query.limit"],
      ["limit=1001", "query.limit"],
      ["offset=-1", "query.offset"],
      ["sort=colour", "query.sort"],
      ["direction=up", "query.direction"],
      ["page=2", "query"],
    ] as const) {
      const res = await as("analyst").get(`${base()}?${query}`).expect(400);
      expect(res.body.error.code).toBe("validation_failed");
      expect(res.body.error.details[0].field, query).toBe(field);
    }
    await as("analyst").get(`/api/fits/${fitId}/regions/nowhere/participants`).expect(404);
    const [done] = await t.db.select().from(fits).where(eq(fits.id, fitId));
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
    const early = await as("analyst")
      .get(`/api/fits/${queued.id}/regions/L_dlpfc/participants`)
      .expect(409);
    expect(early.body.error.message).toContain("not finished");
    await as("analyst").post(`/api/fits/${queued.id}/cancel`).expect(200);
  });

  it("Viewers of a restricted study are refused (403); Reviewers still page", async () => {
    await as("viewer").get(base()).expect(200);
    await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      const refused = await as("viewer").get(base()).expect(403);
      expect(refused.body.error.code).toBe("forbidden");
      expect(JSON.stringify(refused.body)).not.toMatch(/sub-\d/);
      await as("reviewer").get(base()).expect(200);
    } finally {
      await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
    await as("outsider").get(base()).expect(404);
    await as("anonymous").get(base()).expect(401);
  });
});

describe("the first view of a 400-region fit", () => {
  const PARTICIPANTS = 500;
  const REGIONS = 400;

  /** A 400-region brain table of 500 participants and their sheet, from a seeded generator (a fifth of the regions track accuracy). */
  function largeFiles(): { brain: string; sheet: string } {
    const rng = createRng(7070);
    const lines = [
      [
        "participant_id",
        ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(3, "0")}`),
      ].join(","),
    ];
    const sheet = ["participant_id\tage\taccuracy"];
    for (let i = 0; i < PARTICIPANTS; i++) {
      const id = `sub-${String(i + 1).padStart(4, "0")}`;
      const accuracy = 0.5 + rng.next() / 2;
      const cells = [id];
      for (let r = 0; r < REGIONS; r++)
        cells.push((0.3 * (r % 5 === 0 ? accuracy : 0) + rng.next() * 2 - 1).toFixed(5));
      lines.push(cells.join(","));
      sheet.push([id, String(18 + Math.floor(rng.next() * 50)), accuracy.toFixed(3)].join("\t"));
    }
    return { brain: `${lines.join("\n")}\n`, sheet: `${sheet.join("\n")}\n` };
  }

  it("is under 100 kB compressed: the fit view, its first region's detail and the first page of that region's participants", async () => {
    const study = (
      await as("owner").post("/api/studies").send({ name: "Four hundred regions" }).expect(201)
    ).body.id as string;
    const files = largeFiles();
    for (const [kind, name, text] of [
      ["brain", "large_brain-table.csv", files.brain],
      ["participants", "large_participants.tsv", files.sheet],
    ] as const) {
      const preview = await as("owner")
        .post(`/api/studies/${study}/datasets`)
        .field("kind", kind)
        .attach("file", Buffer.from(text), name)
        .expect(201);
      await as("owner")
        .post(`/api/studies/${study}/datasets/${preview.body.id}/confirm`)
        .send({})
        .expect(201);
    }
    const model = await as("owner")
      .post(`/api/studies/${study}/models`)
      .send({
        name: "Large",
        regionSelection: "independent-data",
        spec: {
          kind: "association",
          predictor: "accuracy",
          covariates: ["age"],
          inference: "permutation",
          resamples: 200,
          correction: "bh",
        },
      })
      .expect(201);
    const fitId = (
      await as("owner")
        .post(`/api/studies/${study}/fits`)
        .send({ modelId: model.body.id })
        .expect(202)
    ).body.id as string;
    const start = Date.now();
    for (;;) {
      const res = await as("owner").get(`/api/fits/${fitId}`).expect(200);
      if (res.body.status === "done") break;
      if (res.body.status !== "queued" && res.body.status !== "running")
        throw new Error(`fit ${res.body.status}: ${JSON.stringify(res.body.error)}`);
      if (Date.now() - start > 240_000) throw new Error("the 400-region fit did not finish");
      await new Promise((r) => setTimeout(r, 250));
    }
    const gzip = { "Accept-Encoding": "gzip" };
    const view = await rawGet(`/api/fits/${fitId}`, "owner", gzip);
    const shown = JSON.parse(gunzipSync(view.bytes).toString("utf8"));
    expect(shown.result.regions).toHaveLength(REGIONS);
    const first = shown.result.regions[0].region as string;
    const detail = await rawGet(`/api/fits/${fitId}/regions/${first}`, "owner", gzip);
    const page = await rawGet(
      `/api/fits/${fitId}/regions/${first}/participants?limit=50`,
      "owner",
      gzip,
    );
    for (const res of [detail, page]) {
      expect(res.status).toBe(200);
      expect(res.headers["content-encoding"]).toBe("gzip");
    }
    expect(JSON.parse(gunzipSync(detail.bytes).toString("utf8")).points).toHaveLength(PARTICIPANTS);
    expect(JSON.parse(gunzipSync(page.bytes).toString("utf8")).rows).toHaveLength(50);
    const sizes = { view: view.bytes.length, detail: detail.bytes.length, page: page.bytes.length };
    expect(sizes.view + sizes.detail + sizes.page, JSON.stringify(sizes)).toBeLessThan(100_000);
    // Not vacuous: the stored result is far larger than the view.
    const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    expect(JSON.stringify(row.result).length).toBeGreaterThan(2 * gunzipSync(view.bytes).length);
  }, 300_000);
});
