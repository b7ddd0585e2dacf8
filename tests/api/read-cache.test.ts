/**
 * The read cache (db/read-cache.ts): an answer is shared until the next
 * write, whoever writes and however (a statement, a transaction, exec),
 * never across a write that began while it loaded, never inside a
 * transaction, and frozen. On a real migrated database.
 */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { EmbeddedDatabase } from "../../db/client";
import { cachedRead, isPlainRead } from "../../db/read-cache";
import { users } from "../../db/schema";
import { openTemplateDatabase } from "./helpers";

let database: EmbeddedDatabase;

beforeAll(async () => {
  database = await openTemplateDatabase();
});

afterAll(async () => {
  await database.close();
});

let counters = 0;

/** The names of all users, read through the cache under a key of its own, and how many times the database was asked. */
function counter() {
  let loads = 0;
  const key = `user names ${++counters}`;
  const read = () =>
    cachedRead(database.db, key, async () => {
      loads++;
      return (await database.db.select({ name: users.name }).from(users)).map((u) => u.name).sort();
    });
  return { read, loads: () => loads };
}

describe("read cache", () => {
  it("tells plain reads from writes", () => {
    expect(isPlainRead("select 1")).toBe(true);
    expect(isPlainRead('  (SELECT "id" from "fits")')).toBe(true);
    expect(isPlainRead("select * from fits where id = $1 for update")).toBe(false);
    expect(isPlainRead("select * from fits for no key update")).toBe(false);
    expect(isPlainRead("insert into users (id) values ($1)")).toBe(false);
    expect(isPlainRead("with x as (delete from users returning *) select * from x")).toBe(false);
    expect(isPlainRead("update users set name = 'a'")).toBe(false);
    expect(isPlainRead("selection")).toBe(false);
  });

  it("shares one answer between callers until a statement writes, then reads afresh", async () => {
    const c = counter();
    const [a, b] = await Promise.all([c.read(), c.read()]);
    expect(a).toBe(b);
    expect(await c.read()).toBe(a);
    expect(c.loads()).toBe(1);
    await database.db
      .insert(users)
      .values({ id: "cache-1", name: "Ines Cache", email: "ines@cache.test" });
    const after = await c.read();
    expect(c.loads()).toBe(2);
    expect(after).toContain("Ines Cache");
    expect(a).not.toContain("Ines Cache");
  });

  it("a transaction counts as a write, even one that changes nothing or rolls back", async () => {
    const c = counter();
    await c.read();
    const before = c.loads();
    await database.db.transaction(async (tx) => {
      await tx.select().from(users).where(eq(users.id, "nobody"));
    });
    await c.read();
    expect(c.loads()).toBe(before + 1);
    await expect(
      database.db.transaction(async (tx) => {
        await tx.update(users).set({ name: "Rolled Back" }).where(eq(users.id, "cache-1"));
        throw new Error("undo");
      }),
    ).rejects.toThrow("undo");
    const names = await c.read();
    expect(c.loads()).toBe(before + 2);
    expect(names).toContain("Ines Cache");
    expect(names).not.toContain("Rolled Back");
  });

  it("writes through the raw client and exec count too", async () => {
    const c = counter();
    await c.read();
    await database.pg.query("update users set name = $1 where id = $2", ["Ines Raw", "cache-1"]);
    expect(await c.read()).toContain("Ines Raw");
    await database.pg.exec("update users set name = 'Ines Exec' where id = 'cache-1'");
    expect(await c.read()).toContain("Ines Exec");
    expect(c.loads()).toBe(3);
  });

  it("an answer loading while a write begins is not handed to later callers", async () => {
    const c = counter();
    const early = c.read(); // queued in the database before the update
    const write = database.db
      .update(users)
      .set({ name: "Ines Later" })
      .where(eq(users.id, "cache-1"));
    const [first] = await Promise.all([early, write]);
    expect(first).not.toContain("Ines Later");
    expect(await c.read()).toContain("Ines Later");
    expect(c.loads()).toBe(2);
  });

  it("inside a transaction nothing is cached", async () => {
    let loads = 0;
    await database.db.transaction(async (tx) => {
      for (let i = 0; i < 2; i++) {
        await cachedRead(tx, "in a transaction", async () => {
          loads++;
          return tx.select().from(users);
        });
      }
    });
    expect(loads).toBe(2);
  });

  it("answers are frozen, and a failed load is not kept", async () => {
    const c = counter();
    const names = await c.read();
    expect(() => (names as string[]).push("Mallory")).toThrow(TypeError);
    let attempts = 0;
    const failing = () =>
      cachedRead(database.db, "failing", async () => {
        attempts++;
        if (attempts === 1) throw new Error("database busy");
        return "ok";
      });
    await expect(failing()).rejects.toThrow("database busy");
    expect(await failing()).toBe("ok");
    expect(attempts).toBe(2);
  });
});
