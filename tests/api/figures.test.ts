/**
 * A fit's figures through the real app, on the demo study: the list names
 * forest and each region's scatter (association) or strip (two groups),
 * influence and null figures; every listed SVG parses as XML with its
 * marks and region names; PNGs decode (pngjs) 1051 or 2161 px wide with a
 * pHYs chunk of 300 dpi; captions state N, the estimator and the
 * set-asides; widths other than 89 and 183 answer 400 naming query.width;
 * an unknown figure 404; a running fit 409; a restricted study's Viewer
 * gets no participant figures (403) and no participant id anywhere.
 */
import request from "supertest";
import { PNG } from "pngjs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { FigureSummary } from "../../contract/views/figures";
import type { RegionResult } from "../../contract/spec";
import { parseXml } from "../unit/figures/xml-check";
import {
  binaryBody,
  createTestApp,
  demoCookie,
  demoStudyWithData,
  type TestApp,
  waitForFitStatus,
} from "./helpers";

let t: TestApp;
let studyId: string;
let associationFit: string;
let groupFit: string;
let regions: RegionResult[];
const cookies: Record<string, string> = {};
const target = "sub-05";

const get = (role: string, path: string) => request(t.url).get(path).set("Cookie", cookies[role]);

/** An SVG answer's text (supertest does not buffer image/svg+xml as text). */
async function svgText(role: string, path: string, status = 200): Promise<string> {
  const res = await get(role, path).buffer(true).parse(binaryBody).expect(status);
  if (status === 200) {
    expect(res.headers["content-type"]).toMatch(/^image\/svg\+xml/);
    expect(res.headers["content-security-policy"]).toBe("default-src 'none'");
  }
  return (res.body as Buffer).toString("utf8");
}

async function runFit(name: string, spec: Record<string, unknown>): Promise<string> {
  const model = await request(t.url)
    .post(`/api/studies/${studyId}/models`)
    .set("Cookie", cookies.analyst)
    .send({ name, regionSelection: "anatomical-or-prior", spec })
    .expect(201);
  const run = await request(t.url)
    .post(`/api/studies/${studyId}/fits`)
    .set("Cookie", cookies.analyst)
    .send({ modelId: model.body.id })
    .expect(202);
  return run.body.id as string;
}

beforeAll(async () => {
  t = await createTestApp();
  studyId = await demoStudyWithData(t);
  for (const role of ["owner", "analyst", "reviewer", "viewer"])
    cookies[role] = await demoCookie(t, `${role}@demo.covarion.test`);
  await request(t.url)
    .post(`/api/studies/${studyId}/set-asides`)
    .set("Cookie", cookies.analyst)
    .send({ participant: target, reason: "Scanner fault noted before analysis" })
    .expect(201);
  associationFit = await runFit("Accuracy, permutation", {
    kind: "association",
    predictor: "accuracy",
    covariates: ["age"],
    inference: "permutation",
    resamples: 500,
    correction: "holm",
    seed: 7,
  });
  const running = await get("analyst", `/api/fits/${associationFit}/figures`);
  // the first answer comes before the fit is done (409) unless it already finished
  expect([200, 409]).toContain(running.status);
  if (running.status === 409) expect(running.body.error.code).toBe("conflict");
  groupFit = await runFit("Patients and controls", {
    kind: "two-group",
    group: "group",
    levels: ["patient", "control"],
  });
  const done = (await waitForFitStatus(t, cookies.analyst, associationFit, ["done", "failed"])) as {
    status: string;
    result: { regions: RegionResult[] };
  };
  expect(done.status).toBe("done");
  regions = done.result.regions;
  expect((await waitForFitStatus(t, cookies.analyst, groupFit, ["done", "failed"])).status).toBe(
    "done",
  );
}, 240_000);

afterAll(async () => {
  await t?.close();
});

describe("figures of a fit", () => {
  it("lists forest and, per region, scatter, influence and null for an association", async () => {
    const res = await get("viewer", `/api/fits/${associationFit}/figures`).expect(200);
    const list = res.body as FigureSummary[];
    const names = list.map((f) => f.name);
    expect(names[0]).toBe("forest");
    expect(list[0].regions).toEqual(regions.map((r) => r.region));
    for (const r of regions) {
      expect(names).toContain(`${r.region}-scatter`);
      expect(names).toContain(`${r.region}-influence`);
      expect(names).toContain(`${r.region}-null`);
      expect(names).not.toContain(`${r.region}-strip`);
    }
    for (const f of list) expect(typeof f.title).toBe("string");
  });

  it("lists strip figures for two groups", async () => {
    const res = await get("analyst", `/api/fits/${groupFit}/figures`).expect(200);
    const names = (res.body as FigureSummary[]).map((f) => f.name);
    expect(names.filter((n) => n.endsWith("-strip"))).toHaveLength(regions.length);
    expect(names.some((n) => n.endsWith("-scatter"))).toBe(false);
  });

  it("every listed SVG parses; the forest names every region; one mark per participant", async () => {
    const list = (await get("reviewer", `/api/fits/${associationFit}/figures`).expect(200))
      .body as FigureSummary[];
    const region = regions[0];
    const detail = (
      await get("reviewer", `/api/fits/${associationFit}/regions/${region.region}`).expect(200)
    ).body as { points: { x: number | null; y: number | null }[] };
    for (const f of list.filter((f) => f.kind === "forest" || f.regions?.[0] === region.region)) {
      const els = parseXml(
        await svgText("reviewer", `/api/fits/${associationFit}/figures/${f.name}.svg`),
      );
      expect(els[0].attrs.width).toBe("89mm");
      expect(els.some((e) => e.name === "text")).toBe(false);
      if (f.kind === "forest") {
        const rows = els.filter((e) => e.attrs.class === "forest-row");
        expect(rows.map((r) => r.attrs["data-region"])).toEqual(regions.map((r) => r.region));
      }
      if (f.kind === "scatter") {
        const marks = els.filter((e) => e.attrs.class === "participant-mark");
        const drawable = detail.points.filter((p) => p.x !== null && p.y !== null).length;
        expect(marks).toHaveLength(drawable);
        expect(drawable).toBe(region.n);
      }
    }
  });

  it("strip figures draw one mark per participant", async () => {
    const list = (await get("owner", `/api/fits/${groupFit}/figures`).expect(200))
      .body as FigureSummary[];
    const strip = list.find((f) => f.kind === "strip") as FigureSummary;
    const region = (strip.regions as string[])[0];
    const detail = (await get("owner", `/api/fits/${groupFit}/regions/${region}`).expect(200))
      .body as { n: number; points: unknown[] };
    const svg = await svgText("owner", `/api/fits/${groupFit}/figures/${strip.name}.svg`);
    const marks = parseXml(svg).filter((e) => e.attrs.class === "participant-mark");
    expect(marks).toHaveLength(detail.points.length);
  });

  it("PNGs are 1051 or 2161 px wide at 300 dpi", async () => {
    for (const [width, px] of [
      ["89", 1051],
      ["183", 2161],
    ] as const) {
      const res = await get(
        "analyst",
        `/api/fits/${associationFit}/figures/forest.png?width=${width}`,
      )
        .buffer(true)
        .parse(binaryBody)
        .expect(200)
        .expect("Content-Type", "image/png");
      const body = res.body as Buffer;
      expect(PNG.sync.read(body).width).toBe(px);
      const at = body.indexOf(Buffer.from("pHYs", "latin1"));
      expect(at).toBe(8 + 25 + 4);
      expect(body.readUInt32BE(at + 4)).toBe(11811);
      expect(body.readUInt32BE(at + 8)).toBe(11811);
      expect(body[at + 12]).toBe(1);
    }
    const region = regions[0].region;
    const scatter = await get(
      "analyst",
      `/api/fits/${associationFit}/figures/${region}-scatter.png`,
    )
      .buffer(true)
      .parse(binaryBody)
      .expect(200);
    expect(PNG.sync.read(scatter.body as Buffer).width).toBe(1051);
  });

  it("captions state N, estimator, interval and set-asides", async () => {
    const region = regions[0];
    const text = (
      await get("viewer", `/api/fits/${associationFit}/figures/${region.region}-scatter.txt`)
        .expect(200)
        .expect("Content-Type", /text\/plain/)
    ).text;
    expect(text).toContain(`N = ${region.n}`);
    expect(text).toContain("ordinary least squares");
    expect(text).toContain("95% confidence band");
    expect(text).toContain("permutation inference");
    expect(text).toContain("1 participant set aside");
    expect(text).toContain("left out of every number shown");
    const forest = (
      await get("viewer", `/api/fits/${associationFit}/figures/forest.txt`).expect(200)
    ).text;
    expect(forest).toContain(`Forest plot of ${regions.length} regions`);
    expect(forest).toContain("Holm correction over regions");
  });

  it("refuses other widths (400 naming query.width), unknown figures (404) and files (400)", async () => {
    const bad = await get(
      "owner",
      `/api/fits/${associationFit}/figures/forest.png?width=120`,
    ).expect(400);
    expect(bad.body.error.details.map((d: { field: string }) => d.field)).toContain("query.width");
    const caption = await get(
      "owner",
      `/api/fits/${associationFit}/figures/forest.txt?width=89`,
    ).expect(400);
    expect(caption.body.error.details[0].field).toBe("query.width");
    const unknown = await get(
      "owner",
      `/api/fits/${associationFit}/figures/nowhere-scatter.svg`,
    ).expect(404);
    expect(unknown.body.error.message).toContain("nowhere-scatter");
    await get("owner", `/api/fits/${groupFit}/figures/${regions[0].region}-scatter.svg`).expect(
      404,
    );
    await get("owner", `/api/fits/${associationFit}/figures/forest.pdf`).expect(400);
  });

  it("a restricted study's Viewer gets forest and null figures but no participant figure", async () => {
    await get("owner", `/api/studies/${studyId}`).expect(200);
    await request(t.url)
      .patch(`/api/studies/${studyId}`)
      .set("Cookie", cookies.owner)
      .send({ restricted: true })
      .expect(200);
    try {
      const list = (await get("viewer", `/api/fits/${associationFit}/figures`).expect(200))
        .body as FigureSummary[];
      expect(list.some((f) => ["scatter", "strip", "influence"].includes(f.kind))).toBe(false);
      expect(list.some((f) => f.kind === "null")).toBe(true);
      const region = regions[0].region;
      const refused = await get(
        "viewer",
        `/api/fits/${associationFit}/figures/${region}-scatter.svg`,
      ).expect(403);
      expect(refused.body.error.code).toBe("forbidden");
      await get("viewer", `/api/fits/${associationFit}/figures/${region}-influence.png`).expect(
        403,
      );
      const nullSvg = await svgText(
        "viewer",
        `/api/fits/${associationFit}/figures/${region}-null.svg`,
      );
      const caption = (
        await get("viewer", `/api/fits/${associationFit}/figures/${region}-null.txt`).expect(200)
      ).text;
      for (const text of [nullSvg, caption]) expect(text).not.toContain(target);
      // the Reviewer still gets them
      await get("reviewer", `/api/fits/${associationFit}/figures/${region}-scatter.svg`).expect(
        200,
      );
    } finally {
      await request(t.url)
        .patch(`/api/studies/${studyId}`)
        .set("Cookie", cookies.owner)
        .send({ restricted: false })
        .expect(200);
    }
  });
});
