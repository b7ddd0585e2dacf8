/**
 * Opens Covarion's PGlite database through Drizzle.
 *
 * PGlite keeps its files in one directory and does NOT lock it: one process
 * only (server/services/data-lock.ts takes the lock before this is called).
 * Always `close()` what you open; an open instance keeps Node alive.
 * Writes are tracked for the read cache (db/read-cache.ts).
 */
import { PGlite } from "@electric-sql/pglite";
import { drizzle, type PgliteDatabase } from "drizzle-orm/pglite";
import { trackWrites } from "./read-cache";
import * as schema from "./schema";

export type Database = PgliteDatabase<typeof schema>;
/** A transaction handle, as passed to `db.transaction(async (tx) => …)`. */
export type Transaction = Parameters<Parameters<Database["transaction"]>[0]>[0];
/** Either the database or an open transaction: services accept both. */
export type Queryable = Database | Transaction;

export interface OpenDatabase {
  db: Database;
  pg: PGlite;
  close(): Promise<void>;
}

export interface OpenDatabaseOptions {
  /** Directory of the database files; omitted = in memory. */
  dataDir?: string;
  /** A dump made by `pg.dumpDataDir()` to start from (tests start from a migrated copy). */
  loadDataDir?: Blob | File;
}

/** Opens (creating when empty) the database. Cost: 6–9 s on an empty directory, 1–3 s to reopen. */
export async function openDatabase(options: OpenDatabaseOptions = {}): Promise<OpenDatabase> {
  const pg = await PGlite.create({ dataDir: options.dataDir, loadDataDir: options.loadDataDir });
  const db = drizzle({ client: pg, schema });
  trackWrites(pg, db);
  let closed = false;
  return {
    db,
    pg,
    async close() {
      if (closed) return;
      closed = true;
      await pg.close();
    },
  };
}
