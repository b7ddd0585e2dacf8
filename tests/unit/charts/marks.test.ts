import { describe, expect, it } from "vitest";
import {
  describePoint,
  flagPhrase,
  legendItemsFor,
  markFor,
  polygonPath,
  primaryFlag,
  shapeVertices,
} from "../../../components/charts/marks";
import { markRoles } from "../../../components/theme";

/** Shoelace formula for the area of a simple polygon. */
function area(vertices: [number, number][]): number {
  let s = 0;
  for (let i = 0; i < vertices.length; i++) {
    const [x1, y1] = vertices[i];
    const [x2, y2] = vertices[(i + 1) % vertices.length];
    s += x1 * y2 - x2 * y1;
  }
  return Math.abs(s) / 2;
}

describe("marks for flags", () => {
  it("gives each flag its own shape and theme colour", () => {
    expect(markFor([])).toEqual({
      role: "participant",
      shape: "circle",
      colour: markRoles.participant,
      hollow: false,
    }); // (product convention)
    expect(markFor(["outlier"])).toEqual({
      role: "outlier",
      shape: "triangle",
      colour: markRoles.outlier,
      hollow: false,
    }); // (product convention)
    expect(markFor(["leverage"]).shape).toBe("square"); // (product convention)
    expect(markFor(["influence"]).shape).toBe("diamond"); // (product convention)
  });

  it("lets influence, then outlier, then leverage decide for several flags", () => {
    expect(primaryFlag(["leverage", "outlier"])).toBe("outlier"); // (product convention)
    expect(primaryFlag(["leverage", "influence", "outlier"])).toBe("influence"); // (product convention)
    expect(primaryFlag([])).toBeNull(); // (product convention)
  });

  it("draws a participant set aside hollow, in the set-aside colour, keeping the flag's shape", () => {
    expect(markFor(["leverage"], true)).toEqual({
      role: "setAside",
      shape: "square",
      colour: markRoles.setAside,
      hollow: true,
    }); // (product convention)
  });

  it("writes the flags in words for accessible names", () => {
    expect(flagPhrase(["outlier"])).toBe("flagged outlier"); // (product convention)
    expect(flagPhrase(["leverage", "influence"], true)).toBe(
      "flagged influential and high leverage, set aside",
    ); // (product convention)
    expect(flagPhrase(["leverage", "influence", "outlier"])).toBe(
      "flagged influential, outlier and high leverage",
    ); // (product convention)
    expect(flagPhrase([])).toBe(""); // (product convention)
    expect(
      describePoint({ id: "sub-12", flags: ["outlier"] }, [
        { name: "trait", value: 31 },
        { name: "contrast", value: 0.42 },
      ]),
    ).toBe("sub-12: trait 31, contrast 0.42, flagged outlier"); // (the brief's example label)
    expect(describePoint({ id: "sub-3", flags: [] }, [{ name: "contrast", value: null }])).toBe(
      "sub-3: contrast n/a",
    ); // (BIDS participants-file convention for missing)
  });

  it("lists only the meanings present, in a fixed order", () => {
    const items = legendItemsFor([
      { id: "a", flags: ["influence"] },
      { id: "b", flags: [], setAside: true },
      { id: "c", flags: ["outlier", "leverage"] },
    ]);
    // c is drawn as an outlier (outlier before leverage), so no high-leverage mark is drawn.
    expect(items.map((i) => i.label)).toEqual([
      "participant",
      "outlier",
      "influential",
      "set aside",
    ]); // (product convention: the legend names the marks drawn)
    expect(
      legendItemsFor([{ id: "d", flags: ["outlier", "influence"] }]).map((i) => i.role),
    ).toEqual(["participant", "influence"]); // (product convention: influence decides the shape)
    expect(legendItemsFor([]).map((i) => i.role)).toEqual(["participant"]); // (product convention)
    expect(items.find((i) => i.role === "setAside")?.hollow).toBe(true); // (product convention)
  });
});

describe("mark shapes", () => {
  it("give every shape the area of the circle of radius r", () => {
    const r = 4.5;
    for (const shape of ["square", "diamond", "triangle"] as const) {
      expect(area(shapeVertices(shape, 10, 20, r))).toBeCloseTo(Math.PI * r * r, 10); // (exact algebra: shoelace area equals πr²)
    }
    expect(shapeVertices("circle", 0, 0, 1)).toEqual([]); // (product convention: circles are drawn as circles)
  });

  it("centres the triangle on its centroid", () => {
    const v = shapeVertices("triangle", 10, 20, 3);
    expect((v[0][0] + v[1][0] + v[2][0]) / 3).toBeCloseTo(10, 12); // (exact algebra: centroid of an equilateral triangle)
    expect((v[0][1] + v[1][1] + v[2][1]) / 3).toBeCloseTo(20, 12); // (exact algebra)
  });

  it("writes closed path data", () => {
    expect(
      polygonPath([
        [0, 0],
        [1.005, 0],
        [0, 2],
      ]),
    ).toBe("M0,0L1,0L0,2Z"); // (exact arithmetic: 1.005·100 = 100.49999… in binary, rounds to 1.00)
    expect(polygonPath([])).toBe(""); // (product convention)
  });
});
