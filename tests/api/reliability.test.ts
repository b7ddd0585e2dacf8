/**
 * Reliability of a study's measures through the API: stated trait
 * reliabilities (roles, validation, audit) and the brain reliability per
 * region from the brain table's sessions, on the demo files (invented data
 * from a seeded generator, with a second session for some participants), and
 * attenuation beside association results when both reliabilities are known.
 */
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { memberships, studies } from "../../db/schema";
import { generateDemoFiles } from "../../db/seed/demo-data";
import {
  type Agent,
  type TestApp,
  createTestApp,
  signInByEmail,
  signInDemo,
  userIdOf,
} from "./helpers";

let t: TestApp;
const agents: Record<"owner" | "analyst" | "reviewer" | "viewer" | "outsider", Agent> = {} as never;
const demo = generateDemoFiles();

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
  }
  agents.outsider = await signInByEmail(t, "outsider@lab.example");
}, 60_000);
afterAll(async () => {
  await t?.close();
});

let studyCounter = 0;
/** A fresh study with the four demo people as members. */
async function newStudy(): Promise<string> {
  studyCounter += 1;
  const ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
  const [study] = await t.db
    .insert(studies)
    .values({ name: `Reliability study ${studyCounter}`, createdBy: ownerId })
    .returning();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    await t.db.insert(memberships).values({
      studyId: study.id,
      userId: await userIdOf(t.db, `${role}@demo.covarion.test`),
      role,
    });
  }
  return study.id;
}

async function uploadAndConfirm(
  studyId: string,
  kind: "brain" | "participants",
  content: string,
  fileName: string,
) {
  const preview = await agents.analyst
    .post(`/api/studies/${studyId}/datasets`)
    .field("kind", kind)
    .attach("file", Buffer.from(new TextEncoder().encode(content)), fileName)
    .expect(201);
  await agents.analyst
    .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
    .send({})
    .expect(201);
}

async function demoStudy(): Promise<string> {
  const studyId = await newStudy();
  await uploadAndConfirm(studyId, "brain", demo.brainCsv, demo.brainFileName);
  await uploadAndConfirm(studyId, "participants", demo.participantsTsv, demo.sheetFileName);
  return studyId;
}

describe("trait reliabilities", () => {
  let studyId: string;
  beforeAll(async () => {
    studyId = await demoStudy();
  }, 60_000);
  const path = () => `/api/studies/${studyId}/trait-reliabilities`;

  it("an Analyst states a trait's reliability with its source; every member reads it", async () => {
    const empty = await agents.viewer.get(path()).expect(200);
    expect(empty.body).toEqual([]);
    const put = await agents.analyst
      .put(path())
      .send([
        { column: "accuracy", reliability: 0.82, source: "test–retest r = .82, task manual" },
        {
          column: "symptom_score",
          reliability: 0.9,
          source: "  internal consistency α = .90, scale manual  ",
        },
      ])
      .expect(200);
    expect(put.body).toEqual([
      {
        column: "accuracy",
        reliability: 0.82,
        source: "test–retest r = .82, task manual",
        updatedBy: {
          id: expect.any(String),
          name: "Tomas Ferreira",
          email: "analyst@demo.covarion.test",
        },
        updatedAt: expect.any(String),
      },
      expect.objectContaining({
        column: "symptom_score",
        reliability: 0.9,
        source: "internal consistency α = .90, scale manual",
      }),
    ]);
    for (const role of ["owner", "reviewer", "viewer"] as const) {
      const got = await agents[role].get(path()).expect(200);
      expect(got.body).toEqual(put.body);
    }
  });

  it("a PUT replaces the whole list, and each change is in the activity trail with before and after", async () => {
    await agents.owner
      .put(path())
      .send([{ column: "accuracy", reliability: 0.8, source: "split-half, pilot study" }])
      .expect(200);
    const got = await agents.analyst.get(path()).expect(200);
    expect(
      got.body.map((e: { column: string; reliability: number }) => [e.column, e.reliability]),
    ).toEqual([["accuracy", 0.8]]);
    const activity = await agents.owner
      .get(`/api/studies/${studyId}/activity?kind=trait_reliabilities`)
      .expect(200);
    expect(activity.body[0]).toMatchObject({
      kind: "trait_reliabilities.updated",
      targetType: "participant_sheet",
      before: [
        { column: "accuracy", reliability: 0.82, source: "test–retest r = .82, task manual" },
        {
          column: "symptom_score",
          reliability: 0.9,
          source: "internal consistency α = .90, scale manual",
        },
      ],
      after: [{ column: "accuracy", reliability: 0.8, source: "split-half, pilot study" }],
    });
    await agents.analyst.put(path()).send([]).expect(200, []);
    const cleared = await agents.owner
      .get(`/api/studies/${studyId}/activity?kind=trait_reliabilities`)
      .expect(200);
    expect(cleared.body[0]).toMatchObject({ before: [{ column: "accuracy" }], after: [] });
  });

  it("refuses bad entries, naming each field", async () => {
    const put = (body: unknown) => agents.analyst.put(path()).send(body as object);
    const cases: [unknown, string, RegExp][] = [
      [
        [{ column: "accuracy", reliability: 0, source: "manual" }],
        "body.0.reliability",
        /greater than 0/,
      ],
      [
        [{ column: "accuracy", reliability: 1.2, source: "manual" }],
        "body.0.reliability",
        /at most 1/,
      ],
      [
        [{ column: "accuracy", reliability: "0.8", source: "manual" }],
        "body.0.reliability",
        /number/,
      ],
      [[{ column: "accuracy", reliability: 0.8 }], "body.0.source", /where the value comes from/],
      [
        [{ column: "accuracy", reliability: 0.8, source: "   " }],
        "body.0.source",
        /where the value comes from/,
      ],
      [
        [{ column: "", reliability: 0.8, source: "manual" }],
        "body.0.column",
        /participant-sheet column/,
      ],
      [[{ column: "accuracy", reliability: 0.8, source: "manual", note: "x" }], "body.0", /key/i],
      [
        [
          { column: "accuracy", reliability: 0.8, source: "manual" },
          { column: "accuracy", reliability: 0.7, source: "other" },
        ],
        "body.1.column",
        /listed twice/,
      ],
      [{ column: "accuracy", reliability: 0.8, source: "manual" }, "body", /array/],
    ];
    for (const [body, field, message] of cases) {
      const res = await put(body).expect(400);
      expect(res.body.error.code).toBe("validation_failed");
      expect(res.body.error.details, JSON.stringify(body)).toContainEqual({
        field,
        message: expect.stringMatching(message),
      });
    }
    const unknown = await put([{ column: "shoe_size", reliability: 0.8, source: "manual" }]).expect(
      422,
    );
    expect(unknown.body.error).toMatchObject({
      code: "unknown_column",
      details: [
        { field: "body.0.column", message: `${demo.sheetFileName} has no column "shoe_size"` },
      ],
    });
    const category = await put([
      { column: "accuracy", reliability: 0.8, source: "manual" },
      { column: "sex", reliability: 0.8, source: "manual" },
    ]).expect(422);
    expect(category.body.error.details).toEqual([
      { field: "body.1.column", message: expect.stringContaining('column "sex"') },
    ]);
    expect(category.body.error.details[0].message).toMatch(/not numeric/);
    // Nothing was stored by the refused requests.
    const got = await agents.viewer.get(path()).expect(200);
    expect(got.body).toEqual([]);
  });

  it("role rules: Reviewers and Viewers read but cannot write; non-members get 404; signed-out people 401", async () => {
    const body = [{ column: "accuracy", reliability: 0.8, source: "manual" }];
    for (const role of ["reviewer", "viewer"] as const) {
      const res = await agents[role].put(path()).send(body).expect(403);
      expect(res.body.error.code).toBe("forbidden");
    }
    await agents.outsider.get(path()).expect(404);
    await agents.outsider.put(path()).send(body).expect(404);
    await request(t.url).get(path()).expect(401);
    await request(t.url).put(path()).send(body).expect(401);
  });

  it("a study without a participant sheet takes an empty list but no entries (409)", async () => {
    const bare = await newStudy();
    await agents.analyst.get(`/api/studies/${bare}/trait-reliabilities`).expect(200, []);
    await agents.analyst.put(`/api/studies/${bare}/trait-reliabilities`).send([]).expect(200, []);
    const res = await agents.analyst
      .put(`/api/studies/${bare}/trait-reliabilities`)
      .send([{ column: "accuracy", reliability: 0.8, source: "manual" }])
      .expect(409);
    expect(res.body.error.message).toMatch(/no participant sheet/);
  });
});

/**
 * Intraclass correlations of an n × k matrix by the two-way ANOVA without
 * replication, written out here independently of the engine (Shrout & Fleiss
 * 1979, Psychological Bulletin 86:420–428, Table 1 formulas).
 */
function iccByHand(matrix: number[][]) {
  const n = matrix.length;
  const k = matrix[0].length;
  const grand = matrix.flat().reduce((s, x) => s + x, 0) / (n * k);
  const rowMeans = matrix.map((row) => row.reduce((s, x) => s + x, 0) / k);
  const colMeans = Array.from(
    { length: k },
    (_, j) => matrix.reduce((s, row) => s + row[j], 0) / n,
  );
  const bms = (k * rowMeans.reduce((s, m) => s + (m - grand) ** 2, 0)) / (n - 1);
  const jms = (n * colMeans.reduce((s, m) => s + (m - grand) ** 2, 0)) / (k - 1);
  const wms =
    matrix.reduce((s, row, i) => s + row.reduce((t2, x) => t2 + (x - rowMeans[i]) ** 2, 0), 0) /
    (n * (k - 1));
  const ems =
    matrix.reduce(
      (s, row, i) =>
        s + row.reduce((t2, x, j) => t2 + (x - rowMeans[i] - colMeans[j] + grand) ** 2, 0),
      0,
    ) /
    ((n - 1) * (k - 1));
  return {
    icc11: (bms - wms) / (bms + (k - 1) * wms),
    icc21: (bms - ems) / (bms + (k - 1) * ems + (k * (jms - ems)) / n),
    icc31: (bms - ems) / (bms + (k - 1) * ems),
    icc3k: (bms - ems) / bms,
  };
}

/** Per region, the participants with a value in both sessions of the demo brain table: [session 1, session 2]. */
function demoSessionMatrices(): Map<string, number[][]> {
  const lines = demo.brainCsv.trim().split(/\r?\n/);
  const header = lines[0].split(",");
  const regions = header.filter((h, j) => j > 1 && !h.endsWith("_se"));
  const bySession = new Map<string, Map<string, string[]>>();
  for (const line of lines.slice(1)) {
    const cells = line.split(",");
    const id = cells[0];
    const map = bySession.get(id) ?? new Map<string, string[]>();
    map.set(cells[1], cells);
    bySession.set(id, map);
  }
  const out = new Map<string, number[][]>();
  for (const region of regions) {
    const j = header.indexOf(region);
    const rows: number[][] = [];
    for (const sessions of bySession.values()) {
      const a = sessions.get("1")?.[j];
      const b = sessions.get("2")?.[j];
      if (a === undefined || b === undefined || a === "n/a" || b === "n/a") continue;
      rows.push([Number(a), Number(b)]);
    }
    out.set(region, rows);
  }
  return out;
}

describe("brain reliability per region", () => {
  it("on the demo brain table: the six ICC forms with intervals, equal to the ANOVA formulas computed by hand", async () => {
    const studyId = await demoStudy();
    const res = await agents.viewer.get(`/api/studies/${studyId}/reliability`).expect(200);
    expect(res.body.brainTable).toMatchObject({ version: 1, fileName: demo.brainFileName });
    expect(res.body.sessions).toEqual(["1", "2"]);
    expect(res.body.participantsRetested).toBe(16); // (the demo generator retests 16 participants)
    expect(res.body.method).toMatch(/^Shrout & Fleiss \(1979\)/);
    expect(res.body.method).toMatch(/ICC\(3,1\): consistency of sessions/);
    const matrices = demoSessionMatrices();
    expect(res.body.regions).toHaveLength(10);
    for (const r of res.body.regions) {
      const matrix = matrices.get(r.region) as number[][];
      expect(r.n, r.region).toBe(matrix.length);
      expect(r.sessions).toBe(2);
      const hand = iccByHand(matrix);
      // (exact algebra: Shrout & Fleiss 1979 formulas on the same numbers)
      expect(r.icc11.value, r.region).toBeCloseTo(hand.icc11, 10);
      expect(r.icc21.value, r.region).toBeCloseTo(hand.icc21, 10);
      expect(r.icc31.value, r.region).toBeCloseTo(hand.icc31, 10);
      expect(r.icc3k.value, r.region).toBeCloseTo(hand.icc3k, 10);
      for (const key of ["icc11", "icc21", "icc31", "icc1k", "icc2k", "icc3k"]) {
        const form = r[key];
        expect(Object.keys(form).sort()).toEqual(["ciHigh", "ciLow", "value"]);
        if (form.ciLow !== null)
          expect(form.ciLow, `${r.region} ${key}`).toBeLessThanOrEqual(form.value);
        expect(form.ciHigh, `${r.region} ${key}`).toBeGreaterThanOrEqual(form.value);
      }
    }
    // sub-33 has no R_caudate value in session 1 (the demo's planted missing cell); if retested, that region has one fewer.
    const caudate = res.body.regions.find((r: { region: string }) => r.region === "R_caudate");
    expect(caudate.n).toBeLessThanOrEqual(16);
  });

  it("answers 409 with a clear message without a brain table, without a session column, or with one session", async () => {
    const bare = await newStudy();
    const none = await agents.analyst.get(`/api/studies/${bare}/reliability`).expect(409);
    expect(none.body.error).toMatchObject({
      code: "conflict",
      message: expect.stringMatching(/no confirmed brain table/),
    });

    const noSession = await newStudy();
    await uploadAndConfirm(
      noSession,
      "brain",
      "participant_id,L_insula\nsub-01,0.5\nsub-02,0.2\nsub-03,0.9\n",
      "single.csv",
    );
    const a = await agents.analyst.get(`/api/studies/${noSession}/reliability`).expect(409);
    expect(a.body.error.message).toMatch(/^The brain table single\.csv has no session column/);

    const oneSession = await newStudy();
    await uploadAndConfirm(
      oneSession,
      "brain",
      "participant_id,session,L_insula\nsub-01,1,0.5\nsub-02,1,0.2\nsub-03,1,0.9\n",
      "one.csv",
    );
    const b = await agents.analyst.get(`/api/studies/${oneSession}/reliability`).expect(409);
    expect(b.body.error.message).toMatch(
      /has one session \(1\); reliability needs at least two sessions per participant/,
    );

    const oneRetested = await newStudy();
    await uploadAndConfirm(
      oneRetested,
      "brain",
      "participant_id,session,L_insula\nsub-01,1,0.5\nsub-01,2,0.4\nsub-02,1,0.2\nsub-03,1,0.9\n",
      "retest.csv",
    );
    const c = await agents.analyst.get(`/api/studies/${oneRetested}/reliability`).expect(409);
    expect(c.body.error.message).toMatch(
      /has 1 participant with a value in every session \(1, 2\); reliability needs at least two/,
    );
  });

  it("role rules: every member reads it; non-members get 404", async () => {
    const studyId = await newStudy();
    for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
      await agents[role].get(`/api/studies/${studyId}/reliability`).expect(409);
    }
    await agents.outsider.get(`/api/studies/${studyId}/reliability`).expect(404);
  });
});

describe("attenuation beside association results", () => {
  let studyId: string;
  let reliability: { regions: { region: string; icc31: { value: number } }[] };
  beforeAll(async () => {
    studyId = await demoStudy();
    reliability = (await agents.analyst.get(`/api/studies/${studyId}/reliability`).expect(200))
      .body;
  }, 60_000);

  interface RegionBody {
    region: string;
    n: number;
    r: number;
    rCiLow: number;
    attenuation?: {
      reliabilityBrain: number;
      traitStatedAt: string;
      ceiling: number;
      disattenuated: number;
      observedCiLow: number;
      disattenuatedCiLow: number;
      disattenuatedCiHigh: number;
      caution: string | null;
    };
  }
  interface FitBody {
    id: string;
    result: { regions: RegionBody[]; notes: string[] };
  }

  async function fitOf(name: string, spec: Record<string, unknown>): Promise<FitBody> {
    const model = await agents.analyst
      .post(`/api/studies/${studyId}/models`)
      .send({ name, regionSelection: "anatomical-or-prior", spec })
      .expect(201);
    const created = await agents.analyst
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId: model.body.id })
      .expect(202);
    const start = Date.now();
    for (;;) {
      const res = await agents.viewer.get(`/api/fits/${created.body.id}`).expect(200);
      if (res.body.status === "done") return res.body;
      if (res.body.status === "failed" || res.body.status === "cancelled")
        throw new Error(`fit ${res.body.status}: ${JSON.stringify(res.body.error)}`);
      if (Date.now() - start > 90_000) throw new Error("fit did not finish");
      await new Promise((r) => setTimeout(r, 100));
    }
  }

  /** Fisher z interval of r on m = n − 3 − k degrees of freedom, written out here (Fisher 1921). */
  const fisher = (r: number, m: number) => [
    Math.tanh(Math.atanh(r) - 1.959963985 / Math.sqrt(m)),
    Math.tanh(Math.atanh(r) + 1.959963985 / Math.sqrt(m)),
  ];

  it("an association fit carries Spearman's correction per region once the trait's reliability is stated", async () => {
    const before = await fitOf("Accuracy, no reliability stated", {
      kind: "association",
      predictor: "accuracy",
    });
    expect(before.result.regions.some((r) => "attenuation" in r)).toBe(false);

    await agents.analyst
      .put(`/api/studies/${studyId}/trait-reliabilities`)
      .send([{ column: "accuracy", reliability: 0.81, source: "test–retest r = .81, task manual" }])
      .expect(200);
    const fit = await fitOf("Accuracy", { kind: "association", predictor: "accuracy" });
    expect(fit.result.notes).toContainEqual(
      expect.stringMatching(/^attenuation: Spearman's \(1904\) correction/),
    );
    expect(fit.result.regions).toHaveLength(10);
    let carried = 0;
    for (const r of fit.result.regions) {
      const a = r.attenuation;
      const icc31 = reliability.regions.find((x) => x.region === r.region)?.icc31.value as number;
      if (!(icc31 > 0)) {
        // A reliability of 0 or below leaves nothing to divide by: no attenuation for that region.
        expect(a, r.region).toBeUndefined();
        continue;
      }
      if (!a) throw new Error(`${r.region}: no attenuation`);
      carried += 1;
      expect(a).toMatchObject({
        reliabilityBrain: icc31,
        reliabilityBrainForm: "ICC(3,1)",
        reliabilityTrait: 0.81,
        traitSource: "test–retest r = .81, task manual",
        trait: "accuracy",
        observed: r.r,
      });
      expect(Number.isNaN(Date.parse(a.traitStatedAt))).toBe(false);
      // (exact algebra: Spearman 1904, ceiling √(rel_brain · rel_trait), corrected r = r / ceiling)
      const ceiling = Math.sqrt(icc31 * 0.81);
      expect(a.ceiling).toBeCloseTo(ceiling, 12);
      expect(a.disattenuated).toBeCloseTo(r.r / ceiling, 12);
      // (exact algebra: the Fisher z interval of r on n − 3, each bound divided by the ceiling and clipped to [−1, 1])
      const [lo, hi] = fisher(r.r, r.n - 3);
      expect(a.observedCiLow).toBeCloseTo(lo, 8);
      expect(a.observedCiLow).toBeCloseTo(r.rCiLow, 8);
      expect(a.disattenuatedCiLow).toBeCloseTo(Math.max(-1, lo / ceiling), 8);
      expect(a.disattenuatedCiHigh).toBeCloseTo(Math.min(1, hi / ceiling), 8);
      if (Math.abs(r.r / ceiling) > 1) expect(a.caution).toMatch(/larger than 1 in size/);
    }
    expect(carried).toBeGreaterThan(5);
    const first = fit.result.regions[0];
    const detail = await agents.viewer
      .get(`/api/fits/${fit.id}/regions/${first.region}`)
      .expect(200);
    expect(detail.body.result.attenuation).toEqual(first.attenuation);
  }, 240_000);

  it("with a covariate the interval uses n − 3 − k and the caution names the partial correlation; one-sample fits carry none", async () => {
    const fit = await fitOf("Accuracy with age", {
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
    });
    const r = fit.result.regions.find((x) => x.attenuation !== undefined);
    if (!r?.attenuation) throw new Error("no region carries an attenuation");
    const [lo] = fisher(r.r, r.n - 4);
    // (exact algebra: one covariate, k = 1)
    expect(r.attenuation.observedCiLow).toBeCloseTo(lo, 8);
    expect(r.attenuation.caution).toMatch(/partial correlation/);
    const oneSample = await fitOf("Effect present", { kind: "one-sample" });
    expect(oneSample.result.regions.some((x) => "attenuation" in x)).toBe(false);
  }, 240_000);
});
