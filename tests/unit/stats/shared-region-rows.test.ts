/**
 * Regions on the same participants share one array of rows and one design
 * (prepare.ts `eligibleRows`, estimate.ts `designFor`): at biobank size a
 * fit's preparation built 400 identical designs. Checked here: the rows of
 * every region against a plain filter written in the test (set-asides, a
 * region's missing value, an incomplete covariate, a group outside the
 * model's two levels), the sharing itself, a shared design equal to one
 * built afresh, a copy of a prepared fit computing its own rows, and a
 * weighted fit still refusing a value without a standard error before any
 * other reason to leave the participant out.
 */
import { describe, expect, it } from "vitest";
import { type FitData, modelSpecSchema } from "../../../contract/spec";
import { designFor } from "../../../server/stats/fit/estimate";
import { isSharedRows, prepare, regionRows } from "../../../server/stats/fit/prepare";
import { StatsError } from "../../../server/stats/errors";

const N = 14;
const participants = Array.from({ length: N }, (_, i) => `sub-${String(i + 1).padStart(2, "0")}`);

function data(): FitData {
  const values = [0, 1, 2, 3].map((r) =>
    Float64Array.from({ length: N }, (_, i) => Math.sin(1 + i * (r + 2)) + 0.1 * r),
  );
  values[2][4] = Number.NaN; // region_c: participant 5 has no value
  return {
    participants,
    regions: ["region_a", "region_b", "region_c", "region_d"],
    values,
    standardErrors: values.map((v) => Float64Array.from(v, (_, i) => 0.2 + i / 100)),
    numericColumns: {
      age: participants.map((_, i) => (i === 6 ? null : 20 + ((i * 7) % 23))),
    },
    categoricalColumns: {
      site: participants.map((_, i) => (i === 11 ? "east" : i % 2 === 0 ? "north" : "south")),
    },
  };
}

const spec = modelSpecSchema.parse({
  kind: "two-group",
  group: "site",
  levels: ["north", "south"],
  covariates: ["age"],
  // participant 2 from every region, participant 9 from region_d only
  setAside: [
    { participant: "sub-02", reason: "motion" },
    { participant: "sub-09", region: "region_d", reason: "artefact" },
  ],
});

/** The rows by their definition: not set aside, a value, a level of the two, a complete covariate. */
function expectedRows(d: FitData, r: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < N; i++) {
    if (i === 1 || (r === 3 && i === 8)) continue;
    if (!Number.isFinite(d.values[r][i])) continue;
    const site = d.categoricalColumns.site[i];
    if (site !== "north" && site !== "south") continue;
    if (d.numericColumns.age[i] === null) continue;
    out.push(i);
  }
  return out;
}

describe("rows and designs shared by regions on the same participants", () => {
  it("gives every region its participants, as the plain filter does", () => {
    const d = data();
    const prep = prepare(spec, d);
    for (let r = 0; r < 4; r++) expect([...regionRows(prep, r)]).toEqual(expectedRows(d, r));
  });

  it("shares one frozen array between regions that keep every eligible participant", () => {
    const prep = prepare(spec, data());
    const a = regionRows(prep, 0);
    const b = regionRows(prep, 1);
    expect(b).toBe(a);
    expect(isSharedRows(prep, a)).toBe(true);
    expect(Object.isFrozen(a)).toBe(true);
    // A region with a missing value, or a participant set aside there, has its own.
    expect(isSharedRows(prep, regionRows(prep, 2))).toBe(false);
    expect(isSharedRows(prep, regionRows(prep, 3))).toBe(false);
  });

  it("shares the design of shared rows, equal to one built afresh", () => {
    const prep = prepare(spec, data());
    const rows = regionRows(prep, 0);
    const shared = designFor(prep, rows);
    expect(designFor(prep, regionRows(prep, 1))).toBe(shared);
    const fresh = designFor(prep, [...rows]);
    expect(fresh).not.toBe(shared);
    expect(fresh).toEqual(shared);
  });

  it("computes a copied prepared fit's rows for the copy", () => {
    const d = data();
    const prep = prepare(spec, d);
    const withoutCovariate = { ...prep, covariates: [] };
    // Participant 7 (no age) is kept once the model has no covariate.
    expect(regionRows(withoutCovariate, 0)).toContain(6);
    expect(regionRows(prep, 0)).not.toContain(6);
  });

  it("still refuses a weighted fit's value without a standard error, whatever else leaves the participant out", () => {
    const d = data();
    // Participant 7 has no age, and no standard error in region_a: the fit is refused, not the participant dropped.
    (d.standardErrors?.[0] as Float64Array)[6] = Number.NaN;
    const prep = prepare(modelSpecSchema.parse({ ...spec, weights: "first-level-se" }), d);
    expect(() => regionRows(prep, 0)).toThrow(StatsError);
    expect(() => regionRows(prep, 0)).toThrow(
      /'sub-07' has a contrast value but no first-level standard error/,
    );
    expect([...regionRows(prep, 1)]).toEqual(expectedRows(d, 1));
  });
});
