/**
 * Seeded pseudo-random generator for every resampling routine.
 *
 * xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number
 * generators"), state seeded by SplitMix32 from one 32-bit integer seed. The
 * sequence depends only on the seed, so a recipe with the same seed gives
 * byte-identical output on every machine. Cost: O(1) per draw. Independent
 * streams for blocks of rearrangements come from the generator's published
 * jump function (`createBlockRng`).
 */
export interface Rng {
  /** Uniform float in [0, 1) with 32 bits of randomness. */
  next(): number;
  /** Uniform integer in [0, n) without modulo bias. Requires 1 ≤ n ≤ 2^32. */
  int(n: number): number;
  /**
   * Shuffles `a` in place by Fisher–Yates in Durstenfeld's form (Durstenfeld
   * 1964, CACM 7:420): for i from a.length − 1 down to 1, swap a[i] with
   * a[int(i + 1)] — the same draws as those calls, in the same order.
   */
  shuffle(a: Int32Array): void;
  /** The seed this generator was created with. */
  readonly seed: number;
}

function splitMix32(state: number): () => number {
  let s = state >>> 0;
  return () => {
    s = (s + 0x9e3779b9) >>> 0;
    let z = s;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
    return (z ^ (z >>> 16)) >>> 0;
  };
}

/** The xoshiro128** state (s0, s1, s2, s3) that `createRng(seed)` starts from. Cost O(1). */
export function seedState(seed: number): Uint32Array {
  if (!Number.isSafeInteger(seed)) throw new RangeError("createRng requires an integer seed");
  const mix = splitMix32(Number(BigInt.asUintN(32, BigInt(seed))));
  const state = Uint32Array.of(mix(), mix(), mix(), mix());
  if ((state[0] | state[1] | state[2] | state[3]) === 0) state[0] = 1;
  return state;
}

/** Creates a generator from an integer seed (any safe integer; reduced mod 2^32). */
export function createRng(seed: number): Rng {
  return rngOfState(seedState(seed), seed);
}

/**
 * Advances a xoshiro128** state by one draw in place (the reference
 * generator's state update, Blackman & Vigna 2018). Cost O(1).
 */
export function stepState(s: Uint32Array): void {
  const t = (s[1] << 9) >>> 0;
  s[2] ^= s[0];
  s[3] ^= s[1];
  s[1] ^= s[2];
  s[0] ^= s[3];
  s[2] ^= t;
  s[3] = rotl(s[3], 11);
}

/** The jump polynomial of xoshiro128** (Blackman & Vigna 2018, xoshiro128starstar.c `jump`). */
const JUMP = [0x8764000b, 0xf542d2d3, 0x6fa035c3, 0x77f2db5b] as const;

/**
 * Moves a xoshiro128** state 2^64 draws ahead in place, by the reference
 * generator's jump function (Blackman & Vigna 2018: "equivalent to 2^64
 * calls to next(); it can be used to generate 2^64 non-overlapping
 * subsequences for parallel computations"). Cost: 128 state updates.
 */
export function jumpState(s: Uint32Array): void {
  const acc = new Uint32Array(4);
  for (const word of JUMP) {
    for (let b = 0; b < 32; b++) {
      if ((word >>> b) & 1) {
        acc[0] ^= s[0];
        acc[1] ^= s[1];
        acc[2] ^= s[2];
        acc[3] ^= s[3];
      }
      stepState(s);
    }
  }
  s.set(acc);
}

/**
 * The generator of rearrangement block `block` of a fit with `seed`
 * (the "blocks-v1" streams): the state of `createRng(seed)` jumped `block`
 * times by `jumpState`, i.e. moved block × 2^64 draws along the one
 * sequence of period 2^128 − 1. Block 0 is `createRng(seed)` itself; block
 * b's draws are those of `createRng(seed)` from draw b·2^64 on, so two
 * blocks share no state unless one of them makes more than 2^64 draws.
 * Cost: 128·block state updates (keep blocks to thousands). Throws
 * RangeError for a block that is not a whole number ≥ 0.
 */
export function createBlockRng(seed: number, block: number): Rng {
  if (!(Number.isSafeInteger(block) && block >= 0))
    throw new RangeError("createBlockRng requires a whole block number of at least 0");
  const state = seedState(seed);
  for (let b = 0; b < block; b++) jumpState(state);
  return rngOfState(state, seed);
}

/** A generator drawing on from the xoshiro128** state `state` (copied). */
export function rngOfState(state: Uint32Array, seed: number): Rng {
  // The state words are kept as signed 32-bit integers (the same bits):
  // unsigned words above 2^31 would not fit V8's small integers, and every
  // update would allocate a number on the heap.
  let a = state[0] | 0;
  let b = state[1] | 0;
  let c = state[2] | 0;
  let d = state[3] | 0;
  const nextUint32 = (): number => {
    const m = Math.imul(b, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = b << 9;
    c ^= a;
    d ^= b;
    b ^= c;
    a ^= d;
    c ^= t;
    d = (d << 11) | (d >>> 21);
    return result;
  };
  return {
    seed,
    next: () => nextUint32() / 4294967296,
    int(n: number): number {
      if (!(n >= 1 && n <= 4294967296 && Number.isInteger(n))) {
        throw new RangeError("Rng.int requires an integer bound between 1 and 2^32");
      }
      // Rejection on the 32-bit draw keeps the result unbiased: a draw x in
      // the last, incomplete run of n below 2^32 ((q + 1)·n > 2^32 for
      // q = ⌊x / n⌋) is drawn again, and the result is x − q·n = x mod n.
      // q comes from one floating-point division, exactly: x / n lies at
      // least 1/n below q + 1, far more than half the spacing of doubles
      // near q + 1 ≤ 2^32 / n + 1, so rounding never reaches q + 1.
      let x: number;
      let q: number;
      do {
        x = nextUint32();
        q = Math.floor(x / n);
      } while ((q + 1) * n > 4294967296);
      return x - q * n;
    },
    shuffle(array: Int32Array): void {
      // int(i + 1) and the state update written out, on the state held in local variables:
      // as calls on the generator's own variables, the draws took about twice as long (a
      // permutation test shuffles its n participants once per rearrangement).
      // tests/unit/stats/rearrangement-streams.test.ts holds both to the same draws.
      let s0 = a;
      let s1 = b;
      let s2 = c;
      let s3 = d;
      for (let i = array.length - 1; i > 0; i--) {
        const n = i + 1;
        let x: number;
        let q: number;
        do {
          const m = Math.imul(s1, 5);
          x = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
          const t = s1 << 9;
          s2 ^= s0;
          s3 ^= s1;
          s1 ^= s2;
          s0 ^= s3;
          s2 ^= t;
          s3 = (s3 << 11) | (s3 >>> 21);
          q = Math.floor(x / n);
        } while ((q + 1) * n > 4294967296);
        const j = x - q * n;
        const held = array[i];
        array[i] = array[j];
        array[j] = held;
      }
      a = s0;
      b = s1;
      c = s2;
      d = s3;
    },
  };
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}

/** How a normal draw keeps the radius uniform u away from 0 (log 0 = −∞). */
export type NormalZeroRule = "redraw" | "complement";

/**
 * A standard normal draw by the Box–Muller transform (Box & Muller 1958):
 * √(−2 ln u)·cos(2πv) from two uniforms, u drawn first. One draw per two
 * uniforms; the sine partner is dropped (normalPairs keeps it).
 * `zero`: "redraw" (default) draws u again while it is 0; "complement" uses
 * 1 − u, which lies in (0, 1] (the seeded demo data's sequence). The two give
 * different sequences for the same seed; each is kept so that seeded files
 * and results stay byte-identical. Cost O(1).
 */
export function normalDraw(rng: Rng, options: { zero?: NormalZeroRule } = {}): number {
  let u: number;
  if (options.zero === "complement") u = 1 - rng.next();
  else {
    u = rng.next();
    while (u === 0) u = rng.next();
  }
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng.next());
}

/**
 * Standard normal draws by the Box–Muller transform (Box & Muller 1958), both
 * of each pair: √(−2 ln u)·cos(2πv), then √(−2 ln u)·sin(2πv); u = 0 is
 * drawn again. The first draw of each pair equals normalDraw's. Cost O(1)
 * per draw.
 */
export function normalPairs(rng: Rng): () => number {
  let spare = 0;
  let hasSpare = false;
  return () => {
    if (hasSpare) {
      hasSpare = false;
      return spare;
    }
    let u = rng.next();
    while (u === 0) u = rng.next();
    const radius = Math.sqrt(-2 * Math.log(u));
    const angle = 2 * Math.PI * rng.next();
    spare = radius * Math.sin(angle);
    hasSpare = true;
    return radius * Math.cos(angle);
  };
}
