import { describe, expect, it } from "vitest";
import type { FitData, ModelSpec } from "../../../contract/spec";
import { modelSpecSchema } from "../../../contract/spec";
import { fitLinearModel } from "../../../server/stats/linear-model";
import { regionPlot } from "../../../server/stats/region-plot";
import { carsDist, carsSpeed, sleepGroup1, sleepGroup2, withIntercept } from "./reference-data";

const spec = (s: Record<string, unknown>): ModelSpec => modelSpecSchema.parse(s);

function carsData(): FitData {
  const ids = carsSpeed.map((_, i) => `car-${i + 1}`);
  return {
    participants: ids,
    regions: ["dist"],
    values: [Float64Array.from(carsDist)],
    numericColumns: { speed: carsSpeed },
    categoricalColumns: { type: carsSpeed.map((_, i) => (i % 2 === 0 ? "even" : "odd")) },
  };
}

describe("region plot data", () => {
  it("association: one point per included participant and the least-squares band over the trait range", () => {
    const data = carsData();
    const ids = data.participants.filter((_, i) => i !== 3);
    const plot = regionPlot(spec({ kind: "association", predictor: "speed" }), data, "dist", ids, {
      gridPoints: 5,
    });
    expect(plot.points).toHaveLength(49);
    expect(plot.points[3]).toEqual({ participant: "car-5", x: 8, group: null, y: 16 });
    const line = plot.band?.lines[0];
    expect(line?.points.map((p) => p.x)).toEqual([4, 9.25, 14.5, 19.75, 25]); // (exact: an even grid from min to max speed)
    // Independent least squares without car 4: the band's centre is the line (exact algebra).
    const keep = carsSpeed.map((_, i) => i).filter((i) => i !== 3);
    const { x, n, p } = withIntercept(keep.map((i) => carsSpeed[i]));
    const f = fitLinearModel(
      x,
      n,
      p,
      keep.map((i) => carsDist[i]),
    );
    for (const pt of line?.points ?? []) {
      expect(pt.fit).toBeCloseTo(f.coefficients[0] + f.coefficients[1] * pt.x, 9);
      expect(pt.low).toBeLessThan(pt.fit);
      expect(pt.high).toBeGreaterThan(pt.fit);
    }
    expect(plot.groupMeans).toBeNull();
  });

  it("association with a group interaction: one line per group, each the group's own least-squares line (exact algebra)", () => {
    const data = carsData();
    const plot = regionPlot(
      spec({ kind: "association", predictor: "speed", group: "type", interaction: true }),
      data,
      "dist",
      data.participants,
      {
        gridPoints: 3,
      },
    );
    expect(plot.band?.lines.map((l) => l.label)).toEqual(["even", "odd"]);
    for (const [k, label] of ["even", "odd"].entries()) {
      const idx = carsSpeed
        .map((_, i) => i)
        .filter((i) => (i % 2 === 0 ? "even" : "odd") === label);
      const { x, n, p } = withIntercept(idx.map((i) => carsSpeed[i]));
      const f = fitLinearModel(
        x,
        n,
        p,
        idx.map((i) => carsDist[i]),
      );
      for (const pt of plot.band?.lines[k].points ?? [])
        expect(pt.fit).toBeCloseTo(f.coefficients[0] + f.coefficients[1] * pt.x, 9);
    }
  });

  it("two groups: each group's mean with its t interval (Student's sleep data)", () => {
    const ids = [...sleepGroup1.map((_, i) => `a${i}`), ...sleepGroup2.map((_, i) => `b${i}`)];
    const data: FitData = {
      participants: ids,
      regions: ["extra"],
      values: [Float64Array.from([...sleepGroup1, ...sleepGroup2])],
      numericColumns: {},
      categoricalColumns: { drug: ids.map((id) => (id.startsWith("a") ? "1" : "2")) },
    };
    const plot = regionPlot(spec({ kind: "two-group", group: "drug" }), data, "extra", ids);
    expect(plot.groupMeans?.map((g) => g.label)).toEqual(["1", "2"]);
    expect(plot.groupMeans?.[0].mean).toBeCloseTo(0.75, 10); // (R t.test(extra ~ group, sleep): mean in group 1 = 0.75)
    expect(plot.groupMeans?.[1].mean).toBeCloseTo(2.33, 10); // (same: mean in group 2 = 2.33)
    // Group 1: sd = 1.78901 (R sd(sleep$extra[1:10]); value from memory); t(0.975, 9) = 2.262 (Zar 2010, Table B.3)
    expect(plot.groupMeans?.[0].ciLow).toBeCloseTo(0.75 - 2.262157 * (1.78901 / Math.sqrt(10)), 3);
    expect(plot.points.find((p) => p.participant === "b3")).toEqual({
      participant: "b3",
      x: null,
      group: "2",
      y: 0.1,
    });
    expect(plot.band).toBeNull();
  });

  it("one sample: the mean with its interval; refuses an unknown participant or a missing value", () => {
    const data = carsData();
    const plot = regionPlot(spec({ kind: "one-sample" }), data, "dist", data.participants);
    expect(plot.groupMeans?.[0].mean).toBeCloseTo(42.98, 10); // (R mean(cars$dist) = 42.98; value from memory)
    expect(() => regionPlot(spec({ kind: "one-sample" }), data, "dist", ["nobody"])).toThrow(
      "regionPlot: unknown participant 'nobody'",
    );
    expect(() => regionPlot(spec({ kind: "one-sample" }), data, "speed", [])).toThrow(
      "regionPlot: unknown region 'speed'",
    );
    const gap: FitData = {
      ...data,
      values: [Float64Array.from(carsDist, (v, i) => (i === 0 ? Number.NaN : v))],
    };
    expect(() => regionPlot(spec({ kind: "one-sample" }), gap, "dist", ["car-1"])).toThrow(
      "regionPlot: participant 'car-1' has no value in region 'dist'",
    );
  });
});
