import { describe, expect, it } from "vitest";
import { ChartInputError } from "../../../components/charts/chart-input-error";
import type { Flag } from "../../../components/charts/chart-types";
import {
  boxesOverlap,
  extraFlags,
  type InfluencePoint,
  influenceHeight,
  influenceLayout,
  influenceOrder,
  placeLabels,
} from "../../../components/charts/influence-layout";
import { flagThresholds } from "../../../server/stats/diagnostics";

const phone = { width: 330, height: influenceHeight(330) };
const wide = { width: 900, height: influenceHeight(900) };

/** n participants; every third from `flaggedFrom` on carries flags, Cook's distance falling with the index. */
function cohort(n: number, flagged: (i: number) => Flag[]): InfluencePoint[] {
  return Array.from({ length: n }, (_, i) => ({
    id: `sub-${String(i + 1).padStart(3, "0")}`,
    flags: flagged(i),
    cooksDistance: 1 / (i + 2),
    leverage: 0.02 + (i % 7) / 100,
    residual: i % 2 ? 1 - i / n : -(1 + i / n),
  }));
}

describe("influence layout", () => {
  it("draws the influence line at 4/n, the leverage line at 2p/n and the outlier line at the fit's Bonferroni cut-off", () => {
    const n = 20;
    const cuts = flagThresholds(n, 2);
    expect(cuts.cooksDistance).toBe(0.2); // 4/n with n = 20 (Bollen & Jackman 1990, p. 266: cut-off 4/n)
    expect(cuts.leverage).toBe(0.2); // 2p/n with p = 2, n = 20 (Hoaglin & Welsch 1978: cut-off 2p/n)
    const layout = influenceLayout(
      cohort(n, () => []),
      { cooksDistance: cuts.cooksDistance, leverage: cuts.leverage, outlierT: cuts.outlierT },
      phone,
    );
    const lines = layout.panels.map(
      (p) => p.cut && { flag: p.cut.flag, value: p.cut.value, text: p.cut.text },
    );
    expect(lines).toEqual([
      { flag: "influence", value: 0.2, text: "4/n = 0.2" },
      { flag: "leverage", value: 0.2, text: "2p/n = 0.2" },
      {
        flag: "outlier",
        value: cuts.outlierT,
        text: `Bonferroni cut-off ${cuts.outlierT?.toPrecision(3)}`,
      },
    ]); // (the values handed in, exact)
    // no line anywhere at the Cook's distances 0.5 or 1
    expect(layout.panels.flatMap((p) => (p.cut ? [p.cut.value] : []))).not.toContain(0.5);
    expect(layout.panels.flatMap((p) => (p.cut ? [p.cut.value] : []))).not.toContain(1);
    // each line lies inside its panel, on the panel's scale (0 at the bottom)
    for (const p of layout.panels) {
      if (!p.cut) continue;
      expect(p.cut.y).toBeGreaterThan(p.top);
      expect(p.cut.y).toBeLessThan(p.bottom);
    }
  });

  it("widens a panel so that a cut-off above every value is still drawn", () => {
    const points = cohort(10, () => []).map((p) => ({ ...p, cooksDistance: 0.01 }));
    const layout = influenceLayout(
      points,
      { cooksDistance: 0.4, leverage: null, outlierT: null },
      wide,
    );
    const cook = layout.panels[0];
    expect(cook.max).toBeGreaterThan(0.4); // (the 4/n line must fit: exact arithmetic)
    expect(cook.cut?.y).toBeGreaterThan(cook.top);
    expect(layout.panels[1].cut).toBeNull(); // (no leverage cut-off given: none drawn)
    expect(layout.legend.filter((e) => e.kind === "line").map((e) => e.label)).toEqual([
      "influence cut-off 4/n (0.4)",
    ]);
  });

  it("orders participants by Cook's distance, largest first, undefined last, whatever the input order", () => {
    const pts: InfluencePoint[] = [
      { id: "a", flags: [], cooksDistance: 0.1, leverage: 0.1, residual: 1 },
      { id: "b", flags: ["leverage"], cooksDistance: null, leverage: 1, residual: null },
      { id: "c", flags: [], cooksDistance: 0.3, leverage: 0.1, residual: 1 },
    ];
    expect(influenceOrder(pts).map((p) => p.id)).toEqual(["c", "a", "b"]); // (exact enumeration)
    expect(influenceOrder(pts.slice().reverse()).map((p) => p.id)).toEqual(["c", "a", "b"]);
    const layout = influenceLayout(
      pts,
      { cooksDistance: 4 / 3, leverage: 2, outlierT: null },
      phone,
    );
    expect(layout.undefinedCook).toBe(1);
    expect(layout.points[2].y.cook).toBeNull();
    expect(layout.points[2].y.leverage).not.toBeNull();
    expect(layout.note?.text).toBe("1 at leverage 1, no Cook's distance");
  });

  it("shows both cues for a participant with two flags", () => {
    expect(extraFlags(["leverage", "influence"])).toEqual(["leverage"]); // influence decides the mark, leverage is the extra cue (marks.ts precedence)
    const layout = influenceLayout(
      cohort(8, (i) => (i === 0 ? ["leverage", "influence"] : [])),
      { cooksDistance: 0.5, leverage: 0.2, outlierT: 3 },
      phone,
    );
    const first = layout.points[0];
    expect(first.cues.cook.map((c) => c.shape)).toEqual(["diamond", "square"]); // (marks.ts: influence diamond, leverage square)
    expect(first.cues.cook[1].cy).toBeLessThan(first.cues.cook[0].cy); // the extra cue sits above the mark
    expect(layout.points[1].cues.cook.map((c) => c.shape)).toEqual(["circle"]);
  });

  it("lists in the legend only the marks that are drawn", () => {
    const allFlagged = cohort(5, () => ["influence"]);
    const a = influenceLayout(
      allFlagged,
      { cooksDistance: 0.1, leverage: null, outlierT: null },
      phone,
    );
    expect(a.legend.filter((e) => e.kind === "mark").map((e) => e.label)).toEqual(["influential"]); // no plain participant is drawn
    const mixed = cohort(6, (i) => (i === 0 ? ["outlier", "leverage"] : []));
    mixed[5] = { ...mixed[5], setAside: true };
    const b = influenceLayout(mixed, { cooksDistance: 0.1, leverage: 0.3, outlierT: 3 }, phone);
    expect(b.legend.filter((e) => e.kind === "mark").map((e) => e.label)).toEqual([
      "participant",
      "outlier",
      "high leverage",
      "set aside",
    ]);
    expect(b.legend.filter((e) => e.kind === "line")).toHaveLength(3);
  });

  for (const [name, viewport] of [
    ["phone", phone],
    ["wide", wide],
  ] as const) {
    it(`places labels that never overlap each other or a cut-off's text (${name}, ${viewport.width} px)`, () => {
      // 70 participants, the 12 most influential flagged: their columns are neighbours, so labels must stack or drop
      const points = cohort(70, (i) =>
        i < 12 ? (i % 3 === 0 ? ["influence", "outlier"] : ["influence"]) : [],
      );
      const layout = influenceLayout(
        points,
        { cooksDistance: 4 / 70, leverage: 4 / 70, outlierT: 3.5 },
        viewport,
      );
      const boxes = layout.labels.map((l) => l.box);
      for (let i = 0; i < boxes.length; i++)
        for (let j = i + 1; j < boxes.length; j++)
          expect(boxesOverlap(boxes[i], boxes[j])).toBe(false);
      const cutBoxes = layout.panels.flatMap((p) => (p.cut ? [p.cut.box] : []));
      for (const b of boxes) {
        for (const c of cutBoxes) expect(boxesOverlap(b, c)).toBe(false);
        expect(b.left).toBeGreaterThanOrEqual(layout.plot.left); // never over the tick labels
        expect(b.right).toBeLessThanOrEqual(viewport.width);
        expect(b.top).toBeGreaterThanOrEqual(layout.panels[0].top);
      }
      // no leader line runs through another label
      for (const l of layout.labels) {
        if (!l.leader) continue;
        const span = {
          left: Math.min(l.leader.x1, l.leader.x2),
          right: Math.max(l.leader.x1, l.leader.x2),
          top: l.leader.y2,
          bottom: l.leader.y1,
        };
        for (const other of layout.labels)
          if (other !== l) expect(boxesOverlap(span, other.box)).toBe(false);
      }
      expect(layout.labels.length).toBeGreaterThan(0);
      expect(layout.labels.length + layout.unlabelled).toBe(12); // every flagged participant is named or counted (exact enumeration)
      if (layout.unlabelled > 0)
        expect(layout.note?.text).toContain(`${layout.unlabelled} more flagged, not named`);
    });
  }

  it("drops a label it cannot place instead of overlapping", () => {
    const bounds = { left: 0, top: 0, right: 60, bottom: 30 };
    const wanted = [
      { id: "a", text: "sub-001", x: 30, y: 28 },
      { id: "b", text: "sub-002", x: 31, y: 28 },
      { id: "c", text: "sub-003", x: 32, y: 28 },
    ];
    const { labels, unplaced } = placeLabels(wanted, bounds, [], { fontSize: 11, markRadius: 4.5 });
    expect(labels.length + unplaced.length).toBe(3);
    expect(unplaced.length).toBeGreaterThan(0); // a 60 × 30 box cannot hold three 46-px labels without overlap (exact arithmetic)
    for (let i = 0; i < labels.length; i++)
      for (let j = i + 1; j < labels.length; j++)
        expect(boxesOverlap(labels[i].box, labels[j].box)).toBe(false);
  });

  it("names the field of bad input", () => {
    expect(() =>
      influenceLayout(
        [{ id: "a", flags: [], cooksDistance: -1, leverage: 0.1, residual: 0 }],
        { cooksDistance: 0.1, leverage: null, outlierT: null },
        phone,
      ),
    ).toThrow(ChartInputError);
    expect(() =>
      influenceLayout([], { cooksDistance: 0, leverage: null, outlierT: null }, phone),
    ).toThrow(/cuts.cooksDistance/);
  });
});
