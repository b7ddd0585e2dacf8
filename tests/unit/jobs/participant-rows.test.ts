/**
 * A region's participants' rows as the diagnose stage hands them on, by
 * column (server/stats/fit/participant-rows.ts), and their stored text
 * (`encodeParticipantRows`): the same objects and the same text, byte for
 * byte, as the rows made as objects and stored by `encodeRegionRows` —
 * exact enumeration of the engine's own output — including the cases
 * where a column holds nulls (a participant at leverage 1, a region with
 * one residual degree of freedom, a model with the intercept alone).
 * Invented, seeded data.
 */
import { describe, expect, it } from "vitest";
import {
  type FitData,
  type ModelSpecInput,
  modelSpecSchema,
  type ParticipantDiagnostics,
} from "../../../contract/spec";
import {
  decodeRegionRows,
  encodeParticipantRows,
  encodeRegionPlot,
  encodeRegionRows,
  encodeRegionTexts,
  regionRowsOf,
} from "../../../server/jobs/region-rows";
import { regionPlot, regionPlotColumns } from "../../../server/stats/region-plot";
import { regressionDiagnosticColumns } from "../../../server/stats/diagnostics";
import {
  type ParticipantRows,
  assertFiniteRows,
  diagnosedRows,
  objectRows,
} from "../../../server/stats/fit/participant-rows";
import { qrDecompose, solveLinearModel } from "../../../server/stats/linear-model";
import { createRng } from "../../../server/stats/rng";
import { runFit, runFitByRegion } from "../../../server/stats/run-fit";

/**
 * 40 participants, three regions: the second misses all but four values
 * (one residual degree of freedom under the intercept, a predictor and a
 * covariate), the third has one extreme value.
 */
function makeData(): FitData {
  const rng = createRng(77);
  const n = 40;
  const participants = Array.from({ length: n }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
  const age = participants.map(() => 20 + Math.floor(rng.next() * 45));
  const accuracy = participants.map(() => 0.5 + rng.next() / 2);
  const group = participants.map((_, i) => (i % 3 === 0 ? "patient" : "control"));
  // One participant alone at their site: leverage 1 under a site covariate.
  const site = participants.map((_, i) => (i === 7 ? "east" : i % 2 ? "north" : "south"));
  const regions = ["left insula", "precuneus", "right amygdala"];
  const values = regions.map((_, r) =>
    Float64Array.from(participants, (_, i) => 0.3 * r + 0.8 * accuracy[i] + rng.next() - 0.5),
  );
  for (let i = 4; i < n; i++) values[1][i] = Number.NaN;
  values[2][12] = 9;
  return {
    participants,
    regions,
    values,
    numericColumns: { age, accuracy },
    categoricalColumns: { group, site },
  };
}

const data = makeData();

/** Every region's rows as the sink receives them. */
function handedOn(input: ModelSpecInput): ParticipantRows[] {
  const seen: ParticipantRows[] = [];
  runFitByRegion(modelSpecSchema.parse(input), data, {}, (_position, _region, rows) => {
    seen.push(rows);
  });
  return seen;
}

/** The four participants of the second region leave no residual degree of freedom to this model. */
const twoGroupsBySite: ModelSpecInput = {
  kind: "two-group",
  group: "group",
  covariates: ["site"],
  regions: ["left insula", "right amygdala"],
};

describe("a region's rows by column", () => {
  const cases: [string, ModelSpecInput][] = [
    [
      "association with covariates (a region with one residual degree of freedom)",
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
    ],
    ["two groups with a site covariate (one participant at leverage 1)", twoGroupsBySite],
    ["one sample (the intercept alone: no Mahalanobis distance)", { kind: "one-sample" }],
    ["robust association", { kind: "association", predictor: "accuracy", estimator: "huber" }],
  ];
  for (const [label, input] of cases) {
    it(`are the engine's rows and store as the same text: ${label}`, () => {
      const whole = runFit(modelSpecSchema.parse(input), data).participants;
      const seen = handedOn(input);
      expect(seen.length).toBeGreaterThan(0);
      for (const rows of seen) {
        const objects = rows.rows();
        expect(objects).toStrictEqual(whole.filter((p) => p.region === rows.region));
        expect(rows.ids).toEqual(objects.map((p) => p.participant));
        const text = encodeParticipantRows(rows);
        expect(text).toBe(encodeRegionRows(objects));
        expect(decodeRegionRows(text, rows.region)).toStrictEqual(objects);
        expect(encodeParticipantRows(objectRows(rows.region, objects))).toBe(text);
      }
    });
  }

  it("hand their rows and plot on as bytes that read back as the same texts", () => {
    // A second roster with ids, a label and a region name outside ASCII, as a participants file may hold.
    const accented: FitData = {
      ...data,
      participants: data.participants.map((id, i) => (i % 5 === 0 ? `${id}-Ø` : id)),
      regions: ["insula izquierda", "précunéus", "amígdala δ"],
      categoricalColumns: {
        ...data.categoricalColumns,
        group: data.categoricalColumns.group.map((g) => (g === "patient" ? "patiënt" : g)),
      },
    };
    const models: ModelSpecInput[] = [
      { kind: "association", predictor: "accuracy", covariates: ["age"] },
      { kind: "association", predictor: "accuracy", group: "group", interaction: true },
      twoGroupsBySite,
      { kind: "one-sample" },
    ];
    let cases = 0;
    const kinds = new Set<boolean>();
    for (const fitData of [data, accented])
      for (const input of models) {
        // The first and third regions: the second leaves too few participants to the interaction.
        const regions = [fitData.regions[0], fitData.regions[2]];
        const spec = modelSpecSchema.parse({ ...input, regions });
        runFitByRegion(spec, fitData, {}, (position, region, rows) => {
          if (!rows.byColumn) throw new Error("the diagnose stage hands on rows by column");
          const plot = regionPlotColumns(spec, fitData, region, rows.positions);
          for (const [texts, plotText] of [
            [
              encodeRegionTexts(rows, plot),
              encodeRegionPlot(regionPlot(spec, fitData, region, rows.ids), rows.ids),
            ],
            [
              encodeRegionTexts(rows, { error: "no band: ü" }),
              JSON.stringify({ error: "no band: ü" }),
            ],
            [encodeRegionTexts(rows, null), null],
          ] as const) {
            const back = regionRowsOf({ position, region, ...texts });
            expect(back).toStrictEqual({
              position,
              region,
              participants: encodeParticipantRows(rows),
              plot: plotText,
            });
            const text = `${back.participants}${back.plot ?? ""}`;
            expect(texts.ascii).toBe(Buffer.byteLength(text, "utf8") === text.length);
            kinds.add(texts.ascii);
            expect(texts.bytes.byteLength).toBe(Buffer.byteLength(text, "utf8"));
          }
          cases++;
        });
      }
    expect(cases).toBeGreaterThan(10);
    expect([...kinds].sort()).toEqual([false, true]);
  });

  it("hold the nulls the cases above were chosen for", () => {
    const all = [
      ...handedOn({ kind: "association", predictor: "accuracy", covariates: ["age"] }),
      ...handedOn(twoGroupsBySite),
      ...handedOn({ kind: "one-sample" }),
    ].flatMap((rows) => rows.rows());
    const some = (test: (p: ParticipantDiagnostics) => boolean) => all.some(test);
    expect(some((p) => p.leverage === 1 && p.dfbetas === null)).toBe(true);
    expect(
      some((p) => p.studentizedResidual === null && p.internalStudentizedResidual !== null),
    ).toBe(true);
    expect(some((p) => p.mahalanobis === null)).toBe(true);
    expect(some((p) => p.flags.includes("outlier"))).toBe(true);
  });

  it("an empty region stores as no rows", () => {
    expect(encodeParticipantRows(objectRows("r", []))).toBe(encodeRegionRows([]));
  });

  it("a number that is not finite is named by row and field", () => {
    // y = 1 + x + e on five participants, then one fitted value broken on purpose.
    const x = Float64Array.from([1, 1, 1, 2, 1, 3, 1, 4, 1, 5]);
    const y = Float64Array.from([2.1, 2.9, 4.2, 4.8, 6.1]);
    const qr = qrDecompose(x, 5, 2, ["(intercept)", "x"]);
    const fit = solveLinearModel(qr, y);
    const fitted = Float64Array.from(fit.fitted);
    const residual = Float64Array.from(fit.residuals);
    const rows = diagnosedRows({
      region: "r",
      ids: ["a", "b", "c", "d", "e"],
      positions: [0, 1, 2, 3, 4],
      diagnostics: regressionDiagnosticColumns(qr, fit, { interceptColumn: 0 }),
      coefficientNames: ["(intercept)", "x"],
      value: y,
      fitted,
      residual,
    });
    const firstBad = () => {
      try {
        assertFiniteRows(rows, "rows");
        return null;
      } catch (e) {
        return (e as Error).message.replace(
          "internal: the fit produced a non-finite number at ",
          "",
        );
      }
    };
    expect(firstBad()).toBeNull();
    // The earliest row first, then the first field in a row's order (fitted before residual).
    fitted[3] = Number.POSITIVE_INFINITY;
    expect(firstBad()).toBe("rows[3].fitted");
    residual[3] = Number.NaN;
    expect(firstBad()).toBe("rows[3].fitted");
    residual[1] = Number.NEGATIVE_INFINITY;
    expect(firstBad()).toBe("rows[1].residual");
  });
});
