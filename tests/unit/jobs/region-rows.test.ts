/**
 * The stored form of a region's participant rows (server/jobs/region-rows.ts):
 * column by column, and back to exactly the rows the engine made, for
 * every kind of fit, numbers bit for bit; the earlier row-by-row text and
 * the earlier all-JSON columns still read.
 */
import { describe, expect, it } from "vitest";
import {
  decodeRegionColumns,
  decodeRegionPlot,
  decodeRegionRows,
  encodeRegionPlot,
  encodeRegionPlotColumns,
  encodeRegionRows,
} from "../../../server/jobs/region-rows";
import { regionPlot, regionPlotColumns, rosterPositions } from "../../../server/stats/region-plot";
import {
  type FitData,
  type ModelSpecInput,
  modelSpecSchema,
  type ParticipantDiagnostics,
} from "../../../contract/spec";
import { createRng } from "../../../server/stats/rng";
import { runFit } from "../../../server/stats/run-fit";

/** Invented data from a seeded generator: 60 participants, two regions, one with a missing value. */
function makeData(): FitData {
  const rng = createRng(2026);
  const n = 60;
  const participants = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(3, "0")}`);
  const age = participants.map(() => 20 + Math.floor(rng.next() * 45));
  const accuracy = participants.map(() => 0.5 + rng.next() / 2);
  const group = participants.map((_, i) => (i % 3 === 0 ? "patient" : "control"));
  const values = ["left insula", "precuneus"].map((_, r) =>
    Float64Array.from(participants, (_, i) => 0.2 * r + 0.8 * accuracy[i] + rng.next() - 0.5),
  );
  values[1][5] = Number.NaN;
  const standardErrors = values.map(() =>
    Float64Array.from(participants, () => 0.1 + rng.next() * 0.2),
  );
  return {
    participants,
    regions: ["left insula", "precuneus"],
    values,
    standardErrors,
    numericColumns: { age, accuracy },
    categoricalColumns: { group },
  };
}

const data = makeData();
const rowsOf = (input: ModelSpecInput, region: string): ParticipantDiagnostics[] =>
  runFit(modelSpecSchema.parse(input), data).participants.filter((p) => p.region === region);

describe("region rows by columns", () => {
  const kinds: [string, ModelSpecInput][] = [
    [
      "association with a covariate (dfbetas per coefficient)",
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
    ],
    ["robust association", { kind: "association", predictor: "accuracy", estimator: "huber" }],
    ["two groups", { kind: "two-group", group: "group" }],
    [
      "one sample, weighted by the standard errors",
      { kind: "one-sample", weights: "first-level-se" },
    ],
  ];
  for (const [label, input] of kinds) {
    it(`give back exactly the engine's rows: ${label}`, () => {
      for (const region of data.regions) {
        const rows = rowsOf(input, region);
        expect(rows.length).toBeGreaterThan(50);
        expect(decodeRegionRows(encodeRegionRows(rows), region)).toStrictEqual(rows);
      }
    });
  }

  it("keep a field that some rows lack apart from one that is null", () => {
    const rows: ParticipantDiagnostics[] = [
      {
        participant: "a",
        region: "r",
        leverage: 0.1,
        studentizedResidual: null,
        cooksDistance: 0.25,
        flags: ["leverage"],
        dffits: -0.1,
      },
      {
        participant: "b",
        region: "r",
        leverage: null,
        studentizedResidual: 1.5,
        cooksDistance: null,
        flags: [],
      },
      {
        participant: "c",
        region: "r",
        leverage: 1 / 3,
        studentizedResidual: -2.5e-17,
        cooksDistance: 0,
        flags: ["outlier", "influence"],
        dffits: null,
      },
    ];
    const decoded = decodeRegionRows(encodeRegionRows(rows), "r");
    expect(decoded).toStrictEqual(rows);
    expect("dffits" in decoded[1]).toBe(false);
    expect(decoded[2].dffits).toBeNull();
    expect(decodeRegionRows(encodeRegionRows([]), "r")).toEqual([]);
  });

  it("are smaller than the rows one by one, and the row-by-row text still reads", () => {
    const rows = rowsOf(
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
      "left insula",
    );
    const byRows = JSON.stringify(rows);
    expect(encodeRegionRows(rows).length).toBeLessThan(0.5 * byRows.length);
    expect(decodeRegionRows(byRows, "left insula")).toStrictEqual(rows);
  });

  it("store numbers as IEEE 754 doubles, little-endian, and give back every bit", () => {
    // 1.0 is 0x3FF0000000000000 and -2.0 is 0xC000000000000000 in IEEE 754 binary64; their
    // little-endian bytes in base64 (RFC 4648) are "AAAAAAAA8D8=" and "AAAAAAAAAMA=".
    const plain = (leverage: number, participant: string): ParticipantDiagnostics => ({
      participant,
      region: "r",
      leverage,
      studentizedResidual: null,
      cooksDistance: null,
      flags: [],
    });
    const one = JSON.parse(encodeRegionRows([plain(1, "a")]));
    expect(one.fields.leverage).toEqual({ f64: "AAAAAAAA8D8=" });
    expect(JSON.parse(encodeRegionRows([plain(-2, "a")])).fields.leverage).toEqual({
      f64: "AAAAAAAAAMA=",
    });
    // Values whose shortest decimal form is long, the smallest subnormal, −0 and 2^53 + 2.
    const awkward = [1 / 3, 0.1 + 0.2, 5e-324, -0, 2 ** 53 + 2, -1.7976931348623157e308];
    const rows = awkward.map((v, i) => plain(v, `p${i}`));
    const back = decodeRegionRows(encodeRegionRows(rows), "r");
    back.forEach((row, i) => {
      expect(Object.is(row.leverage, awkward[i])).toBe(true);
    });
  });

  it("store objects of one shape key by key, with absent rows and nulls inside", () => {
    const rows: ParticipantDiagnostics[] = [0, 1, 2, 3].map((i) => ({
      participant: `p${i}`,
      region: "r",
      leverage: 0.25 * i,
      studentizedResidual: i,
      cooksDistance: null,
      flags: i === 2 ? ["outlier"] : [],
      ...(i === 1 ? {} : { dfbetas: { "(intercept)": i / 7, accuracy: i === 3 ? null : 0.5 - i } }),
    }));
    const text = encodeRegionRows(rows);
    const stored = JSON.parse(text);
    expect(Object.keys(stored.fields.dfbetas.object)).toEqual(["(intercept)", "accuracy"]);
    expect(stored.fields.dfbetas.object["(intercept)"]).toHaveProperty("f64");
    expect(Array.isArray(stored.fields.dfbetas.object.accuracy)).toBe(true);
    expect(stored.absent).toEqual({ dfbetas: [1] });
    expect(decodeRegionRows(text, "r")).toStrictEqual(rows);
  });

  it("read the earlier columns, every one a JSON array", () => {
    const earlier =
      '{"layout":"columns","n":2,"fields":{"participant":["a","b"],"leverage":[0.5,null],' +
      '"studentizedResidual":[1.25,-2],"cooksDistance":[0,0.125],"flags":[[],["leverage"]],' +
      '"dfbetas":[{"x":1},null]},"absent":{"dfbetas":[1]}}';
    expect(decodeRegionRows(earlier, "r")).toStrictEqual([
      {
        participant: "a",
        region: "r",
        leverage: 0.5,
        studentizedResidual: 1.25,
        cooksDistance: 0,
        flags: [],
        dfbetas: { x: 1 },
      },
      {
        participant: "b",
        region: "r",
        leverage: null,
        studentizedResidual: -2,
        cooksDistance: 0.125,
        flags: ["leverage"],
      },
    ]);
  });

  it("read by field: a number column as doubles, NaN where a row has null or no value", () => {
    const rows = rowsOf(
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
      "precuneus",
    );
    rows[3] = { ...rows[3], dffits: null };
    const { dffits: _gone, ...without } = rows[6];
    rows[6] = without as ParticipantDiagnostics;
    for (const text of [encodeRegionRows(rows), JSON.stringify(rows)]) {
      const columns = decodeRegionColumns(text);
      expect(columns.n).toBe(rows.length);
      expect(columns.names).toContain("dfbetas");
      expect(columns.names).not.toContain("region");
      const leverage = columns.numbers("leverage");
      rows.forEach((row, i) => {
        expect(Object.is(leverage[i], row.leverage)).toBe(true);
        expect(columns.value("participant", i)).toBe(row.participant);
      });
      const dffits = columns.numbers("dffits");
      expect([dffits[3], dffits[6]]).toEqual([Number.NaN, Number.NaN]);
      expect(dffits[4]).toBe(rows[4].dffits);
      expect(columns.value("dffits", 6)).toBeUndefined();
      expect(columns.value("dffits", 3)).toBeNull();
      expect(columns.numbers("participant").every(Number.isNaN)).toBe(true);
      expect(columns.numbers("no such field").every(Number.isNaN)).toBe(true);
    }
  });

  it("write exactly the text JSON.stringify would, names needing escapes included", () => {
    const rows = rowsOf(
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
      "precuneus",
    ).map((row, i) => ({
      ...row,
      'note "quoted"\\': i % 2 ? "odd" : null,
      dfbetas: { 'group: "a"\n': i / 3, other: -i },
      ...(i === 2 ? { extra: [1, "two"] } : {}),
    }));
    const text = encodeRegionRows(rows);
    expect(text).toBe(JSON.stringify(JSON.parse(text)));
    expect(decodeRegionRows(text, "precuneus")).toStrictEqual(rows);
  });

  it("refuse text that is neither form", () => {
    expect(() =>
      decodeRegionRows(
        '{"layout":"columns","n":2,"fields":{"leverage":{"f64":"AAAAAAAA8D8="}}}',
        "r",
      ),
    ).toThrow(SyntaxError);
    expect(() =>
      decodeRegionRows('{"layout":"columns","n":1,"fields":{"leverage":{"bytes":"A"}}}', "r"),
    ).toThrow(SyntaxError);
    expect(() => decodeRegionRows('{"points":[]}', "r")).toThrow(SyntaxError);
    expect(() => decodeRegionRows("not json", "r")).toThrow(SyntaxError);
  });
});

describe("a region's plot data as stored", () => {
  const plotOf = (input: ModelSpecInput, region: string) => {
    const spec = modelSpecSchema.parse(input);
    const ids = rowsOf(input, region).map((r) => r.participant);
    return { plot: regionPlot(spec, data, region, ids), ids };
  };
  const kinds: [string, ModelSpecInput][] = [
    ["association by group", { kind: "association", predictor: "accuracy", group: "group" }],
    ["two groups", { kind: "two-group", group: "group" }],
    ["one sample", { kind: "one-sample" }],
  ];
  for (const [label, input] of kinds) {
    it(`keeps its points by position, every number bit for bit: ${label}`, () => {
      const { plot, ids } = plotOf(input, "precuneus");
      const text = encodeRegionPlot(plot, ids);
      const stored = JSON.parse(text);
      expect(stored).toMatchObject({ layout: "columns", n: ids.length });
      expect(text).not.toContain(ids[0]);
      expect(text).toBe(JSON.stringify(stored));
      // Smaller than the points one object each (at 60 participants the band weighs most).
      expect(text.length).toBeLessThan(JSON.stringify(plot).length);
      for (const form of [text, JSON.stringify(plot)]) {
        const back = decodeRegionPlot(form, ids);
        const { points, ...head } = plot;
        expect(back.head).toStrictEqual(head);
        points.forEach((p, i) => {
          expect(Object.is(back.x[i], p.x ?? Number.NaN)).toBe(true);
          expect(back.group[i]).toBe(p.group);
          expect(Object.is(back.y[i], p.y)).toBe(true);
        });
      }
    });
  }

  it("writes the stored form the module note defines, drawn by column or point by point", () => {
    const input: ModelSpecInput = { kind: "two-group", group: "group" };
    const { plot, ids } = plotOf(input, "left insula");
    const y = Float64Array.from(plot.points, (p) => p.y);
    // The layout written out by hand from the module note of region-rows.ts.
    const expected = `{"layout":"columns","n":${ids.length},"x":null,"group":${JSON.stringify(plot.points.map((p) => p.group))},"y":{"f64":"${Buffer.from(y.buffer).toString("base64")}"},"band":null,"groupMeans":${JSON.stringify(plot.groupMeans)},"notes":[]}`;
    expect(encodeRegionPlot(plot, ids)).toBe(expected);
    const positions = rosterPositions(data.participants, ids);
    const columns = regionPlotColumns(modelSpecSchema.parse(input), data, "left insula", positions);
    expect(encodeRegionPlotColumns(columns)).toBe(expected);
  });

  it("stores a plot that is not the rows' participants in order, or that failed, as plain JSON", () => {
    const { plot, ids } = plotOf({ kind: "association", predictor: "accuracy" }, "left insula");
    const reordered = [...ids.slice(1), ids[0]];
    expect(encodeRegionPlot(plot, reordered)).toBe(JSON.stringify(plot));
    expect(encodeRegionPlot(plot, ids.slice(1))).toBe(JSON.stringify(plot));
    // Read back by id: each row gets its own point.
    const back = decodeRegionPlot(encodeRegionPlot(plot, reordered), reordered);
    expect(back.y[reordered.length - 1]).toBe(plot.points[0].y);
    const failed = decodeRegionPlot(encodeRegionPlot({ error: "no band" }, ids), ids);
    expect(failed.head).toEqual({ error: "no band" });
    expect(failed.x.every(Number.isNaN) && failed.y.every(Number.isNaN)).toBe(true);
    expect(() => decodeRegionPlot("[1]", ids)).toThrow(SyntaxError);
    expect(() => decodeRegionPlot('{"layout":"columns","x":null}', ids)).toThrow(SyntaxError);
  });
});
