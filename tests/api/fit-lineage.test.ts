/**
 * Every fit shows what it left out and why: the set-asides it applied with
 * their reason, author and date; the earlier fit it re-runs and what
 * changed; whether newer data or set-asides exist. Through the real app on
 * the demo study.
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { eq } from "drizzle-orm";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { studies, users } from "../../db/schema";
import { demoPeople, demoStudy } from "../../db/seed";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { currentVersions } from "../../server/services/datasets";
import { createTestApp, type TestApp } from "./helpers";

let t: TestApp;
let studyId: string;
const cookies = new Map<string, string>();

const as = (role: string) => {
  const cookie = cookies.get(role) as string;
  const r = request(t.url);
  return {
    get: (path: string) => r.get(path).set("Cookie", cookie),
    post: (path: string) => r.post(path).set("Cookie", cookie),
    patch: (path: string) => r.patch(path).set("Cookie", cookie),
    delete: (path: string) => r.delete(path).set("Cookie", cookie),
  };
};

interface View {
  id: string;
  status: string;
  stage: string;
  n: { min: number; max: number } | null;
  setAsideCount: number;
  setAsides: {
    participant: string | null;
    region: string | null;
    scope: string;
    reason: string;
    createdBy: { name: string | null } | null;
    createdAt: string | null;
  }[];
  refitOf: string | null;
  refitOfCreatedAt: string | null;
  changes: string[];
  stale: boolean;
  staleReasons: string[];
  result: { regions: { region: string; n: number }[] } | null;
}

async function view(fitId: string, role = "analyst"): Promise<View> {
  return (await as(role).get(`/api/fits/${fitId}`).expect(200)).body as View;
}

async function runFit(modelId: string): Promise<View> {
  const id = (
    await as("analyst").post(`/api/studies/${studyId}/fits`).send({ modelId }).expect(202)
  ).body.id as string;
  const start = Date.now();
  for (;;) {
    const v = await view(id);
    if (v.status === "done") return v;
    if (v.status !== "queued" && v.status !== "running") throw new Error(`fit ${v.status}`);
    if (Date.now() - start > 60_000) throw new Error("the fit did not finish");
    await new Promise((r) => setTimeout(r, 100));
  }
}

let modelId: string;
const target = "sub-12";
const reason = "Fell asleep during the second run (noted by the scan operator before analysis)";

beforeAll(async () => {
  t = await createTestApp();
  const [study] = await t.db.select().from(studies).where(eq(studies.name, demoStudy.name));
  studyId = study.id;
  const { brain } = await currentVersions(t.db, studyId);
  if (!brain) {
    const [owner] = await t.db.select().from(users).where(eq(users.email, demoPeople[0].email));
    await seedDemoDatasets(t.db, { studyId, uploadedBy: owner.id, now: new Date() });
  }
  for (const role of ["owner", "analyst", "reviewer", "viewer"]) {
    const res = await request(t.url)
      .post("/api/dev/demo-sign-in")
      .send({ email: `${role}@demo.covarion.test` })
      .expect(200);
    cookies.set(role, String(res.headers["set-cookie"]).split(";")[0]);
  }
  modelId = (
    await as("analyst")
      .post(`/api/studies/${studyId}/models`)
      .send({
        name: "Load effect across the group",
        regionSelection: "anatomical-or-prior",
        spec: { kind: "one-sample", regions: ["L_dlpfc", "R_dlpfc", "dACC"] },
      })
      .expect(201)
  ).body.id as string;
});
afterAll(async () => {
  await t?.close();
});

describe("fit lineage", () => {
  let first: View;
  let second: View;

  it("a first fit has no set-asides, no earlier fit, N per region and is not stale", async () => {
    first = await runFit(modelId);
    expect(first).toMatchObject({
      setAsides: [],
      setAsideCount: 0,
      refitOf: null,
      refitOfCreatedAt: null,
      changes: [],
      stale: false,
      staleReasons: [],
      stage: "done",
    });
    const ns = (first.result?.regions ?? []).map((r) => r.n);
    expect(ns).toHaveLength(3);
    expect(first.n).toEqual({ min: Math.min(...ns), max: Math.max(...ns) });
  });

  it("a set-aside makes the first fit stale, naming the participant", async () => {
    await as("analyst")
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: target, reason })
      .expect(201);
    const stale = await view(first.id);
    expect(stale.stale).toBe(true);
    expect(stale.staleReasons).toEqual([
      `Set-asides changed since this fit: ${target} (all regions) added`,
    ]);
    // The fit itself is unchanged: it still applied nothing.
    expect(stale.setAsides).toEqual([]);
  });

  it("the refit applies the set-aside with its reason, author and date, is a refit of the first fit and names what changed", async () => {
    second = await runFit(modelId);
    expect(second.refitOf).toBe(first.id);
    expect(second.refitOfCreatedAt).not.toBeNull();
    expect(second.changes).toEqual([`Set aside: ${target} (all regions)`]);
    expect(second.setAsideCount).toBe(1);
    expect(second.setAsides).toEqual([
      {
        participant: target,
        region: null,
        scope: "all regions",
        reason,
        createdBy: { id: expect.any(String), name: "Tomas Ferreira" },
        createdAt: expect.any(String),
      },
    ]);
    expect(second.stale).toBe(false);
    expect(second.staleReasons).toEqual([]);
    // One participant fewer in every region.
    for (const [i, r] of (second.result?.regions ?? []).entries())
      expect(r.n).toBe((first.result?.regions[i].n ?? 0) - 1);
  });

  it("the fits list shows the stage, N, set-aside count, lineage and staleness of each fit", async () => {
    const list = (await as("viewer").get(`/api/studies/${studyId}/fits`).expect(200))
      .body as View[];
    const [newest, older] = list;
    expect(newest).toMatchObject({
      id: second.id,
      stage: "done",
      n: second.n,
      setAsideCount: 1,
      refitOf: first.id,
      changes: [`Set aside: ${target} (all regions)`],
      stale: false,
    });
    expect(older).toMatchObject({
      id: first.id,
      stage: "done",
      n: first.n,
      setAsideCount: 0,
      refitOf: null,
      changes: [],
      stale: true,
    });
  });

  it("a Viewer of a restricted study gets the count, reasons and authors without participant ids", async () => {
    await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      const seen = await view(second.id, "viewer");
      expect(seen.setAsides).toEqual([
        {
          participant: null,
          region: null,
          scope: "all regions",
          reason,
          createdBy: { id: expect.any(String), name: "Tomas Ferreira" },
          createdAt: expect.any(String),
        },
      ]);
      expect(seen.changes).toEqual(["Set aside: 1 participant"]);
      const older = await view(first.id, "viewer");
      expect(older.staleReasons).toEqual(["Set-asides changed since this fit: 1 added"]);
      const list = (await as("viewer").get(`/api/studies/${studyId}/fits`).expect(200))
        .body as View[];
      for (const body of [seen, older, list]) expect(JSON.stringify(body)).not.toContain(target);
      // A Reviewer still sees the ids.
      expect((await view(second.id, "reviewer")).setAsides[0].participant).toBe(target);
    } finally {
      await as("owner").patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
  });

  it("an approval shows as the fit's stage in the list", async () => {
    await as("reviewer").post(`/api/fits/${second.id}/approve`).send({}).expect(200);
    const list = (await as("viewer").get(`/api/studies/${studyId}/fits`).expect(200))
      .body as View[];
    expect(list.find((f) => f.id === second.id)?.stage).toBe("approved");
    expect(list.find((f) => f.id === first.id)?.stage).toBe("done");
  });

  it("a restore makes the fit made before the set-aside fresh again and the refit stale, with a new kept body", async () => {
    const before = await as("analyst").get(`/api/fits/${second.id}`).expect(200);
    const [record] = (
      await as("analyst").get(`/api/studies/${studyId}/set-asides?active=true`).expect(200)
    ).body as { id: string }[];
    await as("analyst")
      .delete(`/api/studies/${studyId}/set-asides/${record.id}`)
      .send({ reason: "Re-checked: awake throughout" })
      .expect(200);
    const fresh = await view(first.id);
    expect(fresh).toMatchObject({ stale: false, staleReasons: [] });
    const after = await as("analyst").get(`/api/fits/${second.id}`).expect(200);
    expect(after.body).toMatchObject({
      stale: true,
      staleReasons: [`Set-asides changed since this fit: ${target} (all regions) restored`],
    });
    // The refit still shows what it left out, and who set it aside.
    expect(after.body.setAsides).toHaveLength(1);
    expect(after.body.setAsides[0].createdBy.name).toBe("Tomas Ferreira");
    expect(after.headers.etag).toBeTruthy();
    expect(after.headers.etag).not.toBe(before.headers.etag);
  });

  it("a new brain table version makes every earlier fit stale; a fit on it is a refit naming the new version and is not stale", async () => {
    const file = readFileSync(
      join(__dirname, "../../assets/demo/harbour-bay_lantern-3-vs-1_brain-table.csv"),
      "utf8",
    );
    // The same table with one value changed: a new version.
    const text = file.replace(/^(sub-01,1,)0\.1592/m, "$10.1593");
    expect(text).not.toBe(file);
    const preview = await as("owner")
      .post(`/api/studies/${studyId}/datasets`)
      .field("kind", "brain")
      .attach("file", Buffer.from(text), "brain-table-v2.csv")
      .expect(201);
    const confirmed = await as("owner")
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(201);
    const version = confirmed.body.version as number;
    for (const id of [first.id, second.id]) {
      const v = await view(id);
      expect(v.stale).toBe(true);
      expect(v.staleReasons).toContain(
        `A newer brain table (version ${version}, brain-table-v2.csv) was uploaded`,
      );
    }
    const third = await runFit(modelId);
    // The latest done fit of the model is the one re-run.
    expect(third.refitOf).toBe(second.id);
    expect(third.changes).toEqual([
      `New brain table version ${version} (brain-table-v2.csv)`,
      `Restored: ${target} (all regions)`,
    ]);
    expect(third).toMatchObject({ stale: false, staleReasons: [], setAsides: [] });
  });
});
