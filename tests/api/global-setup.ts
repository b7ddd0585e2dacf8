/**
 * Builds one database from the real migrations, once per API test run, and
 * dumps it; each test file starts its own copy from the dump (1–2 s instead
 * of 6–9 s for a fresh initdb).
 */
import { mkdirSync, rmSync, writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import type { TestProject } from "vitest/node";
import { openDatabase } from "../../db/client";
import { migrateDatabase } from "../../db/migrate";

declare module "vitest" {
  export interface ProvidedContext {
    dbTemplate: string;
  }
}

export default async function setup(project: TestProject): Promise<() => void> {
  const dir = join(dirname(fileURLToPath(import.meta.url)), "..", ".tmp");
  mkdirSync(dir, { recursive: true });
  const file = join(dir, `api-db-template-${process.pid}.tar.gz`);
  const database = await openDatabase();
  try {
    await migrateDatabase(database.db);
    const dump = await database.pg.dumpDataDir("gzip");
    writeFileSync(file, Buffer.from(await dump.arrayBuffer()));
  } finally {
    await database.close();
  }
  project.provide("dbTemplate", file);
  return () => rmSync(file, { force: true });
}
