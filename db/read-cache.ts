/**
 * Answers of frequent reads, kept until the next write to the database.
 *
 * The embedded database runs on the request thread and answers one query
 * at a time, so while a fit runs, twenty screens polling the same few
 * reads (the list of studies, a fit's status, a study's fits) would queue
 * behind each other for identical answers. `cachedRead(db, key, load)`
 * runs `load` once and hands its answer to every caller with the same key
 * until anything is written.
 *
 * Exactness: `trackWrites` wraps the PGlite instance the database handle
 * runs on, so every statement that is not a plain SELECT, every `exec` and
 * every transaction counts as a write — whoever issues it (routes, fit
 * jobs, sign-in, tests). (A SELECT that calls a function with side effects
 * would count as a read: the project has none.) A write empties the cache before the statement runs and
 * again after it ends. PGlite runs one statement or transaction at a time,
 * so a read queued after a write sees its result, and an answer loaded
 * while a write was under way is never handed to a caller that asks after
 * the write has started. Reads inside a transaction are never cached
 * (`cachedRead` on a transaction handle just runs `load`).
 *
 * Answers are deep-frozen: a caller that changes one throws instead of
 * changing everyone's copy.
 *
 * On a PostgreSQL server (DATABASE_URL) the cache is not used: `cachedRead`
 * just runs `load`. Other processes write to the same database, and no
 * notice of their writes can arrive before a reader here asks — a NOTIFY
 * reaches this process some time after the writer's commit, and the writer
 * may already have answered its client, so a cache cleared on notices
 * could hand out an answer older than a write its reader has seen
 * confirmed. Correct first: a server answers many queries at once from its
 * own processes, so the queueing this cache removes does not arise there.
 */
import type { PGlite } from "@electric-sql/pglite";
import type { Queryable } from "./client";

interface Tracker {
  entries: Map<string, Promise<unknown>>;
}

/** Most answers kept at once (all are dropped at the next write anyway). */
const MAX_ENTRIES = 5000;

const trackers = new WeakMap<object, Tracker>();

/** A plain read: SELECT (or a parenthesized one) without a row lock. Anything else counts as a write. */
export function isPlainRead(statement: string): boolean {
  return (
    /^[\s(]*select\b/i.test(statement) &&
    !/\bfor\s+(update|no\s+key\s+update|share|key\s+share)\b/i.test(statement)
  );
}

/** Deep-freezes a JSON-like value (arrays and plain objects; Dates are left as they are). */
export function deepFreeze<T>(value: T): T {
  if (
    value !== null &&
    typeof value === "object" &&
    !Object.isFrozen(value) &&
    !(value instanceof Date)
  ) {
    Object.freeze(value);
    for (const v of Object.values(value)) deepFreeze(v);
  }
  return value;
}

/**
 * Counts the writes of `pg` and clears `db`'s cached answers on each (see
 * the module note). Call once, right after opening, before any query.
 */
export function trackWrites(pg: PGlite, db: object): void {
  const tracker: Tracker = { entries: new Map() };
  trackers.set(db, tracker);
  const wrote = () => tracker.entries.clear();
  const around =
    // biome-ignore lint/suspicious/noExplicitAny: wraps PGlite's generic methods whatever their arguments
      (run: (...args: any[]) => Promise<unknown>, isWrite: (first: unknown) => boolean) =>
      async (...args: unknown[]): Promise<unknown> => {
        if (!isWrite(args[0])) return run(...args);
        wrote();
        try {
          return await run(...args);
        } finally {
          wrote();
        }
      };
  const query = pg.query.bind(pg);
  const exec = pg.exec.bind(pg);
  const transaction = pg.transaction.bind(pg);
  pg.query = around(
    query,
    (statement) => typeof statement !== "string" || !isPlainRead(statement),
  ) as typeof pg.query;
  // exec may carry several statements: always a write.
  pg.exec = around(exec, () => true) as typeof pg.exec;
  pg.transaction = around(transaction, () => true) as typeof pg.transaction;
}

/**
 * `load()`'s answer, shared with every caller of the same `key` on the same
 * database until the next write. `key` must name everything the answer
 * depends on besides the database (the person, the study, the fit…).
 * On a transaction handle, or a database whose writes are not tracked,
 * simply runs `load`. A failed load is not kept.
 */
export function cachedRead<T>(db: Queryable, key: string, load: () => Promise<T>): Promise<T> {
  const tracker = trackers.get(db);
  if (!tracker) return load();
  const hit = tracker.entries.get(key) as Promise<T> | undefined;
  if (hit) return hit;
  const answer = load().then(deepFreeze);
  if (tracker.entries.size >= MAX_ENTRIES) tracker.entries.clear();
  tracker.entries.set(key, answer);
  answer.catch(() => {
    if (tracker.entries.get(key) === answer) tracker.entries.delete(key);
  });
  // A write that begins while this loads, or later, clears this entry.
  return answer;
}
