/**
 * Analysis plans through the real app: registering answers the plan with
 * the SHA-256 of its canonical JSON (recomputed here with an independent
 * canonical form), a registered plan cannot change (409 through the API,
 * refused by the database even for a direct UPDATE or DELETE), a Reviewer
 * countersigns once, a new version names what it replaces, and the plan's
 * exclusion rules set participants aside with their rule — at registration
 * on existing data and when data are confirmed later — without duplicates.
 */
import { createHash } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditEvents, memberships, plans } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { DEMO_SEED, generateDemoFiles } from "../../db/seed/demo-data";
import type { PlanInput } from "../../contract/plans";
import type { PlanView } from "../../contract/views/plans";
import type { SetAsideView } from "../../contract/views/set-asides";
import { type Agent, type TestApp, createTestApp, signInDemo, userIdOf } from "./helpers";

let t: TestApp;
const agents: Record<"owner" | "analyst" | "reviewer" | "viewer", Agent> = {} as never;

/**
 * RFC 8785 canonical JSON, written here apart from the server's: object
 * keys sorted by UTF-16 code units, no white space, numbers in the
 * ECMAScript shortest form (what JSON.stringify gives for a finite number).
 */
function canonical(v: unknown): string {
  if (v === null || typeof v !== "object") return JSON.stringify(v);
  if (Array.isArray(v)) return `[${v.map(canonical).join(",")}]`;
  const o = v as Record<string, unknown>;
  const keys = Object.keys(o)
    .filter((k) => o[k] !== undefined)
    .sort();
  return `{${keys.map((k) => `${JSON.stringify(k)}:${canonical(o[k])}`).join(",")}}`;
}
/** The database's refusal message of a statement, or "(not refused)". */
async function refusal(statement: PromiseLike<unknown>): Promise<string> {
  try {
    await statement;
  } catch (e) {
    const cause = (e as { cause?: { message?: string } }).cause;
    return cause?.message ?? (e as Error).message;
  }
  return "(not refused)";
}
const sha256 = (text: string) => createHash("sha256").update(text, "utf8").digest("hex");

async function newStudy(name: string, withData: boolean): Promise<string> {
  const study = await agents.owner.post("/api/studies").send({ name }).expect(201);
  const studyId = study.body.id as string;
  for (const role of ["analyst", "reviewer", "viewer"] as const)
    await t.db
      .insert(memberships)
      .values({ studyId, userId: await userIdOf(t.db, `${role}@demo.covarion.test`), role });
  if (withData) await seedData(studyId);
  return studyId;
}

async function seedData(studyId: string): Promise<void> {
  await seedDemoDatasets(t.db, {
    studyId,
    uploadedBy: await userIdOf(t.db, "analyst@demo.covarion.test"),
    now: new Date(),
  });
}

const plan = (over: Partial<PlanInput> = {}): PlanInput => ({
  title: "Accuracy and prefrontal activity",
  models: [
    {
      name: "accuracy in dlpfc",
      spec: {
        kind: "association",
        predictor: "accuracy",
        covariates: ["age"],
        regions: ["L_dlpfc", "R_dlpfc"],
      },
      regionSelection: "anatomical-or-prior",
      direction: "positive",
    },
  ],
  correction: "holm",
  exclusionRules: [
    { column: "accuracy", op: "<", value: 0.6, reason: "task not done" },
    { column: "mean_fd", op: ">", value: 0.5, reason: "motion" },
  ],
  missing: "keep",
  ...over,
});

/** Participants (sheet ids = brain ids here) whose sheet value meets `test`, read from the demo file itself. */
function sheetParticipants(column: string, test: (v: string) => boolean): string[] {
  const lines = generateDemoFiles(DEMO_SEED).participantsTsv.trim().split("\n");
  const header = lines[0].split("\t");
  const c = header.indexOf(column);
  return lines
    .slice(1)
    .map((l) => l.split("\t"))
    .filter((cells) => test(cells[c]))
    .map((cells) => cells[0]);
}

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const)
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
}, 60_000);
afterAll(async () => {
  await t?.close();
});

describe("registering a plan", () => {
  let studyId: string;
  let registered: PlanView;
  beforeAll(async () => {
    studyId = await newStudy("Plan register study", false);
    registered = (
      await agents.analyst.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(201)
    ).body as PlanView;
  });

  it("answers the plan with the SHA-256 of its canonical JSON, who, when and dataSeen", async () => {
    expect(registered.sha256).toBe(sha256(canonical(registered.plan)));
    expect(registered.plan.title).toBe("Accuracy and prefrontal activity");
    expect(registered.plan.exclusionRules).toHaveLength(2);
    expect(registered.registeredBy.id).toBe(await userIdOf(t.db, "analyst@demo.covarion.test"));
    expect(Number.isNaN(Date.parse(registered.registeredAt))).toBe(false);
    expect(registered.dataSeen).toBe(false);
    // Reading it back gives the same plan and hash, to every member.
    const one = (await agents.viewer.get(`/api/plans/${registered.id}`).expect(200)).body;
    expect(one).toEqual(registered);
    expect(sha256(canonical(one.plan))).toBe(one.sha256);
    const list = (await agents.viewer.get(`/api/studies/${studyId}/plans`).expect(200)).body;
    expect(list).toEqual([registered]);
    const [event] = await t.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.kind, "plan.registered"), eq(auditEvents.targetId, registered.id)));
    expect(event.after).toMatchObject({ sha256: registered.sha256, dataSeen: false });
  });

  it("cannot be changed or deleted through the API (409 plan_registered)", async () => {
    const patch = await agents.owner
      .patch(`/api/plans/${registered.id}`)
      .send({ plan: { ...registered.plan, title: "Other" } })
      .expect(409);
    expect(patch.body.error.code).toBe("plan_registered");
    const del = await agents.owner.delete(`/api/plans/${registered.id}`).expect(409);
    expect(del.body.error.code).toBe("plan_registered");
    const again = (await agents.owner.get(`/api/plans/${registered.id}`).expect(200)).body;
    expect(again).toEqual(registered);
  });

  it("is refused by the database on a direct UPDATE or DELETE", async () => {
    const id = registered.id;
    expect(
      await refusal(
        t.db.execute(sql`UPDATE plans SET plan = '{"title":"x"}'::jsonb WHERE id = ${id}`),
      ),
    ).toBe(`plan ${id} is registered and cannot change (UPDATE refused)`);
    expect(
      await refusal(
        t.db
          .update(plans)
          .set({ sha256: "0".repeat(64) })
          .where(eq(plans.id, id)),
      ),
    ).toBe(`plan ${id} is registered and cannot change (UPDATE refused)`);
    expect(await refusal(t.db.delete(plans).where(eq(plans.id, id)))).toBe(
      `plan ${id} is registered and cannot change (DELETE refused)`,
    );
    expect(await refusal(t.db.execute(sql`TRUNCATE plans CASCADE`))).toBe(
      "plans are registered and cannot change (TRUNCATE refused)",
    );
    const [row] = await t.db.select().from(plans).where(eq(plans.id, registered.id));
    expect(row.sha256).toBe(registered.sha256);
  });

  it("is countersigned once by a Reviewer, and the countersignature then cannot change", async () => {
    await agents.analyst.post(`/api/plans/${registered.id}/countersign`).expect(403);
    await agents.viewer.post(`/api/plans/${registered.id}/countersign`).expect(403);
    const signed = (
      await agents.reviewer.post(`/api/plans/${registered.id}/countersign`).expect(200)
    ).body as PlanView;
    expect(signed.countersignedBy?.id).toBe(await userIdOf(t.db, "reviewer@demo.covarion.test"));
    expect(signed.sha256).toBe(registered.sha256);
    const twice = await agents.reviewer.post(`/api/plans/${registered.id}/countersign`).expect(409);
    expect(twice.body.error.code).toBe("conflict");
    expect(
      await refusal(
        t.db
          .update(plans)
          .set({ countersignedAt: new Date(0) })
          .where(eq(plans.id, registered.id)),
      ),
    ).toBe(`plan ${registered.id} is registered and cannot change (UPDATE refused)`);
  });

  it("the person who registered a plan does not countersign it", async () => {
    const own = (
      await agents.owner.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(201)
    ).body as PlanView;
    const res = await agents.owner.post(`/api/plans/${own.id}/countersign`).expect(409);
    expect(res.body.error.code).toBe("second_person_required");
    const [row] = await t.db.select().from(plans).where(eq(plans.id, own.id));
    expect(row.countersignedBy).toBeNull();
  });

  it("a new version names the plan it replaces and why; both stay", async () => {
    const noReason = await agents.analyst
      .post(`/api/studies/${studyId}/plans`)
      .send({ plan: plan(), replaces: registered.id })
      .expect(400);
    expect(noReason.body.error.details.map((d: { field: string }) => d.field)).toContain(
      "body.reason",
    );
    const v2 = (
      await agents.owner
        .post(`/api/studies/${studyId}/plans`)
        .send({
          plan: plan({ title: "Accuracy and prefrontal activity, v2" }),
          replaces: registered.id,
          reason: "the motion threshold was written in the wrong unit",
        })
        .expect(201)
    ).body as PlanView;
    expect(v2).toMatchObject({
      replaces: registered.id,
      replaceReason: "the motion threshold was written in the wrong unit",
    });
    expect(v2.sha256).not.toBe(registered.sha256);
    const list = (await agents.viewer.get(`/api/studies/${studyId}/plans`).expect(200)).body;
    expect(list.map((p: PlanView) => p.id)[0]).toBe(v2.id);
    expect(list.map((p: PlanView) => p.id)).toContain(registered.id);
  });

  it("refuses a bad plan with the field named, and Reviewers and Viewers may not register", async () => {
    const bad = await agents.analyst
      .post(`/api/studies/${studyId}/plans`)
      .send({
        plan: plan({
          exclusionRules: [{ column: "accuracy", op: "=<" as never, value: 0.6, reason: "x" }],
        }),
      })
      .expect(400);
    expect(bad.body.error.details.map((d: { field: string }) => d.field)).toContain(
      "body.plan.exclusionRules.0.op",
    );
    await agents.reviewer.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(403);
    await agents.viewer.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(403);
  });
});

describe("exclusion rules become set-asides", () => {
  const lowAccuracy = sheetParticipants("accuracy", (v) => v !== "n/a" && Number(v) < 0.6);
  const highMotion = sheetParticipants("mean_fd", (v) => v !== "n/a" && Number(v) > 0.5);
  const missingAccuracy = sheetParticipants("accuracy", (v) => v === "n/a");

  async function ruleSetAsides(studyId: string): Promise<SetAsideView[]> {
    const list = (await agents.analyst.get(`/api/studies/${studyId}/set-asides`).expect(200))
      .body as SetAsideView[];
    return list.filter((s) => s.reason.startsWith("plan rule: "));
  }

  it("on a study with data: at registration, with the rule as the reason, logged", async () => {
    expect(lowAccuracy).toContain("sub-41"); // the demo's low-accuracy participant
    expect(missingAccuracy.length).toBeGreaterThan(0);
    const studyId = await newStudy("Plan rules on data", true);
    const p = (
      await agents.analyst.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(201)
    ).body as PlanView;
    expect(p.dataSeen).toBe(true);
    const asides = await ruleSetAsides(studyId);
    const expected = new Map<string, string>();
    for (const id of highMotion) expected.set(id, "plan rule: mean_fd > 0.5 — motion");
    for (const id of lowAccuracy) expected.set(id, "plan rule: accuracy < 0.6 — task not done");
    // sub-07 and sub-15 are named differently in the brain table and not mapped: not in the data.
    for (const id of ["sub-07", "sub-15"]) expected.delete(id);
    // A participant meeting both rules is listed under the first (accuracy).
    expect(new Map(asides.map((s) => [s.participant, s.reason]))).toEqual(expected);
    expect(asides.every((s) => s.region === null && s.active)).toBe(true);
    const events = await t.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.studyId, studyId), eq(auditEvents.kind, "participant.set_aside")));
    expect(events).toHaveLength(asides.length);
    expect(events[0].after).toMatchObject({ rule: { column: expect.any(String) } });

    // Registering a new version with the same rules adds no duplicates.
    await agents.analyst
      .post(`/api/studies/${studyId}/plans`)
      .send({ plan: plan({ title: "v2" }), replaces: p.id, reason: "title" })
      .expect(201);
    expect(await ruleSetAsides(studyId)).toHaveLength(asides.length);
  });

  it("missing values follow the plan's missing-value rule", async () => {
    const studyId = await newStudy("Plan rules, missing set aside", true);
    await agents.analyst
      .post(`/api/studies/${studyId}/plans`)
      .send({
        plan: plan({
          exclusionRules: [{ column: "accuracy", op: "<", value: 0.6, reason: "task not done" }],
          missing: "set-aside",
        }),
      })
      .expect(201);
    const ids = (await ruleSetAsides(studyId)).map((s) => s.participant).sort();
    expect(ids).toEqual([...new Set([...lowAccuracy, ...missingAccuracy])].sort());
  });

  it("a rule on a column the sheet lacks is refused with the rule named, and nothing is stored", async () => {
    const studyId = await newStudy("Plan rules, unknown column", true);
    const res = await agents.analyst
      .post(`/api/studies/${studyId}/plans`)
      .send({
        plan: plan({ exclusionRules: [{ column: "meanfd", op: ">", value: 0.5, reason: "m" }] }),
      })
      .expect(400);
    expect(res.body.error.details[0].field).toBe("body.plan.exclusionRules.0.column");
    expect(res.body.error.message).toMatch(/meanfd/);
    expect((await agents.analyst.get(`/api/studies/${studyId}/plans`).expect(200)).body).toEqual(
      [],
    );
  });

  it("on data confirmed after the plan: when the data are confirmed", async () => {
    const studyId = await newStudy("Plan before data", false);
    await agents.analyst.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(201);
    expect(await ruleSetAsides(studyId)).toEqual([]);
    await seedData(studyId);
    const asides = await ruleSetAsides(studyId);
    expect(asides.map((s) => s.participant)).toContain("sub-41");
    expect(asides.find((s) => s.participant === "sub-41")?.reason).toBe(
      "plan rule: accuracy < 0.6 — task not done",
    );
  });
});

describe("a fit compared with the plan", () => {
  let studyId: string;
  let planView: PlanView;
  const planned = {
    kind: "association",
    predictor: "accuracy",
    covariates: ["age"],
    regions: ["L_dlpfc", "R_dlpfc"],
    correction: "holm",
  };
  beforeAll(async () => {
    studyId = await newStudy("Plan and fits", true);
    planView = (
      await agents.analyst.post(`/api/studies/${studyId}/plans`).send({ plan: plan() }).expect(201)
    ).body as PlanView;
  });

  async function fitOf(name: string, spec: Record<string, unknown>) {
    const model = await agents.analyst
      .post(`/api/studies/${studyId}/models`)
      .send({ name, spec, regionSelection: "anatomical-or-prior" })
      .expect(201);
    const fit = await agents.analyst
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId: model.body.id })
      .expect(202);
    return fit.body.id as string;
  }

  async function viewOf(fitId: string, wanted = ["queued", "running", "done"]) {
    for (let i = 0; i < 600; i += 1) {
      const v = (await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body;
      if (wanted.includes(v.status)) return v;
      await new Promise((r) => setTimeout(r, 100));
    }
    throw new Error(`fit ${fitId} did not reach ${wanted.join("/")}`);
  }

  it("a fit equal to a planned model, with the rule set-asides only, is as planned (also once done)", async () => {
    const fitId = await fitOf("as planned", planned);
    const v = await viewOf(fitId);
    expect(v.plan).toEqual({
      id: planView.id,
      sha256: planView.sha256,
      registeredAt: planView.registeredAt,
      model: "accuracy in dlpfc",
      asPlanned: true,
      deviations: [],
    });
    const done = await viewOf(fitId, ["done"]);
    expect(done.plan).toEqual(v.plan);
    const methods = (await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200)).body;
    expect(methods.text).toContain(
      `The analysis followed the plan registered on ${new Date(planView.registeredAt).toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric", timeZone: "UTC" })} (SHA-256 ${planView.sha256.slice(0, 12)}…).`,
    );
  });

  it("a fit with an extra covariate and an extra set-aside lists those deviations", async () => {
    await agents.analyst
      .post(`/api/studies/${studyId}/set-asides`)
      .send({ participant: "sub-02", reason: "fell asleep" })
      .expect(201);
    const fitId = await fitOf("with motion", {
      ...planned,
      covariates: ["age", "mean_fd"],
      estimator: "huber",
    });
    const v = await viewOf(fitId);
    expect(v.plan.asPlanned).toBe(false);
    expect(v.plan.deviations).toEqual([
      "added covariate mean_fd",
      "estimator huber instead of ols",
      "1 participant set aside outside the plan's rules",
    ]);
    await viewOf(fitId, ["done"]);
    const methods = (await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200)).body;
    expect(methods.text).toContain(
      `(SHA-256 ${planView.sha256.slice(0, 12)}…): added covariate mean_fd; estimator huber instead of ols; 1 participant set aside outside the plan's rules.`,
    );
    expect(methods.text).toContain("The analysis deviated from the plan registered on");
  });

  it("a fit made before any plan carries no plan", async () => {
    const other = await newStudy("Fits before a plan", true);
    const model = await agents.analyst
      .post(`/api/studies/${other}/models`)
      .send({ name: "m", spec: planned, regionSelection: "anatomical-or-prior" })
      .expect(201);
    const fit = await agents.analyst
      .post(`/api/studies/${other}/fits`)
      .send({ modelId: model.body.id })
      .expect(202);
    await agents.analyst.post(`/api/studies/${other}/plans`).send({ plan: plan() }).expect(201);
    const v = (await agents.viewer.get(`/api/fits/${fit.body.id}`).expect(200)).body;
    expect(v.plan).toBeNull();
  });
});
