/**
 * `npm run worker`: a worker process for fits on a PostgreSQL server. It
 * needs only `DATABASE_URL` (the data it computes on is read through the
 * database); start any number, on any machines that reach the database.
 * Applies the migrations (under the advisory lock, as the web server
 * does), then takes fit jobs until SIGINT/SIGTERM (server/worker/
 * fit-worker.ts).
 *
 * Settings (environment): `WORKER_LEASE_SECONDS` (default 600: a job held
 * longer — its worker killed or cut off — is retried elsewhere),
 * `WORKER_RETRIES` (default 3), `WORKER_MAINTENANCE_SECONDS` (default 30:
 * how often expired jobs are looked for).
 */
import { z } from "zod";
import { openServerDatabase } from "../../db/client";
import { migrateDatabase } from "../../db/migrate";
import { FitWorker } from "./fit-worker";

const settingsSchema = z.object({
  DATABASE_URL: z
    .string({ error: "DATABASE_URL must name the PostgreSQL server (postgres://…)" })
    .regex(/^postgres(ql)?:\/\//, "DATABASE_URL must start with postgres:// or postgresql://"),
  WORKER_LEASE_SECONDS: z.coerce.number().int().min(1).default(600),
  WORKER_RETRIES: z.coerce.number().int().min(0).max(100).default(3),
  WORKER_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).default(30),
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
