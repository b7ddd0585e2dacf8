/**
 * Large values that do not compress (a region's rows and plot data, a
 * region chunk's setup, a brain column's doubles) are kept out of line
 * without a compression attempt (migration 0019), on the embedded database
 * and on a server alike: the default tried and gave up on each one, which
 * tripled the time of storing a region's rows at 20,000 participants.
 */
import { sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestApp, type TestApp } from "./helpers";

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t?.close();
});

describe("large values", () => {
  it("are stored without compression: 'external' storage on their columns", async () => {
    const result = await t.db.execute(sql`
      select c.relname as "table", a.attname as "column", a.attstorage as "storage"
      from pg_attribute a join pg_class c on c.oid = a.attrelid
      where (c.relname, a.attname) in (
        ('fit_regions', 'participants'), ('fit_regions', 'plot'),
        ('fit_chunk_setups', 'setup'), ('dataset_columns', 'values'))
      order by 1, 2`);
    const rows = (result as unknown as { rows: unknown[] }).rows;
    expect(rows).toEqual([
      { table: "dataset_columns", column: "values", storage: "e" },
      { table: "fit_chunk_setups", column: "setup", storage: "e" },
      { table: "fit_regions", column: "participants", storage: "e" },
      { table: "fit_regions", column: "plot", storage: "e" },
    ]);
  });
});
