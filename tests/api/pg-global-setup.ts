/**
 * The API tests on a PostgreSQL server (vitest project `api-pg`): starts a
 * throw-away server (tests/support/postgres-server.ts, installing Debian's
 * postgresql when missing), builds one database from the real migrations
 * as a template, and stops the server after the run. Each test app then
 * gets its own fresh copy of the template (tests/api/helpers.ts).
 */
import type { TestProject } from "vitest/node";
import { openServerDatabase } from "../../db/client";
import { migrateDatabase } from "../../db/migrate";
import { startPostgresServer } from "../support/postgres-server";

declare module "vitest" {
  export interface ProvidedContext {
    /** The test server's administrative address and the migrated template's name (api-pg only). */
    postgres: { adminUrl: string; template: string } | undefined;
  }
}

const TEMPLATE = "covarion_template";

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const server = await startPostgresServer();
  try {
    const database = await openServerDatabase(await server.createDatabase(TEMPLATE));
    try {
      await migrateDatabase(database.db);
    } finally {
      await database.close();
    }
  } catch (error) {
    await server.stop();
    throw error;
  }
  project.provide("postgres", { adminUrl: server.url(), template: TEMPLATE });
  return () => server.stop();
}
