/**
 * A finished region's participants as columns (server/jobs/region-points.ts)
 * and their decoding in a worker thread (server/jobs/region-read-jobs.ts):
 * each point is exactly the engine's diagnostics joined by participant id
 * with the plot's x, group and y, whatever form the rows were stored in,
 * and the thread gives the same columns as decoding in place, with the
 * plot points written out as the region detail sends them.
 */
import { afterAll, describe, expect, it } from "vitest";
import {
  type FitData,
  type Flag,
  type ModelSpecInput,
  modelSpecSchema,
  type ParticipantDiagnostics,
} from "../../../contract/spec";
import type { RegionDetailPoint, RegionPlot } from "../../../contract/views/fits";
import { RegionReadJobs } from "../../../server/jobs/region-read-jobs";
import { encodeRegionPlot, encodeRegionRows } from "../../../server/jobs/region-rows";
import {
  decodeRegionPoints,
  orderPositions,
  RegionPoints,
} from "../../../server/jobs/region-points";
import { regionPlot } from "../../../server/stats/region-plot";
import { createRng } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";

/** Invented data from a seeded generator: 40 participants, one region with a missing value. */
function makeData(): FitData {
  const rng = createRng(515);
  const participants = Array.from(
    { length: 40 },
    (_, i) => `sub-${String(i + 1).padStart(2, "0")}`,
  );
  const accuracy = participants.map(() => 0.5 + rng.next() / 2);
  const values = [Float64Array.from(participants, (_, i) => accuracy[i] + rng.next() - 0.5)];
  values[0][7] = Number.NaN;
  values[0][11] = 4; // a participant far from the rest, to be flagged
  return {
    participants,
    regions: ["left insula"],
    values,
    numericColumns: { accuracy, age: participants.map((_, i) => 20 + ((i * 7) % 40)) },
    categoricalColumns: { group: participants.map((_, i) => (i % 2 ? "patient" : "control")) },
  };
}

const data = makeData();

function stored(input: ModelSpecInput) {
  const spec = modelSpecSchema.parse(input);
  const rows = runFit(spec, data).participants.filter((p) => p.region === "left insula");
  const plot = regionPlot(
    spec,
    data,
    "left insula",
    rows.map((r) => r.participant),
  );
  return { rows, plot };
}

/** The point a reader should see: the row's diagnostics, the plot's x, group and y. */
function expected(row: ParticipantDiagnostics, plot: RegionPlot | null): RegionDetailPoint {
  const p = plot?.points.find((q) => q.participant === row.participant);
  return {
    participant: row.participant,
    x: p?.x ?? null,
    group: p?.group ?? null,
    y: p?.y ?? (row.value as number),
    fitted: (row.fitted as number | undefined) ?? null,
    residual: (row.residual as number | undefined) ?? null,
    leverage: row.leverage,
    studentizedResidual: row.studentizedResidual,
    cooksDistance: row.cooksDistance,
    dffits: (row.dffits as number | null | undefined) ?? null,
    mahalanobis: (row.mahalanobis as number | null | undefined) ?? null,
    flags: row.flags,
  };
}

const pointsOf = (points: RegionPoints) =>
  Array.from({ length: points.n }, (_, i) => points.point(i));

describe("a finished region's points", () => {
  const kinds: [string, ModelSpecInput][] = [
    [
      "association with a covariate",
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
    ],
    ["robust association", { kind: "association", predictor: "accuracy", estimator: "huber" }],
    ["two groups", { kind: "two-group", group: "group" }],
    ["one sample", { kind: "one-sample" }],
  ];
  for (const [label, input] of kinds) {
    it(`are the engine's rows joined with the plot: ${label}`, () => {
      const { rows, plot } = stored(input);
      expect(rows.some((r) => r.flags.length > 0)).toBe(true);
      const ids = rows.map((r) => r.participant);
      for (const plotText of [encodeRegionPlot(plot, ids), JSON.stringify(plot)]) {
        const points = new RegionPoints(decodeRegionPoints(encodeRegionRows(rows), plotText));
        expect(points.n).toBe(rows.length);
        expect(pointsOf(points)).toStrictEqual(rows.map((r) => expected(r, plot)));
      }
      const points = new RegionPoints(
        decodeRegionPoints(encodeRegionRows(rows), encodeRegionPlot(plot, ids)),
      );
      for (let i = 0; i < points.n; i++) {
        const { fitted: _f, residual: _r, dffits: _d, mahalanobis: _m, ...drawn } = points.point(i);
        expect(points.plotPoint(i)).toStrictEqual(drawn);
      }
      const { points: _drawn, ...head } = plot;
      expect(points.plot).toStrictEqual(head);
      expect(Object.isFrozen(points.plot)).toBe(true);
    });
  }

  it("read the earlier row-by-row text, plot points in another order, and a plot that failed", () => {
    const { rows, plot } = stored({ kind: "association", predictor: "accuracy" });
    const shuffled = { ...plot, points: [...plot.points].reverse().slice(1) };
    const points = new RegionPoints(
      decodeRegionPoints(JSON.stringify(rows), JSON.stringify(shuffled)),
    );
    expect(pointsOf(points)).toStrictEqual(rows.map((r) => expected(r, shuffled)));
    // The participant the plot lacks: no x, y from the row's value.
    const missing = (plot.points.at(-1) as { participant: string }).participant;
    const at = rows.findIndex((r) => r.participant === missing);
    expect(points.point(at).x).toBeNull();
    expect(points.point(at).y).toBe(rows[at].value);
    const failed = new RegionPoints(
      decodeRegionPoints(encodeRegionRows(rows), JSON.stringify({ error: "too few" })),
    );
    expect(failed.plot).toEqual({ error: "too few" });
    expect(failed.point(0).x).toBeNull();
  });

  it("read null for a number the fit did not give, and nothing for a region without rows", () => {
    const rows: ParticipantDiagnostics[] = [
      {
        participant: "a",
        region: "r",
        value: 1.5,
        leverage: 0.5,
        studentizedResidual: null,
        cooksDistance: 0.25,
        flags: ["leverage"],
        dffits: -0.5,
      },
      {
        participant: "b",
        region: "r",
        value: -2,
        leverage: null,
        studentizedResidual: 2,
        cooksDistance: null,
        flags: [],
      },
    ];
    const points = new RegionPoints(decodeRegionPoints(encodeRegionRows(rows), null));
    expect(pointsOf(points)).toStrictEqual(rows.map((r) => expected(r, null)));
    expect(points.point(1).dffits).toBeNull();
    expect(points.plot).toBeNull();
    expect(Object.isFrozen(points.flags(0))).toBe(true);
    expect(() => (points.point(0).flags as string[]).push("outlier")).toThrow(TypeError);
    const empty = new RegionPoints(decodeRegionPoints(null, null));
    expect(empty.n).toBe(0);
  });
});

describe("reading regions in a worker thread", () => {
  const jobs = new RegionReadJobs({ inlineChars: 0, inlineOrder: 0, maxWaiting: 0 });
  afterAll(() => jobs.close());

  it("gives the same columns as decoding in place", async () => {
    const { rows, plot } = stored({
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
    });
    const texts = [encodeRegionRows(rows), JSON.stringify(plot)] as const;
    const threaded = await jobs.decode(...texts);
    const inPlace = decodeRegionPoints(...texts);
    // The thread also writes out the plot points, as the region detail sends them.
    const points = new RegionPoints(inPlace);
    const expected = JSON.stringify(
      Array.from({ length: points.n }, (_, i) => points.plotPoint(i)),
    );
    expect(inPlace.pointsText).toBeNull();
    expect(points.plotPointsText()).toBe(expected);
    expect(threaded).toStrictEqual({ ...inPlace, pointsText: expected });
    expect(new RegionPoints(threaded).plotPointsText()).toBe(expected);
    expect(threaded.numbers.leverage).toBeInstanceOf(Float64Array);
  });

  it("sorts an order as in place, numbers and text", async () => {
    const { rows, plot } = stored({ kind: "association", predictor: "accuracy" });
    const points = new RegionPoints(
      decodeRegionPoints(encodeRegionRows(rows), JSON.stringify(plot)),
    );
    for (const sort of ["cooksDistance", "participant", "flags", "x"] as const)
      for (const direction of ["asc", "desc"] as const)
        expect(await jobs.order(points.sortKeys(sort), direction)).toStrictEqual(
          orderPositions(points.sortKeys(sort), direction),
        );
  });

  it("answers 429 when more reads wait than it takes", async () => {
    const { rows } = stored({ kind: "one-sample" });
    const text = encodeRegionRows(rows);
    const both = await Promise.allSettled([jobs.decode(text, null), jobs.decode(text, null)]);
    expect(both[0].status).toBe("fulfilled");
    expect(both[1]).toMatchObject({
      status: "rejected",
      reason: { status: 429, code: "regions_busy" },
    });
  });
});

describe("an order of a region's participants", () => {
  // Exact enumeration: positions 0…5, missing values at 1 and 4, a tie between 2 and 5.
  const numbers = Float64Array.from([0.5, Number.NaN, 0.25, -1, Number.NaN, 0.25]);
  it("sorts numbers by value, missing last both ways, ties in the fit's order", () => {
    expect([...orderPositions(numbers, "asc")]).toEqual([3, 2, 5, 0, 1, 4]);
    expect([...orderPositions(numbers, "desc")]).toEqual([0, 2, 5, 3, 1, 4]);
  });
  it("sorts text in natural order, missing last both ways", () => {
    const ids = ["sub-10", null, "sub-2", "Sub-1", "sub-2", null];
    expect([...orderPositions(ids, "asc")]).toEqual([3, 2, 4, 0, 1, 5]);
    expect([...orderPositions(ids, "desc")]).toEqual([0, 2, 4, 3, 1, 5]);
  });
  it("sorts flags by how many, then which, none last", () => {
    const rows: ParticipantDiagnostics[] = [
      ["outlier"],
      [],
      ["leverage", "influence"],
      ["influence"],
    ].map((flags, i) => ({
      participant: `p${i}`,
      region: "r",
      value: i,
      leverage: 0.1,
      studentizedResidual: 0,
      cooksDistance: 0,
      flags: flags as Flag[],
    }));
    const points = new RegionPoints(decodeRegionPoints(encodeRegionRows(rows), null));
    expect([...orderPositions(points.sortKeys("flags"), "desc")]).toEqual([2, 0, 3, 1]);
  });
});
