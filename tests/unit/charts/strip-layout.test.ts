import { describe, expect, it } from "vitest";
import { jitterUnit } from "../../../components/charts/jitter";
import {
  stripDescription,
  stripGeometry,
  stripLayout,
  stripPlotLayout,
} from "../../../components/charts/strip-layout";

const groups = [
  { key: "control", label: "controls", mean: 0.2, low: 0.05, high: 0.35 },
  { key: "patient", label: "patients", mean: 0.5, low: 0.3, high: 0.7 },
];

describe("strip layout", () => {
  it("places each point in its group's column by its id, skipping missing values", () => {
    const { placements, counts } = stripLayout(groups, [
      { id: "sub-1", group: "patient", value: 0.4 },
      { id: "sub-2", group: "control", value: null },
      { id: "sub-3", group: "control", value: -0.1 },
    ]);
    expect(counts).toEqual([1, 1]); // (exact enumeration: sub-2 has no value)
    expect(placements.get("sub-1")?.group).toBe(1); // (exact enumeration)
    expect(placements.has("sub-2")).toBe(false); // (exact enumeration)
    expect(placements.get("sub-3")?.offset).toBeCloseTo(
      stripGeometry.cloudCentre + jitterUnit("sub-3") * stripGeometry.cloudHalfWidth,
      15,
    ); // (exact arithmetic)
  });

  it("gives the same places whatever the order of the points", () => {
    const points = Array.from({ length: 30 }, (_, i) => ({
      id: `sub-${i}`,
      group: i % 2 ? "patient" : "control",
      value: i / 10,
    }));
    const a = stripLayout(groups, points).placements;
    const b = stripLayout(groups, points.slice().reverse()).placements;
    for (const p of points) expect(b.get(p.id)).toEqual(a.get(p.id)); // (determinism: jitter is a function of the id)
  });

  it("keeps the point cloud left of the summary bar", () => {
    const right = stripGeometry.cloudCentre + stripGeometry.cloudHalfWidth;
    expect(right).toBeLessThan(stripGeometry.summary - stripGeometry.meanHalfWidth); // (exact arithmetic: 0.08 < 0.19)
  });

  it("labels each column with its group's N once: the fit's N when given, else the placed points", () => {
    const points = [
      { id: "sub-1", group: "patient", value: 0.4, flags: [], setAside: false },
      { id: "sub-3", group: "control", value: -0.1, flags: [], setAside: false },
    ];
    const given = stripPlotLayout(
      { groups: groups.map((g, i) => ({ ...g, n: 36 + i })), points, valueLabel: "Contrast value" },
      { width: 720, height: 400 },
    );
    // (exact enumeration: the label, then its N once)
    expect(given.columns.map((c) => c.label)).toEqual(["controls (n = 36)", "patients (n = 37)"]);
    const counted = stripPlotLayout(
      { groups, points, valueLabel: "Contrast value" },
      { width: 720, height: 400 },
    );
    expect(counted.columns.map((c) => c.label)).toEqual(["controls (n = 1)", "patients (n = 1)"]);
    expect(
      stripDescription({ groups: [{ ...groups[0], n: 36 }], points, valueLabel: "v" }, [1]),
    ).toContain("for controls (n = 36), each");
  });

  it("names the field of bad input", () => {
    expect(() => stripLayout([], [])).toThrow("groups: must hold one or two groups (got 0)"); // (input contract)
    expect(() => stripLayout(groups, [{ id: "a", group: "other", value: 1 }])).toThrow(
      'points[0].group: "other" is not one of the groups (control, patient)',
    ); // (input contract)
    expect(() =>
      stripLayout(groups, [
        { id: "a", group: "control", value: 1 },
        { id: "a", group: "patient", value: 2 },
      ]),
    ).toThrow('points[1].id: "a" appears more than once'); // (input contract)
    expect(() => stripLayout([{ ...groups[0], low: 1, high: 0 }], [])).toThrow(
      "groups[0].low: is above high (1 > 0)",
    ); // (input contract)
    expect(() => stripLayout([{ ...groups[0], mean: Number.NaN }], [])).toThrow(
      "groups[0].mean: must be a finite number (got NaN)",
    ); // (input contract)
  });
});
