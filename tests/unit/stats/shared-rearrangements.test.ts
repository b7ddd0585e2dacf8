/**
 * The shared draw for regions that differ in participants, at the level of
 * the permutation functions: blocks of regions on the same participants,
 * the one-region path against the batched path, the rule of the induced
 * rearrangement, and refusals. Statistics are checked against plain
 * least-squares refits (resampling-reference.ts) on the same draws; the
 * method is Freedman & Lane (1983) and sign flipping (Winkler et al. 2014,
 * NeuroImage 92:381–397) under one rearrangement for all regions (Westfall
 * & Young 1993, single-step max-T).
 */
import { describe, expect, it } from "vitest";
import { sharedGenericPermutationTest } from "../../../server/stats/generic-permutation";
import {
  linearPermutationTest,
  sharedLinearPermutationTest,
} from "../../../server/stats/permutation";
import {
  createSharedRearranger,
  memberPositions,
  regionSigns,
  regionSources,
} from "../../../server/stats/rearrangements";
import { createRng, normalDraw } from "../../../server/stats/rng";
import { naiveOls } from "./resampling-reference";

const N = 10;
const rng = createRng(31);
const covariate = Array.from({ length: N }, () => normalDraw(rng));
const trait = Array.from({ length: N }, () => normalDraw(rng));
const values = Array.from({ length: 3 }, () =>
  Array.from({ length: N }, (_, i) => 0.5 * trait[i] + 0.3 * covariate[i] + normalDraw(rng)),
);

/** A block: the participants `members` (positions among the N), design [1, trait, covariate], tested column 1. */
function block(members: number[], regions: number[]) {
  return {
    design: Float64Array.from(members.flatMap((i) => [1, trait[i], covariate[i]])),
    n: members.length,
    p: 3,
    tested: 1,
    y: regions.map((r) => Float64Array.from(members, (i) => values[r][i])),
    members: Int32Array.from(members),
  };
}

const all = Array.from({ length: N }, (_, i) => i);
const withoutTwo = all.filter((i) => i !== 2);
const withoutFourSeven = all.filter((i) => i !== 4 && i !== 7);

describe("createSharedRearranger and the region rule", () => {
  it("σ is the inverse of the walk's order, and a region keeps its own entries of σ in σ's order", () => {
    const walk = createSharedRearranger({
      kind: "permutations",
      n: 5,
      resamples: 10,
      rng: createRng(3),
    });
    walk.next();
    expect(Array.from(walk.sigma)).toEqual([0, 1, 2, 3, 4]); // the identity comes first
    walk.next();
    for (let i = 0; i < 5; i++) expect(walk.sigma[walk.order[i]]).toBe(i);
    // σ = (3, 0, 4, 1, 2), region {0, 2, 3}: entries of σ in the region, in order: 3, 0, 2 → participant 0 gets 3's, 2 gets 0's, 3 gets 2's.
    const from = new Int32Array(3);
    regionSources(
      Int32Array.from([3, 0, 4, 1, 2]),
      memberPositions(5, Int32Array.from([0, 2, 3])),
      from,
    );
    expect(Array.from(from)).toEqual([2, 0, 1]); // positions in the region: 3 is its third, 0 its first, 2 its second (the rule, worked by hand)
    const signs = new Float64Array(3);
    regionSigns(Float64Array.from([1, -1, -1, 1, -1]), Int32Array.from([1, 3, 4]), signs);
    expect(Array.from(signs)).toEqual([-1, 1, -1]);
  });

  it("refuses participant positions that are not increasing or out of range", () => {
    expect(() => memberPositions(5, Int32Array.from([0, 3, 2]))).toThrow(
      /increasing participant positions/,
    );
    expect(() => memberPositions(5, Int32Array.from([0, 5]))).toThrow(/between 0 and 4/);
  });
});

describe("sharedLinearPermutationTest", () => {
  const base = { participants: N, resamples: 200, maxT: true, keepNull: true };

  it("each region's rearranged t equals a plain refit under the rule, for one-region and batched blocks", () => {
    for (const scheme of ["freedman-lane", "sign-flip"] as const) {
      const res = sharedLinearPermutationTest({
        ...base,
        scheme,
        rng: createRng(9),
        blocks: [block(all, [0]), block(withoutTwo, [1, 2]), block(withoutFourSeven, [2])],
      });
      const walk = createSharedRearranger({
        kind: scheme === "sign-flip" ? "signs" : "permutations",
        n: N,
        resamples: 200,
        rng: createRng(9),
      });
      const regions = [
        { members: all, r: 0 },
        { members: withoutTwo, r: 1 },
        { members: withoutTwo, r: 2 },
        { members: withoutFourSeven, r: 2 },
      ];
      for (let k = 0; k < res.rearrangements; k++) {
        walk.next();
        regions.forEach(({ members, r }, idx) => {
          const x = members.map((i) => [1, trait[i], covariate[i]]);
          const y = members.map((i) => values[r][i]);
          const reduced = naiveOls(
            x.map((row) => [row[0], row[2]]),
            y,
          );
          const own = Array.from(walk.sigma).filter((u) => members.includes(u));
          const ystar = members.map((i, j) =>
            scheme === "sign-flip"
              ? reduced.fitted[j] + walk.signs[i] * reduced.residuals[j]
              : reduced.fitted[j] + reduced.residuals[members.indexOf(own[j])],
          );
          expect(res.nullStatistics?.[idx][k]).toBeCloseTo(naiveOls(x, ystar).t[1], 4); // (plain refit; the null is kept as float32)
        });
      }
      expect(res.exact).toBe(false);
      expect(res.rearrangements).toBe(201);
    }
  });

  it("regions on the same participants see the same rearrangement, in one block or in two", () => {
    const together = sharedLinearPermutationTest({
      ...base,
      scheme: "freedman-lane",
      rng: createRng(4),
      blocks: [block(all, [0]), block(withoutTwo, [1, 2])],
    });
    const apart = sharedLinearPermutationTest({
      ...base,
      scheme: "freedman-lane",
      rng: createRng(4),
      blocks: [block(all, [0]), block(withoutTwo, [1]), block(withoutTwo, [2])],
    });
    expect(Array.from(apart.p)).toEqual(Array.from(together.p));
    expect(Array.from(apart.pMaxT ?? [])).toEqual(Array.from(together.pMaxT ?? []));
    for (let r = 0; r < 3; r++) {
      const a = apart.nullStatistics?.[r] as Float32Array;
      const b = together.nullStatistics?.[r] as Float32Array;
      for (let k = 0; k < a.length; k++) expect(a[k]).toBeCloseTo(b[k], 5);
    }
  });

  it("one block with every participant gives exactly the single-design test, two-group label assignments included", () => {
    const group = all.map((i) => (i % 3 === 0 ? 1 : 0)); // participants 0, 3, 6 and 9 in the first group
    const design = Float64Array.from(all.flatMap((i) => [1, group[i]]));
    const y = [Float64Array.from(values[0]), Float64Array.from(values[1])];
    for (const resamples of [200, 1000]) {
      const input = {
        ...base,
        resamples,
        scheme: "freedman-lane" as const,
        blocks: [{ design, n: N, p: 2, tested: 1, y, members: Int32Array.from(all) }],
      };
      const shared = sharedLinearPermutationTest({ ...input, rng: createRng(2) });
      const single = linearPermutationTest({
        ...input,
        design,
        n: N,
        p: 2,
        tested: 1,
        y,
        rng: createRng(2),
      });
      expect(Array.from(shared.p)).toEqual(Array.from(single.p));
      expect(Array.from(shared.pMaxT ?? [])).toEqual(Array.from(single.pMaxT ?? []));
      expect(shared.rearrangements).toBe(single.rearrangements);
    }
    const exact = sharedLinearPermutationTest({
      ...base,
      resamples: 1000,
      scheme: "freedman-lane",
      rng: createRng(2),
      blocks: [{ design, n: N, p: 2, tested: 1, y, members: Int32Array.from(all) }],
    });
    expect(exact.exact).toBe(true);
    expect(exact.rearrangements).toBe(210); // C(10, 4) label assignments (common practice, no source)
  });

  it("refuses a participant in no block and members that do not match the design", () => {
    const run =
      (blocks: ReturnType<typeof block>[], participants = N) =>
      () =>
        sharedLinearPermutationTest({
          ...base,
          participants,
          scheme: "freedman-lane",
          rng: createRng(1),
          blocks,
        });
    expect(run([block(withoutTwo, [0])])).toThrow(
      /every participant to belong to a region \(participant 2 is in none\)/,
    );
    expect(run([{ ...block(all, [0]), members: Int32Array.from(withoutTwo) }])).toThrow(
      /members to list the block's n = 10 participants/,
    );
    expect(() =>
      sharedLinearPermutationTest({
        ...base,
        scheme: "freedman-lane",
        rng: createRng(1),
        blocks: [{ ...block(all, [0]), label: "left insula", tested: 7 }],
      }),
    ).toThrow(/^region 'left insula': linearPermutationTest requires tested/);
  });
});

describe("sharedGenericPermutationTest", () => {
  it("gives each region the values of its own participants under the rule, through its slots", () => {
    // Region A: all 6 participants; region B: participants 1, 2, 4, 5 with slots listing 4 and 1 first (a "first group").
    const seen: number[][][] = [[], []];
    const record = (r: number) => (order: Int32Array) => {
      seen[r].push(Array.from(order));
      return 1;
    };
    const res = sharedGenericPermutationTest({
      participants: 6,
      scheme: "labels",
      resamples: 20,
      rng: createRng(5),
      regions: [
        { members: Int32Array.from([0, 1, 2, 3, 4, 5]), statistic: record(0) },
        {
          members: Int32Array.from([1, 2, 4, 5]),
          slots: Int32Array.from([2, 0, 1, 3]),
          statistic: record(1),
        },
      ],
    });
    expect(res.rearrangements).toBe(21);
    const walk = createSharedRearranger({
      kind: "permutations",
      n: 6,
      resamples: 20,
      rng: createRng(5),
    });
    for (let k = 0; k < 21; k++) {
      walk.next();
      const sigma = Array.from(walk.sigma);
      expect(seen[0][k]).toEqual(sigma); // participant k receives the value of σ_k
      // Region B: participant a_j receives the value of c_j; slot s stands for participant members[slots[s]].
      const members = [1, 2, 4, 5];
      const slots = [2, 0, 1, 3];
      const c = sigma.filter((u) => members.includes(u));
      const expected = slots.map((j) => slots.indexOf(members.indexOf(c[j])));
      expect(seen[1][k]).toEqual(expected);
    }
  });

  it("names the region when its statistic fails", () => {
    expect(() =>
      sharedGenericPermutationTest({
        participants: 4,
        scheme: "sign-flip",
        resamples: 10,
        rng: createRng(1),
        regions: [
          { members: Int32Array.from([0, 1, 2, 3]), statistic: () => 1 },
          { members: Int32Array.from([1, 2]), statistic: () => Number.NaN, label: "precuneus" },
        ],
      }),
    ).toThrow(
      /^region 'precuneus': genericPermutationTest requires the statistic to return a number/,
    );
  });
});
