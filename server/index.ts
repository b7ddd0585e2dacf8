/**
 * Starts Covarion: reads the configuration, takes the data directory's
 * lock (embedded database only: with DATABASE_URL any number of processes
 * share the PostgreSQL server), opens and migrates the database, seeds the demo on first start,
 * starts the local mail and identity fakes outside production, listens
 * (with the time limits on receiving a request, server/http/request-timeouts.ts),
 * prints the address, and shuts down cleanly on SIGINT/SIGTERM (stops
 * listening, stops the fit jobs' worker threads, closes the fakes and the
 * database, releases the lock).
 *
 * Fits: one pool of worker threads for the process (server/jobs/fit-jobs.ts).
 * At start, fits a previous process left queued or running are re-queued
 * (a fit is deterministic, so it gives the numbers it would have given); a
 * fit interrupted by shutdown stays "running" in the table until then.
 * On a PostgreSQL server another process may be running the fits this one
 * finds unfinished, so they are not taken over at start there.
 */
import { existsSync } from "node:fs";
import type { Server } from "node:http";
import { openConfiguredDatabase, type OpenDatabase, redactedUrl } from "../db/client";
import { duringStartUp, migrateDatabase } from "../db/migrate";
import { seedDemo } from "../db/seed";
import { seedDemoDatasets } from "../db/seed/demo-datasets";
import { createApp } from "./app";
import { ConfigError, loadConfig } from "./config";
import { createHttpServer } from "./http/request-timeouts";
import type { FitJobs } from "./jobs/fit-jobs";
import { createFitJobs } from "./services/fit-store";
import { queueDispatch } from "./worker/fit-dispatch";
import { startServices, type Services } from "./dev/dev-services";
import { removeIncompleteVersions } from "./services/datasets";
import { acquireDataLock, DataLockError, type DataLock } from "./services/data-lock";

async function main(): Promise<void> {
  let lock: DataLock | null = null;
  let database: OpenDatabase | null = null;
  let services: Services | null = null;
  let server: Server | null = null;
  let fitJobs: FitJobs | null = null;
  let stopping = false;

  const stop = async (code: number) => {
    if (stopping) return;
    stopping = true;
    if (server) {
      const open = server;
      const force = setTimeout(() => open.closeAllConnections(), 2000);
      await new Promise<void>((resolve) => {
        open.close(() => resolve());
        open.closeIdleConnections();
      });
      clearTimeout(force);
    }
    await fitJobs?.close().catch(() => {});
    await services?.close().catch(() => {});
    await database?.close().catch(() => {});
    lock?.release();
    process.exit(code);
  };

  try {
    // Variables already set in the environment win over the .env file.
    if (existsSync(".env")) process.loadEnvFile(".env");
    const config = loadConfig();
    if (!config.databaseUrl) lock = await acquireDataLock(config.dataDir);
    process.once("SIGINT", () => void stop(0));
    process.once("SIGTERM", () => void stop(0));
    database = await openConfiguredDatabase(config);
    await migrateDatabase(database.db);
    const db = database.db;
    // One process at a time on a shared database, so two starting together seed the demo once.
    await duringStartUp(db, async () => {
      // A dataset version left half-stored by a stop in the middle of an upload is never read; remove it now.
      const leftovers = await removeIncompleteVersions(db);
      if (leftovers > 0)
        console.log(
          `Covarion: removed ${leftovers} dataset version(s) left incomplete by an interrupted upload.`,
        );
      if (config.demo) {
        const seeded = await seedDemo(db, { now: new Date(), seedDemoDatasets });
        if (seeded.seeded) console.log("Covarion: created the demo people and demo study.");
      }
    });
    services = await startServices(config);
    // With a PostgreSQL server, worker processes compute the fits (npm run worker); this process enqueues.
    fitJobs = createFitJobs(
      database.db,
      database.kind === "server" ? { dispatch: queueDispatch(database.db) } : { warm: true },
    );
    const app = createApp({
      config,
      db: database.db,
      mailer: services.mailer,
      mailbox: services.mailFake,
      institution: services.institution,
      fitJobs,
    });
    server = createHttpServer(app, config.requestTimeouts);
    server.listen(config.port, config.host);
    await new Promise<void>((resolve, reject) => {
      server?.once("listening", resolve);
      server?.once("error", reject);
    });
    console.log(
      `Covarion is running at ${config.publicUrl} (${config.databaseUrl ? `database ${redactedUrl(config.databaseUrl)}` : `data in ${config.dataDir}`}${config.demo ? ", demo mode" : ""}).`,
    );
    if (services.mailFake) console.log(`Local mailbox: ${config.publicUrl}/mailbox`);
    if (database.kind === "embedded") {
      const requeued = await fitJobs.recover();
      if (requeued.length > 0)
        console.log(
          `Covarion: re-queued ${requeued.length} fit(s) left unfinished by the previous run.`,
        );
    }
  } catch (error) {
    if (error instanceof ConfigError || error instanceof DataLockError) {
      console.error(`Covarion cannot start: ${error.message}`);
    } else if ((error as NodeJS.ErrnoException).code === "EADDRINUSE") {
      console.error(
        `Covarion cannot start: the address is already in use (${(error as Error).message}). Set PORT to another port.`,
      );
    } else {
      console.error("Covarion cannot start:", error);
    }
    await stop(1);
  }
}

await main();
