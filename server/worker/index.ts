/**
 * `npm run worker`: a worker process for fits on a PostgreSQL server. It
 * needs only `DATABASE_URL` (the data it computes on is read through the
 * database); start any number, on any machines that reach the database.
 * Applies the migrations (under the advisory lock, as the web server
 * does), then takes fit jobs until SIGINT/SIGTERM (server/worker/
 * fit-worker.ts).
 *
 * Settings (environment): `WORKER_LEASE_SECONDS` (default six hours: the
 * longest one try of a job may run before it is retried — a stopped
 * worker's jobs are handed back by the others within about half a minute,
 * through the heartbeats),
 * `WORKER_RETRIES` (default 3), `WORKER_MAINTENANCE_SECONDS` (default 30:
 * how often expired jobs are looked for), `WORKER_HEARTBEAT_SECONDS`
 * (default 5, at most 10: a worker silent for `WORKER_ALIVE_SECONDS`, 30,
 * counts as stopped).
 */
import { z } from "zod";
import { openServerDatabase } from "../../db/client";
import { migrateDatabase } from "../../db/migrate";
import { FitWorker } from "./fit-worker";
import { DEFAULT_LEASE_SECONDS } from "./queue";
import { WORKER_ALIVE_SECONDS } from "../services/workers";

const settingsSchema = z.object({
  DATABASE_URL: z
    .string({ error: "DATABASE_URL must name the PostgreSQL server (postgres://…)" })
    .regex(/^postgres(ql)?:\/\//, "DATABASE_URL must start with postgres:// or postgresql://"),
  WORKER_LEASE_SECONDS: z.coerce.number().int().min(1).default(DEFAULT_LEASE_SECONDS),
  WORKER_RETRIES: z.coerce.number().int().min(0).max(100).default(3),
  WORKER_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).default(30),
  WORKER_HEARTBEAT_SECONDS: z.coerce
    .number()
    .int()
    .min(1)
    .max(10, `must be at most 10: a worker silent for ${WORKER_ALIVE_SECONDS} s counts as stopped`)
    .default(5),
});

async function main(): Promise<void> {
  const parsed = settingsSchema.safeParse(process.env);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    console.error(`Covarion worker cannot start: ${issue.path.join(".")}: ${issue.message}`);
    process.exit(2);
  }
  const settings = parsed.data;
  const database = await openServerDatabase(settings.DATABASE_URL);
  await migrateDatabase(database.db);
  const worker = await FitWorker.start({
    db: database.db,
    leaseSeconds: settings.WORKER_LEASE_SECONDS,
    retries: settings.WORKER_RETRIES,
    maintenanceSeconds: settings.WORKER_MAINTENANCE_SECONDS,
    heartbeatSeconds: settings.WORKER_HEARTBEAT_SECONDS,
  });
  console.log(`Covarion worker ${worker.id} on ${worker.host} is taking fit jobs.`);
  const stop = async () => {
    await worker.stop().catch((error) => console.error("[covarion] worker stop:", error));
    await database.close().catch(() => {});
    process.exit(0);
  };
  process.once("SIGINT", () => void stop());
  process.once("SIGTERM", () => void stop());
}

await main();
