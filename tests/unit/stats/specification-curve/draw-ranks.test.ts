/**
 * The per-draw ranks of a specification curve's rank null draws
 * (drawRanks) against the engine's average ranks of the same values
 * (averageRanks: ties share the mean of their ranks, the textbook
 * mid-rank definition — common practice, no source), ranks and tie-group
 * sizes, on seeded draws with
 * many ties and with rows left out as exclusion rules leave them.
 */
import { describe, expect, it } from "vitest";
import { drawRanks } from "../../../../server/stats/fit/specification-curve";
import { averageRanks } from "../../../../server/stats/ranks";
import { createRng } from "../../../../server/stats/rng";

describe("drawRanks", () => {
  it("equals averageRanks of the values a draw puts on the rows", () => {
    const rng = createRng(23);
    for (let trial = 0; trial < 60; trial++) {
      const total = 5 + (trial % 40);
      // Few distinct values on even trials, so ties are common.
      const trait = Array.from({ length: total }, () =>
        trial % 2 === 0 ? Math.floor(rng.next() * 5) : rng.next(),
      );
      const rows = Int32Array.from({ length: total }, (_, i) => i).filter(
        () => rng.next() < 0.8 || trial % 5 === 0,
      );
      const perm = Int32Array.from({ length: total }, (_, i) => i);
      for (let i = total - 1; i > 0; i--) {
        const j = Math.floor(rng.next() * (i + 1));
        [perm[i], perm[j]] = [perm[j], perm[i]];
      }
      const values = Array.from(rows, (k) => trait[perm[k]]);
      const ranksOf = drawRanks(trait);
      const mid = averageRanks(values);
      const got = ranksOf(perm, rows);
      expect(Array.from(got.ranks), `trial ${trial}`).toEqual(Array.from(mid.ranks));
      expect(got.ties, `trial ${trial}`).toEqual(mid.ties);
      // Written into a caller's array: the same ranks.
      const out = new Float64Array(rows.length);
      ranksOf(perm, rows, out);
      expect(Array.from(out), `trial ${trial}`).toEqual(Array.from(mid.ranks));
    }
  });

  it("hand case: values 3, 1, 3, 2 on all rows → ranks 3.5, 1, 3.5, 2", () => {
    const ranksOf = drawRanks([3, 1, 3, 2]);
    const got = ranksOf(Int32Array.of(0, 1, 2, 3), [0, 1, 2, 3]);
    expect(Array.from(got.ranks)).toEqual([3.5, 1, 3.5, 2]);
    expect(got.ties).toEqual([2]);
  });
});
