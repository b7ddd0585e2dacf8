import { describe, expect, it } from "vitest";
import {
  countRearrangementChunk,
  REARRANGEMENT_BLOCK,
  rearrangementBlocks,
} from "../../../server/stats/permutation-kernel";
import {
  linearPermutationTest,
  mergeRearrangementChunks,
  prepareSharedLinearPermutation,
  type RearrangementChunk,
  sharedLinearPermutationTest,
} from "../../../server/stats/permutation";
import {
  createBlockRng,
  createRng,
  jumpState,
  normalDraw,
  rngOfState,
  seedState,
  stepState,
} from "../../../server/stats/rng";

/** The raw 32-bit outputs of a generator (next() is the output ÷ 2^32, exactly). */
function outputs(rng: { next(): number }, count: number): number[] {
  return Array.from({ length: count }, () => rng.next() * 4294967296);
}

/** The 128 × 128 matrix over GF(2) of a linear map on states, column by column. */
type Gf2Matrix = Uint32Array[];

function columnsOf(map: (s: Uint32Array) => void): Gf2Matrix {
  return Array.from({ length: 128 }, (_, bit) => {
    const s = new Uint32Array(4);
    s[bit >>> 5] = 1 << (bit & 31);
    map(s);
    return s;
  });
}

function apply(m: Gf2Matrix, v: Uint32Array): Uint32Array {
  const out = new Uint32Array(4);
  for (let bit = 0; bit < 128; bit++) {
    if ((v[bit >>> 5] >>> (bit & 31)) & 1) for (let w = 0; w < 4; w++) out[w] ^= m[bit][w];
  }
  return out;
}

describe("rearrangement streams: xoshiro128** and its jump", () => {
  it("draws the reference generator's outputs from the state (1, 2, 3, 4)", () => {
    // First ten outputs of xoshiro128** 1.1 (Blackman & Vigna, reference xoshiro128starstar.c,
    // which scrambles s[1]) from the state [1, 2, 3, 4], the known-answer vector of the Rust crate
    // rand_xoshiro's Xoshiro128StarStar test. (Version 1.0 scrambled s[0]: 5760, 40320, ….)
    expect(outputs(rngOfState(Uint32Array.of(1, 2, 3, 4), 0), 10)).toEqual([
      11520, 0, 5927040, 70819200, 2031721883, 1637235492, 1287239034, 3734860849, 3729100597,
      4258142804,
    ]);
  });

  it("draws bounded integers and shuffles exactly as rejection with a remainder and Fisher–Yates do", () => {
    // The definitions (common practice, no source beyond Durstenfeld 1964, CACM 7:420 for the
    // shuffle): reject 32-bit outputs x ≥ 2^32 − (2^32 mod n), return x mod n; the shuffle swaps
    // a[i] with a[int(i + 1)] for i = n − 1 … 1. The generator's int takes one exact
    // floating-point quotient instead; the draws must be the same, bound for bound, near 2^32 too.
    const textbookInt = (raw: () => number, n: number): number => {
      const limit = 4294967296 - (4294967296 % n);
      let x = raw();
      while (x >= limit) x = raw();
      return x % n;
    };
    const bounds = [1, 2, 3, 7, 500, 2000, 65536, 1e6, 2 ** 31 - 1, 2 ** 31, 2 ** 31 + 1, 3e9];
    for (const seed of [1, 99, 123456789]) {
      const raw = rngOfState(seedState(seed), seed);
      const rawOutput = () => raw.next() * 4294967296;
      const rng = createRng(seed);
      for (let k = 0; k < 20000; k++) {
        const n = k % 4 === 0 ? bounds[k % bounds.length] : 1 + ((k * 7919) % 50000);
        expect(rng.int(n)).toBe(textbookInt(rawOutput, n));
      }
      expect(rng.int(2 ** 32)).toBe(rawOutput());
      for (const length of [0, 1, 2, 5, 2001]) {
        const expected = Int32Array.from({ length }, (_, i) => i);
        for (let i = length - 1; i > 0; i--) {
          const j = textbookInt(rawOutput, i + 1);
          [expected[i], expected[j]] = [expected[j], expected[i]];
        }
        const shuffled = Int32Array.from({ length }, (_, i) => i);
        rng.shuffle(shuffled);
        expect(Array.from(shuffled)).toEqual(Array.from(expected));
      }
      // Both left the generator at the same place.
      expect(rng.next() * 4294967296).toBe(rawOutput());
    }
  });

  it("steps the state as the generator does", () => {
    const s = seedState(42);
    const rng = rngOfState(s, 42);
    for (let k = 0; k < 100; k++) {
      const expected = rngOfState(s, 42).next();
      expect(rng.next()).toBe(expected);
      stepState(s);
    }
  });

  it("jumps exactly 2^64 draws ahead (the transition matrix raised to 2^64, exact check)", () => {
    // The state update is linear over GF(2): its matrix T, squared 64 times, is T^(2^64).
    let power = columnsOf(stepState);
    for (let i = 0; i < 64; i++) {
      const p = power;
      power = p.map((column) => apply(p, column));
    }
    for (const seed of [1, 7, 2 ** 31 - 1]) {
      const s = seedState(seed);
      const expected = apply(power, s);
      jumpState(s);
      expect(Array.from(s)).toEqual(Array.from(expected));
    }
  });

  it("block 0 is the seed's own generator; later blocks start from jumped states", () => {
    const a = createRng(9);
    const b = createBlockRng(9, 0);
    expect(outputs(b, 1000)).toEqual(outputs(a, 1000));
    const s = seedState(9);
    jumpState(s);
    jumpState(s);
    expect(outputs(createBlockRng(9, 2), 20)).toEqual(outputs(rngOfState(s, 9), 20));
  });

  it("gives no two blocks of a seed the same start state (blocks 0…2,000)", () => {
    // Distinct states follow from the jump (block starts are 2^64 draws apart on a period of
    // 2^128 − 1); checked directly here.
    const seen = new Set<string>();
    const s = seedState(3);
    for (let b = 0; b <= 2000; b++) {
      seen.add(Array.from(s).join(","));
      jumpState(s);
    }
    expect(seen.size).toBe(2001);
  });

  it("refuses a block number that is not a whole number of at least 0", () => {
    expect(() => createBlockRng(1, -1)).toThrow(/whole block number/);
    expect(() => createBlockRng(1, 1.5)).toThrow(/whole block number/);
  });
});

function makeCase(seed: number, n: number, regions: number) {
  const rng = createRng(seed);
  const rows = Array.from({ length: n }, () => [1, normalDraw(rng), normalDraw(rng)]);
  const design = Float64Array.from(rows.flat());
  const y = Array.from({ length: regions }, (_, r) =>
    Float64Array.from(rows.map((row) => 0.3 * r * row[2] + row[1] + normalDraw(rng))),
  );
  return { design, n, p: 3, tested: 2, y };
}

describe("rearrangement blocks", () => {
  it("cuts a test into the identity plus blocks of REARRANGEMENT_BLOCK", () => {
    expect(REARRANGEMENT_BLOCK).toBe(500);
    expect(rearrangementBlocks(10_001)).toHaveLength(20);
    expect(rearrangementBlocks(10_001)[0]).toEqual({ first: 0, count: 501 });
    expect(rearrangementBlocks(10_001)[19]).toEqual({ first: 9501, count: 500 });
    expect(rearrangementBlocks(700)).toEqual([
      { first: 0, count: 501 },
      { first: 501, count: 199 },
    ]);
  });

  const input = {
    ...makeCase(11, 40, 9),
    scheme: "freedman-lane" as const,
    resamples: 1700,
    maxT: true,
    keepNull: true,
  };

  it("merges chunks in any order to the same numbers", () => {
    const whole = linearPermutationTest({ ...input, rng: createRng(5), streams: "blocks-v1" });
    const setup = prepareSharedLinearPermutation({
      ...input,
      participants: input.n,
      blocks: [{ ...input, members: Int32Array.from({ length: input.n }, (_, i) => i) }],
    });
    const slices: [number, number][] = [
      [0, 2],
      [2, 7],
      [7, 9],
    ];
    const chunks: RearrangementChunk[] = [];
    for (const [from, to] of slices) {
      const block = setup.blocks[0];
      const n = block.plan.n;
      const sliced = {
        ...block,
        residuals: block.residuals.slice(from * n, to * n),
        residualSquares: block.residualSquares.slice(from, to),
        observed: block.observed.slice(from, to),
      };
      for (let b = 0; b < 4; b++) {
        chunks.push({
          regionFrom: from,
          block: b,
          counts: countRearrangementChunk({
            draw: setup.draw,
            blocks: [sliced],
            seed: 5,
            block: b,
            maxT: true,
            keepNull: true,
          }),
        });
      }
    }
    const order = createRng(77);
    for (let round = 0; round < 3; round++) {
      const shuffled = [...chunks];
      for (let i = shuffled.length - 1; i > 0; i--) {
        const j = order.int(i + 1);
        [shuffled[i], shuffled[j]] = [shuffled[j], shuffled[i]];
      }
      const merged = mergeRearrangementChunks(setup.observed, setup.draw, shuffled, {
        maxT: true,
        keepNull: true,
      });
      expect(merged).toEqual(whole);
    }
    expect(whole.rearrangements).toBe(1701);
    expect(() =>
      mergeRearrangementChunks(setup.observed, setup.draw, [...chunks, chunks[3]], {
        maxT: true,
        keepNull: true,
      }),
    ).toThrow(/twice/);
    expect(() =>
      mergeRearrangementChunks(setup.observed, setup.draw, chunks.slice(1), {
        maxT: true,
        keepNull: true,
      }),
    ).toThrow(/missing region 0 of block 0/);
  });

  it("keeps the one-stream numbers when no stream scheme is named", () => {
    const single = linearPermutationTest({ ...input, rng: createRng(5) });
    const blocked = linearPermutationTest({ ...input, rng: createRng(5), streams: "blocks-v1" });
    // Block 0 is the one stream's start: the first 501 rearrangements agree, the later ones differ.
    const nulls = single.nullStatistics as Float32Array[];
    const blockedNulls = blocked.nullStatistics as Float32Array[];
    expect(blockedNulls[0].subarray(0, 501)).toEqual(nulls[0].subarray(0, 501));
    expect(blockedNulls[0].subarray(501)).not.toEqual(nulls[0].subarray(501));
  });

  it("enumerates in blocks to exactly the one-walk enumeration", () => {
    // 8! = 40,320 orders (Freedman–Lane) and 2^10 sign vectors: both listed in full.
    for (const [scheme, n, resamples] of [
      ["freedman-lane", 8, 50_000],
      ["sign-flip", 10, 2_000],
    ] as const) {
      const exactInput = { ...makeCase(3, n, 4), scheme, resamples, maxT: true, keepNull: false };
      const one = linearPermutationTest({ ...exactInput, rng: createRng(1) });
      const blocked = linearPermutationTest({
        ...exactInput,
        rng: createRng(1),
        streams: "blocks-v1",
      });
      expect(one.exact).toBe(true);
      expect(blocked).toEqual(one);
    }
  });

  it("agrees with exact enumeration within Monte Carlo error (8! orders listed)", () => {
    // Outside reference: exact enumeration of all 8! = 40,320 Freedman–Lane orders. The
    // blocked Monte Carlo p of m = 4,000 draws lies within 4 binomial standard errors
    // (plus the 1/(m + 1) of the identity) of the enumerated p.
    const base = { ...makeCase(21, 8, 6), scheme: "freedman-lane" as const, maxT: true };
    const exact = linearPermutationTest({ ...base, resamples: 50_000, rng: createRng(1) });
    expect(exact.exact).toBe(true);
    const m = 4000;
    const blocked = sharedLinearPermutationTest({
      participants: 8,
      blocks: [{ ...base, members: Int32Array.from({ length: 8 }, (_, i) => i) }],
      scheme: "freedman-lane",
      resamples: m,
      maxT: true,
      rng: createRng(123),
      streams: "blocks-v1",
    });
    expect(blocked.exact).toBe(false);
    expect(blocked.rearrangements).toBe(m + 1);
    const pMaxT = blocked.pMaxT as Float64Array;
    const exactMaxT = exact.pMaxT as Float64Array;
    for (let r = 0; r < 6; r++) {
      for (const [q, e] of [
        [blocked.p[r], exact.p[r]],
        [pMaxT[r], exactMaxT[r]],
      ]) {
        const se = Math.sqrt((e * (1 - e)) / m);
        expect(Math.abs(q - e)).toBeLessThanOrEqual(4 * se + 1 / (m + 1));
      }
    }
  });
});
