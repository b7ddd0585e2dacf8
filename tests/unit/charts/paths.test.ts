import { describe, expect, it } from "vitest";
import { bandPath, linePath } from "../../../components/charts/paths";

const identity = (v: number) => v;
const double = (v: number) => 2 * v;

describe("linePath", () => {
  it("joins points in order and breaks at a missing point", () => {
    expect(
      linePath(
        [
          { x: 0, y: 1 },
          { x: 1, y: 2 },
          { x: 2, y: Number.NaN },
          { x: 3, y: 4 },
          { x: 4, y: 5 },
        ],
        identity,
        double,
      ),
    ).toBe("M0,2L1,4M3,8L4,10"); // (exact enumeration)
  });
});

describe("bandPath", () => {
  it("runs along the upper bound left to right and back along the lower bound", () => {
    const band = [
      { x: 2, fit: 1, low: 0, high: 2 },
      { x: 0, fit: 0, low: -1, high: 1 },
      { x: 1, fit: 0.5, low: -0.5, high: 1.5 },
    ];
    expect(bandPath(band, identity, identity)).toBe("M0,1L1,1.5L2,2L2,0L1,-0.5L0,-1Z"); // (exact enumeration: sorted by x)
  });

  it("leaves out incomplete points and needs two points", () => {
    expect(
      bandPath(
        [
          { x: 0, fit: 0, low: Number.NaN, high: 1 },
          { x: 1, fit: 0, low: 0, high: 1 },
        ],
        identity,
        identity,
      ),
    ).toBe(""); // (exact enumeration: one point left)
  });
});
