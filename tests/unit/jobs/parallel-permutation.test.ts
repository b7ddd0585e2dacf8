import { afterAll, describe, expect, it } from "vitest";
import { createPermutationPool, splitRegions } from "../../../server/jobs/parallel-permutation";
import { StatsError } from "../../../server/stats/errors";
import {
  linearPermutationTest,
  sharedLinearPermutationTest,
} from "../../../server/stats/permutation";
import { createRng, normalDraw } from "../../../server/stats/rng";

describe("splitRegions", () => {
  it("covers every region once in even-sized contiguous blocks", () => {
    expect(splitRegions(7, 2)).toEqual([
      [0, 4],
      [4, 7],
    ]);
    expect(splitRegions(400, 2)).toEqual([
      [0, 200],
      [200, 400],
    ]);
    expect(splitRegions(1, 2)).toEqual([[0, 1]]);
    expect(splitRegions(10, 3)).toEqual([
      [0, 4],
      [4, 8],
      [8, 10],
    ]);
  });
});

describe("parallel linear permutation test", () => {
  const pool = createPermutationPool({ threads: 2 });
  afterAll(() => pool.close());

  const rng = createRng(5);
  const n = 30;
  const p = 4;
  const rows = Array.from({ length: n }, () => [
    1,
    normalDraw(rng),
    normalDraw(rng),
    normalDraw(rng),
  ]);
  const design = Float64Array.from(rows.flat());
  const y = Array.from({ length: 7 }, (_, r) =>
    Float64Array.from(rows.map((row) => 0.2 * r * row[3] + row[1] + normalDraw(rng))),
  );
  const input = {
    design,
    n,
    p,
    tested: 3,
    y,
    scheme: "freedman-lane" as const,
    resamples: 300,
    maxT: true,
    keepNull: true,
  };

  it("returns exactly the single-thread result for the same seed", async () => {
    const seen: number[] = [];
    const parallel = await pool.linearPermutationTest({
      ...input,
      seed: 17,
      onProgress: (f) => seen.push(f),
    });
    const single = linearPermutationTest({ ...input, rng: createRng(17) });
    expect(Array.from(parallel.observed)).toEqual(Array.from(single.observed));
    expect(Array.from(parallel.p)).toEqual(Array.from(single.p));
    expect(Array.from(parallel.pMaxT ?? [])).toEqual(Array.from(single.pMaxT ?? []));
    expect(Array.from(parallel.maxNull ?? [])).toEqual(Array.from(single.maxNull ?? []));
    expect(parallel.nullStatistics?.map((a) => Array.from(a))).toEqual(
      single.nullStatistics?.map((a) => Array.from(a)),
    );
    expect(parallel.rearrangements).toBe(301);
    expect(parallel.exact).toBe(false);
    expect(seen[seen.length - 1]).toBe(1);
  });

  it("stops the workers with code cancelled", async () => {
    const big = { ...input, resamples: 200000, keepNull: false };
    let error: unknown;
    try {
      await pool.linearPermutationTest({ ...big, seed: 1, shouldCancel: () => true });
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(StatsError);
    expect((error as StatsError).code).toBe("cancelled");
  });

  it("regions that differ in participants: exactly the single-thread shared test, blocks split across workers", async () => {
    // Three blocks (every participant; without participant 2; without 4 and 7), seven regions in all.
    const sets = [
      Array.from({ length: n }, (_, i) => i),
      Array.from({ length: n }, (_, i) => i).filter((i) => i !== 2),
      Array.from({ length: n }, (_, i) => i).filter((i) => i !== 4 && i !== 7),
    ];
    const regionsOf = [[0, 1, 2], [3], [4, 5, 6]];
    const blocks = sets.map((members, b) => ({
      design: Float64Array.from(members.flatMap((i) => rows[i])),
      n: members.length,
      p,
      tested: 3,
      y: regionsOf[b].map((r) => Float64Array.from(members, (i) => y[r][i])),
      members: Int32Array.from(members),
    }));
    const shared = {
      participants: n,
      blocks,
      scheme: "freedman-lane" as const,
      resamples: 300,
      maxT: true,
      keepNull: true,
    };
    const parallel = await pool.sharedLinearPermutationTest({ ...shared, seed: 23 });
    const single = sharedLinearPermutationTest({ ...shared, rng: createRng(23) });
    expect(Array.from(parallel.p)).toEqual(Array.from(single.p));
    expect(Array.from(parallel.pMaxT ?? [])).toEqual(Array.from(single.pMaxT ?? []));
    expect(parallel.nullStatistics?.map((a) => Array.from(a))).toEqual(
      single.nullStatistics?.map((a) => Array.from(a)),
    );
  });

  it("validates on the main thread with the same messages", async () => {
    await expect(pool.linearPermutationTest({ ...input, tested: 9, seed: 1 })).rejects.toThrow(
      /tested to be a column index/,
    );
  });

  it("blocked streams: the same numbers on 1, 2 and 3 threads", async () => {
    // 230 regions in three sets of participants (99 with everyone; one region without
    // participant 2; 130 without participant 5): region chunks [0, 100), [100, 200), [200, 230)
    // × 3 rearrangement blocks (1,200 resamples).
    const sets = [
      Array.from({ length: n }, (_, i) => i),
      Array.from({ length: n }, (_, i) => i).filter((i) => i !== 2),
      Array.from({ length: n }, (_, i) => i).filter((i) => i !== 5),
    ];
    const counts = [99, 1, 130];
    const shared = {
      participants: n,
      blocks: sets.map((members, b) => ({
        design: Float64Array.from(members.flatMap((i) => rows[i])),
        n: members.length,
        p,
        tested: 3,
        y: Array.from({ length: counts[b] }, (_, r) =>
          Float64Array.from(members, (i) => y[(r + b) % 7][i] + 0.01 * r * rows[i][2]),
        ),
        members: Int32Array.from(members),
      })),
      scheme: "freedman-lane" as const,
      resamples: 1200,
      maxT: true,
      keepNull: true,
      streams: "blocks-v1" as const,
    };
    const single = sharedLinearPermutationTest({ ...shared, rng: createRng(31) });
    expect(single.rearrangements).toBe(1201);
    const one = createPermutationPool({ threads: 1 });
    const three = createPermutationPool({ threads: 3 });
    try {
      const results = await Promise.all([
        one.sharedLinearPermutationTest({ ...shared, seed: 31 }),
        pool.sharedLinearPermutationTest({ ...shared, seed: 31 }),
        three.sharedLinearPermutationTest({ ...shared, seed: 31 }),
      ]);
      for (const r of results) expect(r).toEqual(single);
    } finally {
      await Promise.all([one.close(), three.close()]);
    }
  }, 60_000);
});
