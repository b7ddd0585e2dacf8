/**
 * Every write of a fit's row (`fits`) and of its region rows
 * (`fit_regions`), in one place: the app creates and cancels fits here
 * (services/fits.ts, inside its transactions with the audit events), and
 * the fit jobs are given a `FitStore` for everything they record while a
 * fit runs (server/jobs/fit-jobs.ts declares what it needs as
 * `FitJobStore`; no job imports a service).
 *
 * The status only moves forward: queued → running → done | failed |
 * cancelled. Each write names the statuses it may move from, so a fit
 * cancelled while it runs is never marked done or failed afterwards, and
 * a write that finds the fit already finished changes nothing and says so.
 * `createFitJobs` is the one way the server and the tests start fit jobs;
 * their events travel on a database channel (`fitEvents`), so a fit's
 * live events reach every process on a PostgreSQL server.
 */
import { and, eq, inArray, sql } from "drizzle-orm";
import { type Channel, channel, type Database, type Queryable } from "../../db/client";
import { type Fit, fitRegions, fits } from "../../db/schema";
import {
  type FitEvent,
  FitJobs,
  type FitJobsOptions,
  type FitJobStore,
  type QueuedFit,
  type RegionRowInput,
  type RequeuedFit,
} from "../jobs/fit-jobs";
import { recordEvent } from "./audit";
import { FitDataCache, inputsOfFit } from "./fit-inputs";

/** The columns of a new fit (status "queued"). */
export type NewQueuedFit = Pick<
  typeof fits.$inferInsert,
  | "studyId"
  | "modelId"
  | "brainVersionId"
  | "sheetVersionId"
  | "recipe"
  | "createdBy"
  | "createdAt"
  | "refitOf"
>;

/** Inserts a queued fit (inside the caller's transaction, beside its audit event). */
export async function insertQueuedFit(tx: Queryable, values: NewQueuedFit): Promise<Fit> {
  const [created] = await tx
    .insert(fits)
    .values({ ...values, status: "queued" })
    .returning();
  return created;
}

/**
 * Marks a queued or running fit cancelled by `by` at `at`; false when it
 * had already finished (then nothing changes).
 */
export async function markFitCancelled(
  tx: Queryable,
  fitId: string,
  by: string,
  at: Date,
): Promise<boolean> {
  const rows = await tx
    .update(fits)
    .set({ status: "cancelled", cancelledBy: by, finishedAt: at, secondsLeft: null })
    .where(and(eq(fits.id, fitId), inArray(fits.status, ["queued", "running"])))
    .returning({ id: fits.id });
  return rows.length > 0;
}

/** A fit's start time is its first: kept when already set (a fit re-queued after a restart), else `at`. */
function firstStart(at: Date) {
  return sql`coalesce(${fits.startedAt}, ${at.toISOString()}::timestamptz)`;
}

/** What the fit jobs record while a fit runs. */
export class FitStore implements FitJobStore {
  constructor(private readonly db: Database) {}

  async queuedFit(fitId: string): Promise<QueuedFit | null> {
    const [fit] = await this.db
      .select({
        status: fits.status,
        recipe: fits.recipe,
        brainVersionId: fits.brainVersionId,
        sheetVersionId: fits.sheetVersionId,
      })
      .from(fits)
      .where(eq(fits.id, fitId));
    if (!fit || fit.status !== "queued") return null;
    return { recipe: fit.recipe, inputs: inputsOfFit(fit) };
  }

  async clearRegionRows(fitId: string): Promise<void> {
    await this.db.delete(fitRegions).where(eq(fitRegions.fitId, fitId));
  }

  async storeRegionRow(fitId: string, row: RegionRowInput): Promise<void> {
    await this.db.insert(fitRegions).values({ fitId, ...row });
  }

  /**
   * Stores a region row unless the fit has one for that region already —
   * on worker processes, where a row may come from an earlier try of the
   * same part or from a second computation of it (a worker cut off from
   * the database had its job handed on and then finished it too). The
   * same recipe on the same data gives the same row, so the one stored
   * first is kept.
   */
  async storeRegionRowOnce(fitId: string, row: RegionRowInput): Promise<void> {
    await this.db
      .insert(fitRegions)
      .values({ fitId, ...row })
      .onConflictDoNothing();
  }

  async markRunning(fitId: string, at: Date): Promise<boolean> {
    const updated = await this.db
      .update(fits)
      .set({ status: "running", startedAt: firstStart(at), progress: 0 })
      .where(and(eq(fits.id, fitId), eq(fits.status, "queued")))
      .returning({ id: fits.id });
    return updated.length > 0;
  }

  async writeProgress(fitId: string, fraction: number, secondsLeft: number | null): Promise<void> {
    await this.db
      .update(fits)
      .set({ progress: fraction, secondsLeft })
      .where(and(eq(fits.id, fitId), eq(fits.status, "running")));
  }

  async markFailed(
    fitId: string,
    code: string,
    message: string,
    at: Date,
  ): Promise<{ progress: number } | null> {
    const [updated] = await this.db
      .update(fits)
      .set({ status: "failed", error: message, errorCode: code, secondsLeft: null, finishedAt: at })
      .where(and(eq(fits.id, fitId), inArray(fits.status, ["queued", "running"])))
      .returning({ progress: fits.progress });
    return updated ?? null;
  }

  async markDone(
    fitId: string,
    summary: unknown,
    at: Date,
    startedAt: Date,
    abandoned: () => boolean,
  ): Promise<boolean> {
    return await this.db.transaction(async (tx) => {
      const [row] = await tx
        .select({ status: fits.status })
        .from(fits)
        .where(eq(fits.id, fitId))
        .for("update");
      const unfinished = row && (row.status === "queued" || row.status === "running");
      if (!unfinished || abandoned()) return false;
      await tx
        .update(fits)
        .set({
          status: "done",
          progress: 1,
          secondsLeft: 0,
          result: summary,
          finishedAt: at,
          startedAt: firstStart(startedAt),
        })
        .where(eq(fits.id, fitId));
      return true;
    });
  }

  async requeueLeftovers(at: Date): Promise<RequeuedFit[]> {
    return await this.db.transaction(async (tx) => {
      const left = await tx
        .select({
          id: fits.id,
          studyId: fits.studyId,
          status: fits.status,
          progress: fits.progress,
          startedAt: fits.startedAt,
          createdAt: fits.createdAt,
        })
        .from(fits)
        .where(inArray(fits.status, ["queued", "running"]))
        .for("update");
      if (left.length === 0) return [];
      await tx
        .update(fits)
        .set({ status: "queued", progress: 0, secondsLeft: null })
        .where(
          inArray(
            fits.id,
            left.map((f) => f.id),
          ),
        );
      for (const fit of left) {
        await recordEvent(tx, {
          studyId: fit.studyId,
          actorId: null,
          kind: "fit.requeued",
          targetType: "fit",
          targetId: fit.id,
          before: { status: fit.status, progress: fit.progress, startedAt: fit.startedAt },
          after: { status: "queued", progress: 0 },
          at,
        });
      }
      return left.map((f) => ({ id: f.id, createdAt: f.createdAt }));
    });
  }
}

/** Fit jobs on `db`: its store and its cache of built fit data. */
/** The database channel fit events travel on, to every process on the database (db/client.ts). */
export function fitEvents(db: Database): Channel<FitEvent> {
  return channel<FitEvent>(db, "covarion_fit_events");
}

export function createFitJobs(
  db: Database,
  options: Omit<FitJobsOptions, "store" | "data"> = {},
): FitJobs {
  return new FitJobs({
    events: fitEvents(db),
    ...options,
    store: new FitStore(db),
    data: new FitDataCache(db),
  });
}
