/**
 * A prediction fit's figures without a database: which are listed for
 * whom, the 403 for observed-predicted to a caller who may not see
 * participants, the 422 for a weights PNG taller than the cap, and the
 * writer's SVG — well-formed after text becomes outlines, one mark per
 * participant, one row per region in the screen's order. Inputs are
 * invented.
 */
import { describe, expect, it } from "vitest";
import { weightRows } from "../../../components/fit/prediction-layout";
import type { PredictionBlock } from "../../../contract/prediction";
import type { Queryable } from "../../../db/client";
import type { Fit } from "../../../db/schema";
import {
  learningCurveFigure,
  observedPredictedFigure,
  type RawFigure,
  svgDocument,
  weightsFigure,
} from "../../../server/figures/figure-svg";
import { outlineSvg } from "../../../server/figures/outline";
import { HttpError } from "../../../server/http/errors";
import { figureCaption, figurePng, listFigures } from "../../../server/services/fit-figures";
import { parseXml } from "./xml-check";

const noDb = null as unknown as Queryable;

function blockOf(regions: number, learningCurve = true): PredictionBlock {
  return {
    folds: 5,
    repeats: 2,
    seed: 1,
    lambdaChoice: "fixed",
    r: 0.3,
    r2: 0.08,
    mae: 4.2,
    spread: { r: 0.02, r2: 0.01, mae: 0.1 },
    perRepeat: [],
    participants: Array.from({ length: 17 }, (_, i) => ({
      participant: `sub-${i}`,
      observed: i,
      predicted: i / 2 + 3,
    })),
    regions: Array.from({ length: regions }, (_, i) => ({
      region: `R${i}`,
      weight: Math.sin(i + 1) / 3,
      signConsistency: 0.5 + (i % 6) / 10,
    })),
    lambdas: [{ repeat: 1, fold: 1, lambda: 1 }],
    permutation: null,
    learningCurve: learningCurve
      ? [
          { fraction: 0.5, trainingRows: 7, r: 0.1, r2: 0.01, rSpread: 0.05, r2Spread: 0.02 },
          { fraction: 1, trainingRows: 13, r: 0.3, r2: 0.08, rSpread: 0.03, r2Spread: 0.01 },
        ]
      : null,
  } as unknown as PredictionBlock;
}

function fitOf(block: PredictionBlock): Fit {
  return {
    id: "00000000-0000-4000-8000-000000000002",
    status: "done",
    recipe: { kind: "prediction", predictor: "accuracy" },
    result: { regions: [], prediction: block },
  } as unknown as Fit;
}

async function refusal(promise: Promise<unknown>): Promise<HttpError> {
  const error = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(HttpError);
  return error as HttpError;
}

const outlined = (fig: RawFigure, mm = 89) =>
  parseXml(outlineSvg(svgDocument(fig, mm), Object.fromEntries(fig.kept.byId)));

describe("a prediction fit's figure list", () => {
  it("lists observed-predicted, learning curve and weights; without participants two", async () => {
    const fit = fitOf(blockOf(4));
    const all = await listFigures(noDb, fit, { participantsVisible: true });
    expect(all.map((f) => f.name)).toEqual(["observed-predicted", "learning-curve", "weights"]);
    const withheld = await listFigures(noDb, fit, { participantsVisible: false });
    expect(withheld.map((f) => f.name)).toEqual(["learning-curve", "weights"]);
    const noCurve = await listFigures(noDb, fitOf(blockOf(4, false)), {
      participantsVisible: true,
    });
    expect(noCurve.map((f) => f.name)).toEqual(["observed-predicted", "weights"]);
  });

  it("403 for observed-predicted without participants, 422 for a weights PNG of 500 regions", async () => {
    const small = fitOf(blockOf(4));
    expect(
      (
        await refusal(
          figurePng(noDb, small, "observed-predicted", { participantsVisible: false }, 89),
        )
      ).status,
    ).toBe(403);
    expect(
      (await refusal(figurePng(noDb, small, "forest", { participantsVisible: true }, 89))).status,
    ).toBe(404);
    const error = await refusal(
      figurePng(noDb, fitOf(blockOf(500)), "weights", { participantsVisible: true }, 89),
    );
    expect(error.status).toBe(422);
    expect(error.code).toBe("figure_too_large");
  });
});

describe("the prediction figures' captions", () => {
  it("name N, the folds and repeats, and the caution on weights", async () => {
    const fit = fitOf(blockOf(4));
    const access = { participantsVisible: true };
    for (const name of ["observed-predicted", "learning-curve", "weights"]) {
      const text = await figureCaption(noDb, fit, name, access);
      expect(text, name).toContain(
        "Cross-validation of N = 17 participants: 2 repeats of 5-fold cross-validation",
      );
    }
    expect(await figureCaption(noDb, fit, "learning-curve", access)).toContain(
      "7 (50%), 13 (100%) training rows",
    );
    expect(await figureCaption(noDb, fit, "weights", access)).toContain("Haufe et al. 2014");
  });
});

describe("the prediction figures' SVG", () => {
  const block = blockOf(6);

  it("observed-predicted: one mark per participant, no participant id", () => {
    const els = outlined(
      observedPredictedFigure(
        { participants: block.participants, trait: "accuracy", confounds: ["age"] },
        "Observed and predicted",
        360,
      ),
    );
    expect(els.some((e) => e.name === "text")).toBe(false);
    const marks = els.filter((e) => e.attrs.class === "participant-mark");
    expect(marks).toHaveLength(17); // (exact enumeration: one per participant)
    expect(JSON.stringify(els)).not.toContain("sub-");
    expect(els.find((e) => e.name === "desc")?.text).toContain("17 held-out participants");
  });

  it("weights: one row per region from the most positive to the most negative", () => {
    const rows = weightRows(block.regions, null).rows;
    const els = outlined(weightsFigure(rows, "Region weights", 740), 183);
    const drawn = els.filter((e) => e.attrs.class === "weight-row");
    expect(drawn.map((e) => e.attrs["data-region"])).toEqual(
      [...block.regions].sort((a, b) => b.weight - a.weight).map((r) => r.region),
    );
    expect(els.some((e) => e.name === "text")).toBe(false);
  });

  it("learning curve: a drawing with its legend and description", () => {
    const fig = learningCurveFigure(block.learningCurve ?? [], "Learning curve", 360);
    expect(fig.height).toBeGreaterThan(240); // the 360 × 240 plot and its legend under it
    const els = outlined(fig);
    expect(els.find((e) => e.name === "desc")?.text).toContain("13 rows: r 0.30");
  });
});
