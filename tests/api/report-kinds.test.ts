/**
 * The report bundle of fits without region rows (GET /api/fits/:fitId/report.zip,
 * services/fit-report.ts): a specification curve and a prediction hold no
 * empty region tables or sentences (as the publish panel shows none), but
 * what such a fit has — a curve its specifications as CSV and its summary
 * and joint test, a prediction its scores, per-repeat scores, region
 * weights and held-out predictions (no participant column for a restricted
 * study's Viewer) and its three figures (no observed-predicted for that
 * Viewer). README.txt lists exactly the files present; two
 * downloads are byte-identical. On the seeded demo study (invented data).
 */
import { eq } from "drizzle-orm";
import { strFromU8, unzipSync } from "fflate";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { fits } from "../../db/schema";
import type { PredictionBlock } from "../../contract/prediction";
import type { CurveResultFields } from "../../contract/specification-curve";
import { curveSummaryWords, jointTestWords } from "../../components/fit/specification-curve-layout";
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
const cookies: Record<string, string> = {};

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  for (const role of ["owner", "analyst", "viewer"])
    cookies[role] = await demoCookie(t, `${role}@demo.covarion.test`);
}, 120_000);

afterAll(async () => {
  await t?.close();
});

async function runFit(name: string, spec: Record<string, unknown>): Promise<string> {
  const model = await request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", cookies.analyst)
    .send({ name, regionSelection: "anatomical-or-prior", spec })
    .expect(201);
  const started = await request(t.url)
    .post(`/api/studies/${studyId}/fits`)
    .set("Cookie", cookies.analyst)
    .send({ modelId: model.body.id })
    .expect(202);
  const view = await waitForFitStatus(t, cookies.analyst, started.body.id);
  expect(view.status, JSON.stringify(view.error)).toBe("done");
  return started.body.id as string;
}

async function download(role: string, fitId: string): Promise<Buffer> {
  const res = await request(t.url)
    .get(`/api/fits/${fitId}/report.zip`)
    .set("Cookie", cookies[role])
    .buffer(true)
    .parse(binaryBody)
    .expect(200);
  return res.body as Buffer;
}

/** The archive's files in its order (fflate keeps the central directory's order). */
function filesOf(zip: Buffer): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [name, bytes] of Object.entries(unzipSync(new Uint8Array(zip))))
    out[name] = name.endsWith(".png") || name.endsWith(".docx") ? "" : strFromU8(bytes);
  return out;
}

/** The names README.txt lists under "Files, in this order:". */
function readmeNames(readme: string): string[] {
  const lines = readme.split("\n");
  const from = lines.indexOf("Files, in this order:") + 2;
  const names: string[] = [];
  for (let i = from; i < lines.length && lines[i] !== ""; i++) names.push(lines[i].split(/\s+/)[0]);
  return names;
}

async function resultOf<T>(fitId: string): Promise<T> {
  const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
  return row.result as T;
}

const noRegionFiles = (names: string[]) =>
  names.filter((n) => /^results\/(regions\.|sentences)/.test(n));

describe("a specification curve's bundle", () => {
  it("holds its specifications and summary, no region table, and README lists exactly its files", async () => {
    const fitId = await runFit("Accuracy under every reasonable choice", {
      kind: "specification-curve",
      predictor: "accuracy",
      regions: ["L_dlpfc"],
      specifications: {
        estimators: ["ols", "huber"],
        covariateSets: [[], ["age"]],
        exclusionRules: [{ column: "mean_fd", op: ">", value: 0.5, reason: "motion" }],
      },
      inference: "permutation",
      resamples: 19,
      seed: 5,
    });
    const zip = await download("owner", fitId);
    const files = filesOf(zip);
    const names = Object.keys(files);
    expect(noRegionFiles(names)).toEqual([]);
    expect(names).toEqual([
      "README.txt",
      "methods.md",
      "results/curve.md",
      "results/specifications.csv",
      "recipe.json",
      "inputs.json",
      "set-asides.csv",
      "activity.csv",
    ]);
    expect(readmeNames(files["README.txt"])).toEqual(names);

    const curve = await resultOf<CurveResultFields>(fitId);
    const rows = files["results/specifications.csv"].trimEnd().split("\r\n");
    expect(rows[0]).toBe("estimator,covariates,rules_on,n,estimate,ci_low,ci_high,p");
    // 2 estimators × 2 covariate sets × 2^1 rules (exact count)
    expect(rows.slice(1)).toHaveLength(8);
    expect(curve.specifications).toHaveLength(8);
    curve.specifications.forEach((s, i) => {
      const cells = rows[i + 1].split(",");
      expect(cells[0]).toBe(s.estimator);
      expect(cells[1]).toBe(s.covariates.join("; "));
      expect(cells[2]).toBe(s.exclusions.length > 0 ? "mean_fd > 0.5 (motion)" : "");
      expect(Number(cells[3])).toBe(s.n);
      expect(Number(cells[4])).toBe(s.estimate);
      expect(cells[5] === "n/a" ? null : Number(cells[5])).toBe(s.ciLow);
      expect(cells[6] === "n/a" ? null : Number(cells[6])).toBe(s.ciHigh);
      expect(Number(cells[7])).toBe(s.p);
    });
    const summary = files["results/curve.md"];
    expect(summary).toContain("8 specifications of the association in L_dlpfc");
    expect(summary).toContain(curveSummaryWords(curve.summary));
    expect(curve.jointTest).toBeDefined();
    expect(summary).toContain(
      jointTestWords(curve.jointTest as NonNullable<typeof curve.jointTest>),
    );

    expect((await download("owner", fitId)).equals(zip)).toBe(true);
  });
});

describe("a prediction's bundle", () => {
  it("holds its scores, weights and held-out predictions; a restricted Viewer gets no participant ids", async () => {
    const fitId = await runFit("Accuracy predicted from every region", {
      kind: "prediction",
      predictor: "accuracy",
      covariates: ["age"],
      folds: 5,
      repeats: 2,
      resamples: 19,
      seed: 4,
    });
    const block = (await resultOf<{ prediction: PredictionBlock }>(fitId)).prediction;
    const zip = await download("owner", fitId);
    const files = filesOf(zip);
    const names = Object.keys(files);
    expect(noRegionFiles(names)).toEqual([]);
    expect(names).toEqual([
      "README.txt",
      "methods.md",
      "results/prediction.md",
      "results/prediction-repeats.csv",
      "results/prediction-weights.csv",
      "results/predictions.csv",
      ...["observed-predicted", "learning-curve", "weights"].flatMap((f) =>
        ["svg", "png", "txt"].map((ext) => `figures/${f}.${ext}`),
      ),
      "recipe.json",
      "inputs.json",
      "set-asides.csv",
      "activity.csv",
    ]);
    expect(readmeNames(files["README.txt"])).toEqual(names);

    const repeats = files["results/prediction-repeats.csv"].trimEnd().split("\r\n");
    expect(repeats[0]).toBe("repeat,r,r2,mae");
    expect(repeats.slice(1).map((l) => Number(l.split(",")[3]))).toEqual(
      block.perRepeat.map((s) => s.mae),
    );
    const weights = files["results/prediction-weights.csv"].trimEnd().split("\r\n");
    expect(weights[0]).toBe("region,weight,sign_consistency");
    expect(weights.slice(1).map((l) => l.split(",")[0])).toEqual(
      block.regions.map((r) => r.region),
    );
    expect(weights.slice(1).map((l) => Number(l.split(",")[1]))).toEqual(
      block.regions.map((r) => r.weight),
    );
    const predictions = files["results/predictions.csv"].trimEnd().split("\r\n");
    expect(predictions[0]).toBe("participant,observed,predicted");
    expect(predictions.slice(1).map((l) => l.split(","))).toEqual(
      block.participants.map((p) => [p.participant, String(p.observed), String(p.predicted)]),
    );
    const summary = files["results/prediction.md"];
    expect(summary).toContain(`r = ${(block.r as number).toFixed(3)}`);
    expect(summary).toContain("5-fold, 2 repeats (seed 4)");
    expect((await download("owner", fitId)).equals(zip)).toBe(true);

    await request(t.url)
      .patch(`/api/studies/${studyId}`)
      .set("Cookie", cookies.owner)
      .send({ restricted: true })
      .expect(200);
    try {
      const viewer = filesOf(await download("viewer", fitId));
      const viewerNames = Object.keys(viewer);
      expect(viewerNames).not.toContain("recipe.json");
      // observed-predicted draws one mark per participant: left out; the other two stay
      expect(viewerNames.filter((n) => n.startsWith("figures/"))).toEqual(
        ["learning-curve", "weights"].flatMap((f) =>
          ["svg", "png", "txt"].map((ext) => `figures/${f}.${ext}`),
        ),
      );
      expect(readmeNames(viewer["README.txt"])).toEqual(viewerNames);
      const withheld = viewer["results/predictions.csv"].trimEnd().split("\r\n");
      expect(withheld[0]).toBe("observed,predicted");
      expect(withheld).toHaveLength(block.participants.length + 1);
      for (const name of viewerNames)
        for (const p of block.participants)
          expect(viewer[name], `${name} names ${p.participant}`).not.toContain(p.participant);
    } finally {
      await request(t.url)
        .patch(`/api/studies/${studyId}`)
        .set("Cookie", cookies.owner)
        .send({ restricted: false })
        .expect(200);
    }
  });
});
