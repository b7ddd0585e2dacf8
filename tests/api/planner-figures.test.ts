/**
 * POST /api/planner/figure.svg|png|txt: the planner's power curve as a
 * figure. The SVG parses as XML with one point per planned N (the answer's
 * curve), text as outlines; the PNG decodes (pngjs) 1051 or 2161 px wide
 * with a 300-dpi pHYs chunk; the caption states the question and the
 * answer. Bad bodies, file names and widths answer 400 naming the field; a
 * simulation over the cap 422 `planner_too_costly`, as the planner does.
 */
import { PNG } from "pngjs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { PLANNER_MAX_DRAWS } from "../../contract/planner";
import { parseXml } from "../unit/figures/xml-check";
import { type Agent, binaryBody, createTestApp, signInDemo, type TestApp } from "./helpers";

let t: TestApp;
let agent: Agent;
beforeAll(async () => {
  t = await createTestApp();
  agent = await signInDemo(t, "viewer@demo.covarion.test");
});
afterAll(async () => {
  await t?.close();
});

const question = { design: "two-group", effect: 0.5, alpha: 0.05, power: 0.8 };

async function figure(path: string, body: unknown, status = 200) {
  return agent
    .post(path)
    .send(body as object)
    .buffer(true)
    .parse(binaryBody)
    .expect(status);
}

describe("the power curve as a figure", () => {
  it("SVG: parses, one point per planned N, text as outlines, the answer N marked", async () => {
    const answer = (await agent.post("/api/planner").send(question).expect(200)).body as {
      n: number;
      curve: { n: number; power: number }[];
    };
    for (const width of ["89", "183"] as const) {
      const res = await figure(`/api/planner/figure.svg?width=${width}`, question);
      expect(res.headers["content-type"]).toMatch(/^image\/svg\+xml/);
      expect(res.headers["content-security-policy"]).toBe("default-src 'none'");
      expect(res.headers["content-disposition"]).toContain(`planner-power-curve-${width}mm.svg`);
      const els = parseXml((res.body as Buffer).toString("utf8"));
      expect(els[0].name).toBe("svg");
      expect(els[0].attrs.width).toBe(`${width}mm`);
      expect(els.some((e) => e.name === "text")).toBe(false);
      const points = els.filter((e) => e.attrs.class === "power-point");
      expect(points.map((p) => Number(p.attrs["data-n"]))).toEqual(
        answer.curve.map((p) => p.n).sort((a, b) => a - b),
      );
      const desc = els.find((e) => e.name === "desc");
      expect(desc).toBeDefined();
    }
    const text = (await figure("/api/planner/figure.svg", question)).body.toString("utf8");
    expect(text).toContain(`N = ${answer.n} reaches 80% power`);
  });

  it("PNG: 1051 or 2161 px wide at 300 dpi", async () => {
    for (const [width, px] of [
      ["89", 1051],
      ["183", 2161],
    ] as const) {
      const res = await figure(`/api/planner/figure.png?width=${width}`, question);
      expect(res.headers["content-type"]).toBe("image/png");
      const body = res.body as Buffer;
      expect(PNG.sync.read(body).width).toBe(px);
      const at = body.indexOf(Buffer.from("pHYs", "latin1"));
      expect(at).toBe(8 + 25 + 4);
      // 300 dots per inch = 11811 per metre (300 / 0.0254, rounded), unit byte 1 = metre (PNG specification, pHYs)
      expect(body.readUInt32BE(at + 4)).toBe(11811);
      expect(body.readUInt32BE(at + 8)).toBe(11811);
      expect(body[at + 12]).toBe(1);
    }
  });

  it("caption: the question, the answer and the method", async () => {
    const res = await agent.post("/api/planner/figure.txt").send(question).expect(200);
    expect(res.headers["content-type"]).toMatch(/^text\/plain/);
    const text = res.text;
    expect(text).toMatch(/^Power against the number of participants\n\n/);
    expect(text).toContain("Difference between two groups");
    expect(text).toContain("expected true effect d = 0.5");
    expect(text).toContain("target power 80%");
    // (Cohen 1988, Table 2.4.1: n = 64 per group for d = .50, power .80, a2 = .05)
    expect(text).toContain("N = 128 participants in total (64 + 64) reach 80% power");
    expect(text).toMatch(/Method: .*noncentral t/);
  });

  it("refuses bad bodies, names and widths with the field named", async () => {
    const bad = await agent
      .post("/api/planner/figure.svg")
      .send({ design: "correlation", effect: 1.5 })
      .expect(400);
    expect(bad.body.error.code).toBe("validation_failed");
    expect(JSON.stringify(bad.body.error.details)).toContain("body.effect");

    const missing = await agent.post("/api/planner/figure.png").send({}).expect(400);
    expect(JSON.stringify(missing.body.error.details)).toContain("body.design");

    const extra = await agent
      .post("/api/planner/figure.svg")
      .send({ ...question, colour: "red" })
      .expect(400);
    expect(extra.body.error.code).toBe("validation_failed");

    const name = await agent.post("/api/planner/figure.pdf").send(question).expect(400);
    expect(JSON.stringify(name.body.error.details)).toContain("params.file");

    const width = await agent.post("/api/planner/figure.png?width=100").send(question).expect(400);
    expect(JSON.stringify(width.body.error.details)).toContain("query.width");

    const captionWidth = await agent
      .post("/api/planner/figure.txt?width=89")
      .send(question)
      .expect(400);
    expect(JSON.stringify(captionWidth.body.error.details)).toContain("query.width");
  });

  it("a simulation over the cost cap answers 422 planner_too_costly", async () => {
    const res = await agent
      .post("/api/planner/figure.svg")
      .send({
        design: "correlation",
        effect: 0.1,
        mode: "simulation",
        components: { measurementNoise: 4, taskDesign: 0.5, trueDifferences: 1 },
        simulations: 20_000,
        sessions: 20,
        trials: 10_000,
      })
      .expect(422);
    expect(res.body.error.code).toBe("planner_too_costly");
    expect(res.body.error.details.limit).toBe(PLANNER_MAX_DRAWS);
  });
});
