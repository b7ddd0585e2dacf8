/**
 * Queries built once per database handle.
 *
 * Drizzle builds a query's SQL text and result mapping on every call; for
 * the API's most frequent reads that costs more than the embedded database
 * takes to answer them (~1.5 ms against ~1 ms for the list of studies).
 * `perDatabase(build)` keeps what `build` makes (typically
 * `db.select(…).where(…sql.placeholder("name")…).prepare("name")`) for
 * each database or transaction handle it is asked for, so the SQL is built
 * once and only the placeholder values change between calls. A prepared
 * query runs on the handle it was built on: a transaction gets its own.
 */
import type { Queryable } from "./client";

export function perDatabase<T>(build: (db: Queryable) => T): (db: Queryable) => T {
  const built = new WeakMap<Queryable, T>();
  return (db) => {
    let query = built.get(db);
    if (query === undefined) {
      query = build(db);
      built.set(db, query);
    }
    return query;
  };
}
