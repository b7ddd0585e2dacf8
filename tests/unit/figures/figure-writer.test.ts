/**
 * The figure writer: every figure is well-formed XML, sized in millimetres
 * with a viewBox, keeps its title and description after its text becomes
 * outlines, draws one mark per participant where the screen's layout puts
 * them, and names every region of a forest plot where a checker can find
 * it (the description and each row's aria-label). Inputs are invented.
 */
import { describe, expect, it } from "vitest";
import type { ScatterInput } from "../../../components/charts/scatter-layout";
import { scatterLayout } from "../../../components/charts/scatter-layout";
import { chartViewport } from "../../../components/charts/scales";
import type { StripInput } from "../../../components/charts/strip-layout";
import {
  figureLayoutWidth,
  forestFigure,
  influenceFigure,
  nullFigure,
  type RawFigure,
  scatterFigure,
  stripFigure,
  svgDocument,
  varianceFigure,
} from "../../../server/figures/figure-svg";
import { outlineSvg } from "../../../server/figures/outline";
import { escapeXml } from "../../../server/figures/svg-writer";
import { parseXml } from "./xml-check";

const outlined = (fig: RawFigure, mm = 89) =>
  outlineSvg(svgDocument(fig, mm), Object.fromEntries(fig.kept.byId));

const points = Array.from({ length: 23 }, (_, i) => ({
  id: `p${i}`,
  flags: i === 2 ? (["outlier"] as const) : i === 7 ? (["leverage", "influence"] as const) : [],
  setAside: i === 4,
  x: i === 9 ? null : 20 + i,
  y: Math.cos(i) / 2,
}));

const scatter: ScatterInput = {
  points: points.map((p) => ({ ...p, flags: [...p.flags] })),
  band: [
    { x: 20, fit: -0.1, low: -0.3, high: 0.1 },
    { x: 42, fit: 0.2, low: 0.0, high: 0.4 },
  ],
  xLabel: "age",
  yLabel: "Contrast value",
  bandLabel: "95% confidence band",
};

describe("figure widths", () => {
  it("lays one column out 360 units wide and two columns 740", () => {
    expect(figureLayoutWidth(89)).toBe(360);
    expect(figureLayoutWidth(183)).toBe(740);
  });
});

describe("scatter figure", () => {
  it("is well-formed, in millimetres, text as outlines, one mark per participant drawn", () => {
    const fig = scatterFigure(scatter, "L_dlpfc: age and the contrast value", 360);
    const svg = outlined(fig);
    const els = parseXml(svg);
    const root = els[0];
    expect(root.name).toBe("svg");
    expect(root.attrs.width).toBe("89mm");
    expect(root.attrs.height).toMatch(/^\d+(\.\d+)?mm$/);
    expect(root.attrs.viewBox).toBe(`0 0 ${fig.width} ${fig.height}`);
    expect(els.some((e) => e.name === "text")).toBe(false);
    expect(els.find((e) => e.name === "title")?.text).toBe("L_dlpfc: age and the contrast value");
    expect(els.find((e) => e.name === "desc")?.text).toContain("for 22 participants");
    const marks = els.filter((e) => e.attrs.class === "participant-mark");
    // 23 participants, one without a trait value
    expect(marks).toHaveLength(22);
    expect(marks.filter((m) => m.attrs["data-set-aside"] === "true")).toHaveLength(1);
    expect(marks.filter((m) => m.attrs["data-flags"] === "outlier")).toHaveLength(1);
    // no participant id leaves in a figure's marks
    expect(svg).not.toContain('"p7"');
  });

  it("draws each mark where the screen's layout puts it", () => {
    const fig = scatterFigure(scatter, "t", 360);
    const layout = scatterLayout(scatter, chartViewport(360, 1.25));
    const circles = parseXml(svgDocument(fig, 89)).filter((e) => e.name === "circle");
    const drawn = new Set(circles.map((c) => `${c.attrs.cx},${c.attrs.cy}`));
    const round = (v: number) => Math.round(v * 100) / 100;
    for (const m of layout.marks.filter((m) => m.flags.length === 0))
      expect(drawn.has(`${round(m.cx)},${round(m.cy)}`), m.id).toBe(true);
  });

  it("a two-column figure is wider in millimetres and in layout", () => {
    const fig = scatterFigure(scatter, "t", figureLayoutWidth(183));
    const root = parseXml(outlined(fig, 183))[0];
    expect(root.attrs.width).toBe("183mm");
    expect(fig.width).toBe(740);
  });
});

describe("strip figure", () => {
  it("draws one mark per participant with a value, in two groups", () => {
    const input: StripInput = {
      groups: [
        { key: "patient", label: "patient", mean: 0.3, low: 0.1, high: 0.5 },
        { key: "control", label: "control", mean: 0.1, low: -0.1, high: 0.3 },
      ],
      points: points.map((p, i) => ({
        id: p.id,
        flags: [...p.flags],
        setAside: p.setAside,
        group: i % 2 === 0 ? "control" : "patient",
        value: i === 3 ? null : p.y,
      })),
      valueLabel: "Contrast value",
    };
    const els = parseXml(outlined(stripFigure(input, "Contrast values by group", 360)));
    expect(els.filter((e) => e.attrs.class === "participant-mark")).toHaveLength(22);
  });
});

describe("forest figure", () => {
  it("names every region in its description and rows, escaped, even as outlines", () => {
    const rows = [
      { region: "L_dlpfc", estimate: 0.31, low: 0.06, high: 0.52 },
      { region: "R insula & operculum <anterior>", estimate: -0.12, low: -0.4, high: 0.15 },
      { region: "Precuneus", estimate: 0.05, low: null, high: null },
    ];
    const fig = forestFigure(rows, { estimateLabel: "Slope", title: "Estimates" }, 360);
    const svg = outlined(fig);
    const els = parseXml(svg);
    const desc = els.find((e) => e.name === "desc")?.text ?? "";
    const rowGroups = els.filter((e) => e.attrs.class === "forest-row");
    expect(rowGroups.map((g) => g.attrs["data-region"])).toEqual(rows.map((r) => r.region));
    for (const r of rows) {
      expect(desc).toContain(r.region);
      expect(svg).toContain(escapeXml(r.region));
    }
    expect(rowGroups[0].attrs["aria-label"]).toBe("L_dlpfc: estimate 0.31, 95% CI 0.060 to 0.520");
  });
});

describe("influence and null figures", () => {
  it("influence: one mark per participant with a Cook's distance", () => {
    const pts = Array.from({ length: 15 }, (_, i) => ({
      id: `p${i}`,
      flags: i === 0 ? (["influence"] as ("influence" | "outlier" | "leverage")[]) : [],
      cooksDistance: i === 14 ? null : 0.02 + i / 100,
      leverage: 0.1,
      residual: i % 3 === 0 ? -1.2 : 0.8,
    }));
    const fig = influenceFigure(
      pts,
      { cooksDistance: 4 / 15, leverage: 0.4, outlierT: 3.4 },
      "Who moves this estimate?",
      360,
    );
    const els = parseXml(outlined(fig));
    expect(els.filter((e) => e.attrs.class === "participant-mark")).toHaveLength(14);
    expect(els.find((e) => e.name === "desc")?.text).toContain("15 participants");
  });

  it("null: bars, the observed line and the caption line; well-formed", () => {
    const fig = nullFigure(
      {
        edges: [-3, -2, -1, 0, 1, 2, 3],
        counts: [5, 40, 200, 210, 38, 7],
        observed: 2.4,
        statisticName: "t",
        p: 0.012,
      },
      "Permutation null distribution",
      360,
    );
    const raw = parseXml(svgDocument(fig, 89));
    // the background plus one rect per bin, and legend swatches for the two bar kinds
    expect(raw.filter((e) => e.name === "rect")).toHaveLength(1 + 6 + 2);
    expect(raw.some((e) => e.name === "text" && e.text.includes("500 rearrangements"))).toBe(true);
    parseXml(outlined(fig));
  });
});

describe("variance-shares figure", () => {
  it("one row per region with its bar split by the shares, names findable", () => {
    const regions = [
      {
        region: "L_dlpfc",
        tau2: 0.03,
        i2: 0.41,
        noiseShare: 0.62,
        trueShare: 0.38,
        tau2Method: "reml" as const,
      },
      {
        region: "Precuneus",
        tau2: 0,
        i2: 0,
        noiseShare: 1,
        trueShare: 0,
        tau2Method: "reml" as const,
      },
    ];
    const fig = varianceFigure(regions, "Measurement noise and true differences", 360);
    const els = parseXml(outlined(fig));
    const rows = els.filter((e) => e.attrs.class === "variance-row");
    expect(rows.map((r) => r.attrs["data-region"])).toEqual(["L_dlpfc", "Precuneus"]);
    expect(rows[0].attrs["aria-label"]).toBe(
      "L_dlpfc: 62% noise · 38% true differences; τ² = 0.03 · I² = 41%",
    );
    const raw = parseXml(svgDocument(fig, 89)).filter((e) => e.name === "rect");
    // background, then per region the track and its non-empty segments (2 + 1), then two legend swatches
    expect(raw).toHaveLength(1 + 3 + 2 + 2);
    const [track, noise, truth] = raw.slice(1, 4).map((r) => Number(r.attrs.width));
    expect(noise / track).toBeCloseTo(0.62, 2);
    expect(truth / track).toBeCloseTo(0.38, 2);
  });
});
