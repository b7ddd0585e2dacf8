/**
 * Values that never change once settled, kept in memory: a finished fit's
 * result, a finished region's participants. Each is read from the database
 * and turned into its parsed form once, then handed to every later reader
 * until it is pushed out.
 *
 * A value is kept under a key and a stamp (for a fit, the time it
 * finished): it is written once, before or in the same update that sets
 * the stamp, and never afterwards, so a kept copy stays right as long as
 * the stamp read afresh from the database is the same. A different stamp
 * (a fit stored again) loads afresh and replaces the kept value. This holds
 * on a PostgreSQL server shared by several processes too: the stamp comes
 * from the caller's own read of the database, never from this cache.
 *
 * Per database (tests open many in one process), least recently used out
 * first, at most `maxWeight` in all (each value's weight is given by its
 * loader, e.g. the characters of the text it was parsed from; a value
 * heavier than the whole bound is handed out but not kept). Callers that
 * ask while a value loads share that one load; a failed load is not kept.
 * Values are handed out as they are: loaders freeze what callers must not
 * change.
 */

export interface Settled<V> {
  value: V;
  /** What the value counts against the bound (e.g. characters of its stored text). */
  weight: number;
}

interface Entry<V> {
  stamp: number;
  value: Promise<V>;
  /** 0 until the load has ended. */
  weight: number;
}

interface PerDatabase<V> {
  entries: Map<string, Entry<V>>;
  weight: number;
}

export interface SettledCache<V> {
  /** The value of `key` at `stamp`: kept, or loaded by `load` (once, whoever else asks meanwhile). */
  get(db: object, key: string, stamp: number, load: () => Promise<Settled<V>>): Promise<V>;
}

export function settledCache<V>(maxWeight: number): SettledCache<V> {
  const databases = new WeakMap<object, PerDatabase<V>>();

  function drop(cache: PerDatabase<V>, key: string, entry: Entry<V>): void {
    if (cache.entries.get(key) !== entry) return;
    cache.entries.delete(key);
    cache.weight -= entry.weight;
  }

  return {
    get(db, key, stamp, load) {
      let cache = databases.get(db);
      if (!cache) {
        cache = { entries: new Map(), weight: 0 };
        databases.set(db, cache);
      }
      const kept = cache.entries.get(key);
      if (kept && kept.stamp === stamp) {
        // Most recently used last.
        cache.entries.delete(key);
        cache.entries.set(key, kept);
        return kept.value;
      }
      if (kept) drop(cache, key, kept);
      const own = cache;
      const entry: Entry<V> = { stamp, value: Promise.resolve(null as V), weight: 0 };
      entry.value = load().then(
        ({ value, weight }) => {
          if (own.entries.get(key) === entry) {
            if (weight > maxWeight) drop(own, key, entry);
            else {
              entry.weight = weight;
              own.weight += weight;
              for (const [oldKey, old] of own.entries) {
                if (own.weight <= maxWeight) break;
                if (old !== entry && old.weight > 0) drop(own, oldKey, old);
              }
            }
          }
          return value;
        },
        (error: unknown) => {
          drop(own, key, entry);
          throw error;
        },
      );
      cache.entries.set(key, entry);
      return entry.value;
    },
  };
}
