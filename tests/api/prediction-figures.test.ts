/**
 * A prediction fit's figures (GET /api/fits/:fitId/figures…,
 * services/fit-figures.ts): `observed-predicted`, `learning-curve` and
 * `weights` are listed; each SVG is well-formed XML with its text as
 * outlines, one mark per held-out participant in observed-predicted and
 * one row per region in weights; PNGs decode (pngjs) 1051 or 2161 px wide
 * with a 300-dpi pHYs chunk; captions say what is drawn. A restricted
 * study's Viewer gets no observed-predicted (not listed, 403) but the
 * other two. On the seeded demo study (invented data); the fit is kept
 * small (5 folds × 2 repeats, 19 permutations).
 */
import { eq } from "drizzle-orm";
import { PNG } from "pngjs";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import type { PredictionBlock } from "../../contract/prediction";
import type { FigureSummary } from "../../contract/views/figures";
import { fits } from "../../db/schema";
import { parseXml } from "../unit/figures/xml-check";
import {
  binaryBody,
  createTestApp,
  demoCookie,
  demoStudyWithData,
  type TestApp,
  waitForFitStatus,
} from "./helpers";

vi.setConfig({ testTimeout: 180_000 });

let t: TestApp;
let studyId: string;
let fitId: string;
let block: PredictionBlock;
const cookies: Record<string, string> = {};

const get = (role: string, path: string) =>
  request(t.url).get(path).set("Cookie", cookies[role]).buffer(true).parse(binaryBody);

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  for (const role of ["owner", "analyst", "viewer"])
    cookies[role] = await demoCookie(t, `${role}@demo.covarion.test`);
  const model = await request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", cookies.analyst)
    .send({
      name: "Accuracy predicted from every region",
      regionSelection: "anatomical-or-prior",
      spec: {
        kind: "prediction",
        predictor: "accuracy",
        covariates: ["age"],
        folds: 5,
        repeats: 2,
        resamples: 19,
        seed: 4,
      },
    })
    .expect(201);
  const started = await request(t.url)
    .post(`/api/studies/${studyId}/fits`)
    .set("Cookie", cookies.analyst)
    .send({ modelId: model.body.id })
    .expect(202);
  fitId = started.body.id;
  const view = await waitForFitStatus(t, cookies.analyst, fitId);
  expect(view.status, JSON.stringify(view.error)).toBe("done");
  const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
  block = (row.result as { prediction: PredictionBlock }).prediction;
}, 180_000);

afterAll(async () => {
  await t?.close();
});

const svgOf = async (role: string, name: string, width = 89) => {
  const res = await get(role, `/api/fits/${fitId}/figures/${name}.svg?width=${width}`).expect(200);
  expect(res.headers["content-type"]).toMatch(/^image\/svg\+xml/);
  return parseXml((res.body as Buffer).toString("utf8"));
};

describe("a prediction fit's figures", () => {
  it("lists observed-predicted, learning curve and weights", async () => {
    const res = await get("analyst", `/api/fits/${fitId}/figures`).expect(200);
    const list = JSON.parse((res.body as Buffer).toString("utf8")) as FigureSummary[];
    expect(list.map((f) => f.name)).toEqual(["observed-predicted", "learning-curve", "weights"]);
    expect(list.find((f) => f.name === "weights")?.regions).toEqual(
      block.regions.map((r) => r.region),
    );
  });

  it("SVG: well-formed, text as outlines, one mark per participant and one row per region", async () => {
    expect(block.participants.length).toBeGreaterThan(10);
    for (const width of [89, 183]) {
      const op = await svgOf("analyst", "observed-predicted", width);
      expect(op[0].name).toBe("svg");
      expect(op[0].attrs.width).toBe(`${width}mm`);
      expect(op.some((e) => e.name === "text")).toBe(false);
      const marks = op.filter((e) => e.attrs.class === "participant-mark");
      expect(marks).toHaveLength(block.participants.length);
      // no participant id leaves the app in a figure
      const file = JSON.stringify(op);
      for (const p of block.participants) expect(file).not.toContain(`"${p.participant}"`);

      const weights = await svgOf("analyst", "weights", width);
      expect(weights.some((e) => e.name === "text")).toBe(false);
      const rows = weights.filter((e) => e.attrs.class === "weight-row");
      // one row per region, from the most positive to the most negative weight
      const sorted = [...block.regions].sort((a, b) => b.weight - a.weight);
      expect(rows.map((r) => r.attrs["data-region"])).toEqual(sorted.map((r) => r.region));

      const curve = await svgOf("analyst", "learning-curve", width);
      expect(curve[0].name).toBe("svg");
      expect(curve.find((e) => e.name === "desc")?.text).toMatch(/^Learning curve: held-out r/);
    }
  });

  it("PNG: 1051 or 2161 px wide at 300 dpi", async () => {
    for (const name of ["observed-predicted", "learning-curve", "weights"]) {
      for (const [width, px] of [
        [89, 1051],
        [183, 2161],
      ] as const) {
        const res = await get("analyst", `/api/fits/${fitId}/figures/${name}.png?width=${width}`);
        expect(res.status, name).toBe(200);
        expect(res.headers["content-type"]).toBe("image/png");
        const body = res.body as Buffer;
        expect(PNG.sync.read(body).width).toBe(px);
        const at = body.indexOf(Buffer.from("pHYs", "latin1"));
        // 300 dots per inch = 11811 per metre (300 / 0.0254, rounded), unit byte 1 = metre (PNG specification, pHYs)
        expect(body.readUInt32BE(at + 4)).toBe(11811);
        expect(body[at + 12]).toBe(1);
      }
    }
  });

  it("captions say what is drawn", async () => {
    const caption = async (name: string) =>
      (await get("analyst", `/api/fits/${fitId}/figures/${name}.txt`).expect(200)).body.toString(
        "utf8",
      );
    const n = block.participants.length;
    const op = await caption("observed-predicted");
    expect(op).toMatch(/^Observed and predicted/);
    expect(op).toContain(`(N = ${n})`);
    expect(op).toContain("averaged over the 2 repeats");
    expect(op).toContain("2 repeats of 5-fold cross-validation");
    expect(op).toContain("age removed from accuracy and the regions inside each training fold");
    expect(op).toContain(`r = ${(block.r as number).toFixed(2)}`);
    expect(op).toContain("19 runs of the whole pipeline on shuffled trait values");

    const curve = await caption("learning-curve");
    for (const p of block.learningCurve ?? [])
      expect(curve).toContain(`${p.trainingRows} (${Math.round(p.fraction * 100)}%)`);
    expect(curve).toContain("standard deviation over the 2 repeats");

    const weights = await caption("weights");
    expect(weights).toContain("not what each region does on its own");
    expect(weights).toContain("mean standardized weight over all training folds");
  });

  it("a restricted study's Viewer gets the learning curve and weights but not observed-predicted", async () => {
    await request(t.url)
      .patch(`/api/studies/${studyId}`)
      .set("Cookie", cookies.owner)
      .send({ restricted: true })
      .expect(200);
    try {
      const res = await get("viewer", `/api/fits/${fitId}/figures`).expect(200);
      const list = JSON.parse((res.body as Buffer).toString("utf8")) as FigureSummary[];
      expect(list.map((f) => f.name)).toEqual(["learning-curve", "weights"]);
      for (const ext of ["svg", "png", "txt"]) {
        const refused = await get("viewer", `/api/fits/${fitId}/figures/observed-predicted.${ext}`);
        expect(refused.status).toBe(403);
      }
      await get("viewer", `/api/fits/${fitId}/figures/weights.svg`).expect(200);
      await get("viewer", `/api/fits/${fitId}/figures/learning-curve.txt`).expect(200);
      // the Analyst still gets it
      await get("analyst", `/api/fits/${fitId}/figures/observed-predicted.svg`).expect(200);
    } finally {
      await request(t.url)
        .patch(`/api/studies/${studyId}`)
        .set("Cookie", cookies.owner)
        .send({ restricted: false })
        .expect(200);
    }
  });
});
