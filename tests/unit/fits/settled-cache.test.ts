/**
 * Values kept once settled (server/services/settled-cache.ts): one load per
 * key and stamp whoever asks meanwhile, a new stamp loads afresh, least
 * recently used out first within the weight bound, failed loads not kept,
 * each database apart.
 */
import { describe, expect, it } from "vitest";
import { type Settled, settledCache } from "../../../server/services/settled-cache";

/** A loader that counts its calls and answers `value` with `weight`. */
function counted<V>(value: V, weight: number) {
  const loader = async (): Promise<Settled<V>> => {
    loader.calls++;
    return { value, weight };
  };
  loader.calls = 0;
  return loader;
}

describe("settled values", () => {
  it("are loaded once per key and stamp, also by callers who ask while it loads", async () => {
    const cache = settledCache<string>(100);
    const db = {};
    const load = counted("a", 10);
    const [first, second] = await Promise.all([
      cache.get(db, "k", 1, load),
      cache.get(db, "k", 1, load),
    ]);
    expect([first, second]).toEqual(["a", "a"]);
    expect(await cache.get(db, "k", 1, load)).toBe("a");
    expect(load.calls).toBe(1);
  });

  it("load afresh when the stamp read from the database differs", async () => {
    const cache = settledCache<string>(100);
    const db = {};
    await cache.get(db, "k", 1, counted("old", 10));
    const fresh = counted("new", 10);
    expect(await cache.get(db, "k", 2, fresh)).toBe("new");
    expect(await cache.get(db, "k", 2, counted("never", 10))).toBe("new");
    expect(fresh.calls).toBe(1);
  });

  it("push out the least recently used first, to stay within the bound", async () => {
    const cache = settledCache<string>(30);
    const db = {};
    const loads = ["a", "b", "c"].map((v) => counted(v, 10));
    for (const [i, k] of ["a", "b", "c"].entries()) await cache.get(db, k, 0, loads[i]);
    await cache.get(db, "a", 0, loads[0]); // a is now the most recently used
    await cache.get(db, "d", 0, counted("d", 10)); // 40 > 30: b goes
    await cache.get(db, "a", 0, loads[0]);
    await cache.get(db, "c", 0, loads[2]);
    await cache.get(db, "b", 0, loads[1]);
    expect(loads.map((l) => l.calls)).toEqual([1, 2, 1]);
  });

  it("hand out a value heavier than the whole bound without keeping it", async () => {
    const cache = settledCache<string>(30);
    const db = {};
    const kept = counted("small", 10);
    await cache.get(db, "small", 0, kept);
    const heavy = counted("heavy", 31);
    expect(await cache.get(db, "heavy", 0, heavy)).toBe("heavy");
    await cache.get(db, "heavy", 0, heavy);
    await cache.get(db, "small", 0, kept);
    expect([heavy.calls, kept.calls]).toEqual([2, 1]);
  });

  it("do not keep a failed load", async () => {
    const cache = settledCache<string>(100);
    const db = {};
    let calls = 0;
    const failing = async (): Promise<Settled<string>> => {
      calls++;
      throw new Error("unreadable");
    };
    await expect(cache.get(db, "k", 0, failing)).rejects.toThrow("unreadable");
    expect(await cache.get(db, "k", 0, counted("read", 1))).toBe("read");
    expect(calls).toBe(1);
  });

  it("keep each database apart", async () => {
    const cache = settledCache<string>(100);
    await cache.get({}, "k", 0, counted("first", 1));
    expect(await cache.get({}, "k", 0, counted("second", 1))).toBe("second");
  });
});
