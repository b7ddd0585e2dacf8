/**
 * The worker processes serving the job queue (PostgreSQL server, `npm run
 * worker`): those whose heartbeat is recent, with the chunks each stored
 * in the last minute. With the embedded database the list is empty.
 */
import { and, eq, gt, isNull, type SQL, sql } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { fitChunks, memberships, studies, workers } from "../../db/schema";
import type { LiveWorker } from "../../contract/views/system";

/**
 * A heartbeat older than this counts as a stopped worker (workers beat
 * every 5 s): it is not listed, and another worker hands the jobs it had
 * in hand back to the queue (server/worker/fit-worker.ts).
 */
export const WORKER_ALIVE_SECONDS = 30;

/** The oldest heartbeat of a live worker, by the database's clock (which writes the heartbeats). */
export function aliveSince(): SQL {
  return sql`now() - make_interval(secs => ${WORKER_ALIVE_SECONDS})`;
}

/** Whether the person is Owner of a study that is not deleted (who may see the workers). */
export async function ownsAStudy(db: Queryable, userId: string): Promise<boolean> {
  const rows = await db
    .select({ id: studies.id })
    .from(memberships)
    .innerJoin(studies, eq(studies.id, memberships.studyId))
    .where(
      and(eq(memberships.userId, userId), eq(memberships.role, "owner"), isNull(studies.deletedAt)),
    )
    .limit(1);
  return rows.length > 0;
}

/** Live workers, by host, oldest first (heartbeats and chunks judged by the database's clock, which writes them). */
export async function liveWorkers(db: Queryable): Promise<LiveWorker[]> {
  const rows = await db
    .select({
      id: workers.id,
      host: workers.host,
      pid: workers.pid,
      startedAt: workers.startedAt,
      seenAt: workers.seenAt,
      chunksLastMinute: sql<number>`(select count(*)::int from ${fitChunks} where ${fitChunks.workerId} = ${workers.id} and ${fitChunks.computedAt} > now() - interval '1 minute')`,
    })
    .from(workers)
    .where(gt(workers.seenAt, aliveSince()))
    .orderBy(workers.host, workers.startedAt);
  return rows.map((r) => ({
    ...r,
    startedAt: r.startedAt.toISOString(),
    seenAt: r.seenAt.toISOString(),
    chunksLastMinute: Number(r.chunksLastMinute),
  }));
}
