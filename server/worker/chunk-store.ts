/**
 * What worker processes read and write besides a fit's own row (which
 * services/fit-store.ts writes): the fit's chunk plan (`fit_runs`), its
 * region chunks' setups (`fit_chunk_setups`, each written once, removed
 * when the fit ends), its
 * computed chunks (`fit_chunks`, each written once), the merge claim, and
 * worker heartbeats with the jobs each has in hand (`workers`;
 * services/workers.ts lists them). PostgreSQL server only.
 */
import { and, count, eq, gt, isNull, lt, lte, sql } from "drizzle-orm";
import { type Database, driverOf } from "../../db/client";
import { fitChunkSetups, fitChunks, fitRuns, fits, type HeldJob, workers } from "../../db/schema";
import { aliveSince } from "../services/workers";
import {
  deserializeSetup,
  type RegionChunkSetup,
  type StoredChunk,
  serializeSetup,
} from "../jobs/fit-chunks";

/** A fit's status, recipe, inputs and first start, or null when it is gone. */
export async function fitRow(db: Database, fitId: string) {
  const [row] = await db
    .select({
      status: fits.status,
      recipe: fits.recipe,
      brainVersionId: fits.brainVersionId,
      sheetVersionId: fits.sheetVersionId,
      startedAt: fits.startedAt,
    })
    .from(fits)
    .where(eq(fits.id, fitId));
  return row ?? null;
}

/** A fit's status, or null when it is gone. */
export async function fitStatus(db: Database, fitId: string): Promise<string | null> {
  const [row] = await db.select({ status: fits.status }).from(fits).where(eq(fits.id, fitId));
  return row?.status ?? null;
}

/** Records a fit's number of chunks (once: a re-planned fit keeps its row). */
export async function recordPlan(db: Database, fitId: string, chunks: number, at: Date) {
  await db.insert(fitRuns).values({ fitId, chunks, plannedAt: at }).onConflictDoNothing();
}

/** A fit's plan: its number of chunks and whether it was merged. */
export async function planOf(db: Database, fitId: string) {
  const [row] = await db
    .select({ chunks: fitRuns.chunks, mergedAt: fitRuns.mergedAt })
    .from(fitRuns)
    .where(eq(fitRuns.fitId, fitId));
  return row ?? null;
}

/** Stores a fit's region-chunk setups, one row each (a setup already stored is kept). */
export async function storeSetups(
  db: Database,
  fitId: string,
  setups: readonly RegionChunkSetup[],
): Promise<void> {
  // One row per statement: a region chunk's setup is tens of megabytes at biobank size.
  for (const setup of setups) {
    await db
      .insert(fitChunkSetups)
      .values({
        fitId,
        regionChunk: setup.regionChunk,
        chunkFrom: setup.chunkFrom,
        chunkTo: setup.chunkTo,
        setup: sql`decode(${serializeSetup(setup).toString("base64")}, 'base64')`,
      })
      .onConflictDoNothing();
  }
}

/** The setup serving chunk `chunk` of the fit, or null when none is stored (a fit planned without them, or not a permutation test). */
export async function setupOf(
  db: Database,
  fitId: string,
  chunk: number,
): Promise<RegionChunkSetup | null> {
  const [row] = await db
    .select({ setup: sql<string>`encode(${fitChunkSetups.setup}, 'base64')` })
    .from(fitChunkSetups)
    .where(
      and(
        eq(fitChunkSetups.fitId, fitId),
        lte(fitChunkSetups.chunkFrom, chunk),
        gt(fitChunkSetups.chunkTo, chunk),
      ),
    );
  return row ? deserializeSetup(Buffer.from(row.setup, "base64")) : null;
}

/** Removes a fit's setups (it was merged, failed or was cancelled). */
export async function forgetSetups(db: Database, fitId: string): Promise<void> {
  await db.delete(fitChunkSetups).where(eq(fitChunkSetups.fitId, fitId));
}

/** Whether chunk `chunk` of the fit is stored. */
export async function hasChunk(db: Database, fitId: string, chunk: number): Promise<boolean> {
  const rows = await db
    .select({ chunk: fitChunks.chunk })
    .from(fitChunks)
    .where(and(eq(fitChunks.fitId, fitId), eq(fitChunks.chunk, chunk)));
  return rows.length > 0;
}

/** Stores a chunk unless it is already stored (then nothing changes); answers the fit's stored chunks. */
export async function storeChunk(
  db: Database,
  fitId: string,
  row: StoredChunk,
  workerId: string,
): Promise<number> {
  // The database's clock, as the heartbeats: the workers' list counts chunks of the last minute by it.
  await db
    .insert(fitChunks)
    .values({ fitId, ...row, workerId, computedAt: sql`now()` })
    .onConflictDoNothing();
  const [{ done }] = await db
    .select({ done: count() })
    .from(fitChunks)
    .where(eq(fitChunks.fitId, fitId));
  return done;
}

/** Every stored chunk of a fit. */
export async function storedChunks(db: Database, fitId: string): Promise<StoredChunk[]> {
  return await db
    .select({
      chunk: fitChunks.chunk,
      regionFrom: fitChunks.regionFrom,
      block: fitChunks.block,
      counts: fitChunks.counts,
      maxAbs: fitChunks.maxAbs,
      nulls: fitChunks.nulls,
      exact: fitChunks.exact,
      rearrangements: fitChunks.rearrangements,
    })
    .from(fitChunks)
    .where(eq(fitChunks.fitId, fitId))
    .orderBy(fitChunks.chunk);
}

/** Marks the fit merged (once). */
export async function markMerged(db: Database, fitId: string, at: Date): Promise<void> {
  await db
    .update(fitRuns)
    .set({ mergedAt: at })
    .where(and(eq(fitRuns.fitId, fitId), isNull(fitRuns.mergedAt)));
}

/**
 * Runs `merge` holding the fit's merge lock (a PostgreSQL session advisory
 * lock on a connection of its own), or answers false at once when another
 * process holds it. The lock ends with the connection, so a merging process
 * that dies frees it.
 */
export async function withMergeLock(
  db: Database,
  fitId: string,
  merge: () => Promise<void>,
): Promise<boolean> {
  const driver = driverOf(db);
  if (driver.kind !== "server") throw new Error("merge locks need a PostgreSQL server");
  const client = await driver.pool.connect();
  const key = `covarion fit merge ${fitId}`;
  try {
    const got = await client.query<{ ok: boolean }>(
      "select pg_try_advisory_lock(hashtextextended($1, 0)) as ok",
      [key],
    );
    if (!got.rows[0].ok) return false;
    try {
      await merge();
    } finally {
      await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [key]);
    }
    return true;
  } finally {
    client.release();
  }
}

/**
 * Writes (or refreshes) a worker's heartbeat and the jobs it has in hand.
 * The time is the database's, so that workers on machines whose clocks
 * differ judge each other's heartbeats by one clock.
 */
export async function beat(
  db: Database,
  worker: { id: string; host: string; pid: number; startedAt: Date },
  jobs: readonly HeldJob[],
): Promise<void> {
  const held = [...jobs];
  await db
    .insert(workers)
    .values({ ...worker, seenAt: sql`now()`, jobs: held })
    .onConflictDoUpdate({ target: workers.id, set: { seenAt: sql`now()`, jobs: held } });
}

/**
 * Removes the heartbeats of stopped workers (older than
 * `WORKER_ALIVE_SECONDS`, services/workers.ts) and returns those workers
 * with the jobs they had in hand. One statement: when several workers look
 * at once, each stopped worker is returned to one of them.
 */
export async function reapStoppedWorkers(
  db: Database,
): Promise<{ id: string; host: string; pid: number; jobs: HeldJob[] }[]> {
  return db
    .delete(workers)
    .where(lt(workers.seenAt, aliveSince()))
    .returning({ id: workers.id, host: workers.host, pid: workers.pid, jobs: workers.jobs });
}

/** Removes a worker's heartbeat (it stopped). */
export async function forgetWorker(db: Database, id: string): Promise<void> {
  await db.delete(workers).where(eq(workers.id, id));
}
