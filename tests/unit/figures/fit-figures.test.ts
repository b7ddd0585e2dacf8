/**
 * The figures service without a database: which figures a finished fit
 * lists for whom, and its refusals — 409 before the fit is done, 404 for a
 * name that is not the fit's, 403 for a participant figure asked for by a
 * caller who may not see participants, 422 for a PNG taller than the cap
 * (a forest plot of 500 regions). Inputs are invented.
 */
import { describe, expect, it } from "vitest";
import type { Queryable } from "../../../db/client";
import type { Fit } from "../../../db/schema";
import { HttpError } from "../../../server/http/errors";
import { figurePng, listFigures } from "../../../server/services/fit-figures";

const noDb = null as unknown as Queryable;

function fitOf(regions: number, status = "done", extra: Record<string, unknown> = {}): Fit {
  return {
    id: "00000000-0000-4000-8000-000000000001",
    status,
    recipe: { kind: "association", predictor: "accuracy" },
    result:
      status === "done"
        ? {
            regions: Array.from({ length: regions }, (_, i) => ({
              region: `R${i}`,
              n: 40,
              estimate: 0.1,
              se: 0.05,
              statistic: 2,
              df: 38,
              p: 0.05,
              pAdjusted: 0.1,
              ciLow: 0,
              ciHigh: 0.2,
              flagThresholds: { cooksDistance: 0.1, leverage: 0.1, outlierT: 3.5 },
              ...(i === 0 ? { nullHistogram: { edges: [0, 1], counts: [3], observed: 0.5 } } : {}),
              ...extra,
            })),
          }
        : null,
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

describe("listFigures", () => {
  it("lists forest, then each region's scatter, influence and (when kept) null", async () => {
    const names = (await listFigures(noDb, fitOf(2), { participantsVisible: true })).map(
      (f) => f.name,
    );
    expect(names).toEqual([
      "forest",
      "R0-scatter",
      "R0-influence",
      "R0-null",
      "R1-scatter",
      "R1-influence",
    ]);
  });

  it("leaves the participant figures out for a caller who may not see participants", async () => {
    const names = (await listFigures(noDb, fitOf(2), { participantsVisible: false })).map(
      (f) => f.name,
    );
    expect(names).toEqual(["forest", "R0-null"]);
  });

  it("answers 409 before the fit is done", async () => {
    const error = await refusal(
      listFigures(noDb, fitOf(0, "running"), { participantsVisible: true }),
    );
    expect(error.status).toBe(409);
  });
});

describe("variance shares", () => {
  it("a fit weighted by first-level standard errors lists variance-shares after forest", async () => {
    const fit = fitOf(2, "done", { tau2: 0.02, i2: 0.3, noiseShare: 0.7, trueShare: 0.3 });
    (fit as { recipe: Record<string, unknown> }).recipe = {
      kind: "one-sample",
      weights: "first-level-se",
    };
    const list = await listFigures(noDb, fit, { participantsVisible: false });
    expect(list.map((f) => f.name)).toEqual(["forest", "variance-shares", "R0-null"]);
    expect(list[1].regions).toEqual(["R0", "R1"]);
  });
});

describe("figurePng refusals", () => {
  it("404 for an unknown name, 403 for a withheld participant figure", async () => {
    expect(
      (await refusal(figurePng(noDb, fitOf(2), "R9-scatter", { participantsVisible: true }, 89)))
        .status,
    ).toBe(404);
    expect(
      (await refusal(figurePng(noDb, fitOf(2), "R0-scatter", { participantsVisible: false }, 89)))
        .status,
    ).toBe(403);
  });

  it("422 figure_too_large for a forest plot of 500 regions", async () => {
    const error = await refusal(
      figurePng(noDb, fitOf(500), "forest", { participantsVisible: true }, 89),
    );
    expect(error.status).toBe(422);
    expect(error.code).toBe("figure_too_large");
  });
});
