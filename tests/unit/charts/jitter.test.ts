import { describe, expect, it } from "vitest";
import { fmix32, fnv1a32, jitterOffset, jitterUnit } from "../../../components/charts/jitter";

describe("fnv1a32", () => {
  it("matches the FNV-1a 32-bit test values", () => {
    expect(fnv1a32("")).toBe(0x811c9dc5); // (FNV-1a offset basis, Fowler–Noll–Vo; value from memory, confirmed by an independent Python computation)
    expect(fnv1a32("a")).toBe(0xe40c292c); // (FNV test vector; value from memory, confirmed by an independent Python computation)
    expect(fnv1a32("foobar")).toBe(0xbf9cf968); // (FNV test vector; value from memory, confirmed by an independent Python computation)
  });

  it("hashes the UTF-8 bytes of non-ASCII ids", () => {
    // "é" is the two bytes C3 A9 in UTF-8; FNV-1a over them computed step by step here
    let h = 0x811c9dc5;
    for (const byte of [0xc3, 0xa9]) h = Math.imul(h ^ byte, 0x01000193) >>> 0;
    expect(fnv1a32("é")).toBe(h); // (exact enumeration of the FNV-1a steps over the UTF-8 bytes)
  });
});

describe("fmix32", () => {
  it("matches the MurmurHash3 finalizer", () => {
    expect(fmix32(0)).toBe(0); // (exact arithmetic: every step keeps 0)
    expect(fmix32(1)).toBe(0x514e28b7); // (MurmurHash3 fmix32, Appleby; value from memory, confirmed by an independent Python computation)
  });
});

describe("jitter", () => {
  const ids = Array.from({ length: 200 }, (_, i) => `sub-${String(i + 1).padStart(3, "0")}`);

  it("gives the same offset for the same id whatever the order of the rows", () => {
    const forward = new Map(ids.map((id) => [id, jitterOffset(id, 0.3)]));
    const backward = new Map(
      ids
        .slice()
        .reverse()
        .map((id) => [id, jitterOffset(id, 0.3)]),
    );
    for (const id of ids) expect(backward.get(id)).toBe(forward.get(id)); // (determinism: a pure function of the id)
  });

  it("stays within ±halfWidth and spreads sequential ids over the whole width", () => {
    const units = ids.map(jitterUnit);
    for (const u of units) {
      expect(u).toBeGreaterThanOrEqual(-1); // (definition: h/2³² · 2 − 1 ≥ −1)
      expect(u).toBeLessThan(1); // (definition: h < 2³²)
    }
    expect(Math.min(...units)).toBeLessThan(-0.9); // (common practice, no source: 200 well-mixed values reach the ends)
    expect(Math.max(...units)).toBeGreaterThan(0.9); // (common practice, no source)
    const mean = units.reduce((s, u) => s + u, 0) / units.length;
    expect(Math.abs(mean)).toBeLessThan(0.15); // (common practice, no source: standard error of the mean of 200 uniforms is 0.04)
    // neighbouring ids must not sit in a row: FNV-1a alone moves "sub-001" → "sub-002" by only 2⁻⁸ of the range
    const steps = units.slice(1).map((u, i) => Math.abs(u - units[i]));
    expect(steps.filter((s) => s < 0.02).length).toBeLessThan(20); // (common practice, no source: ~1% of uniform pairs are that close)
  });

  it("scales to the half width", () => {
    expect(jitterOffset("sub-12", 0.5)).toBeCloseTo(jitterUnit("sub-12") * 0.5, 15); // (exact arithmetic)
    expect(jitterOffset("sub-12", 0)).toBeCloseTo(0, 15); // (exact arithmetic)
  });
});
