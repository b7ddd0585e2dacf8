/**
 * Opens Covarion's database through Drizzle: the embedded PGlite database
 * in `DATA_DIR` (the default), or a PostgreSQL server when `DATABASE_URL`
 * is set (`pg` pool, Drizzle's node-postgres driver).
 *
 * One code path above the driver: `Database` is Drizzle's driver-neutral
 * PostgreSQL handle with Covarion's schema, so services never know which
 * database they have. The few things Drizzle has no neutral form of live
 * here, each with one implementation per driver: bulk loading CSV rows
 * (`copyCsv`), applying migrations (db/migrate.ts, through `driverOf`), and
 * messages between processes (`channel`).
 *
 * Embedded: PGlite keeps its files in one directory and does NOT lock it —
 * one process only (server/services/data-lock.ts takes the lock before this
 * is called). Writes are tracked for the read cache (db/read-cache.ts).
 * Server: any number of processes may share one database; the read cache
 * is not used there (another process may write at any moment, see
 * db/read-cache.ts), and channels are PostgreSQL's LISTEN/NOTIFY.
 * Always `close()` what you open; an open database keeps Node alive.
 */
import { EventEmitter } from "node:events";
import { PGlite } from "@electric-sql/pglite";
import { drizzle as drizzleNodePg } from "drizzle-orm/node-postgres";
import type { PgDatabase, PgQueryResultHKT } from "drizzle-orm/pg-core";
import { drizzle as drizzlePglite } from "drizzle-orm/pglite";
import pg from "pg";
import { trackWrites } from "./read-cache";
import * as schema from "./schema";

export type Database = PgDatabase<PgQueryResultHKT, typeof schema>;
/** A transaction handle, as passed to `db.transaction(async (tx) => …)`. */
export type Transaction = Parameters<Parameters<Database["transaction"]>[0]>[0];
/** Either the database or an open transaction: services accept both. */
export type Queryable = Database | Transaction;

/** What a database runs on (only the db/ layer looks at this). */
export type Driver = { kind: "embedded"; pg: PGlite } | { kind: "server"; pool: pg.Pool };

interface OpenDatabaseBase {
  db: Database;
  close(): Promise<void>;
}

export interface EmbeddedDatabase extends OpenDatabaseBase {
  kind: "embedded";
  pg: PGlite;
}

export interface ServerDatabase extends OpenDatabaseBase {
  kind: "server";
  pool: pg.Pool;
}

export type OpenDatabase = EmbeddedDatabase | ServerDatabase;

export interface OpenDatabaseOptions {
  /** Directory of the database files; omitted = in memory. */
  dataDir?: string;
  /** A dump made by `pg.dumpDataDir()` to start from (tests start from a migrated copy). */
  loadDataDir?: Blob | File;
}

export interface OpenServerDatabaseOptions {
  /** Most connections this process opens (default 10), besides one for channels. */
  maxConnections?: number;
  /** Where errors of idle connections and of the channel connection go. */
  log?: (error: unknown, context: string) => void;
}

interface Internals {
  driver: Driver;
  events: ChannelHub;
}

const internals = new WeakMap<object, Internals>();

function internalsOf(db: Queryable): Internals {
  const found = internals.get(db);
  if (!found) throw new Error("db/client: this handle was not opened by openDatabase");
  return found;
}

/** The driver under a database handle (for the db/ layer: migrations, bulk loads). */
export function driverOf(db: Database): Driver {
  return internalsOf(db).driver;
}

/** Opens (creating when empty) the embedded database. Cost: 6–9 s on an empty directory, 1–3 s to reopen. */
export async function openDatabase(options: OpenDatabaseOptions = {}): Promise<EmbeddedDatabase> {
  const pg = await PGlite.create({ dataDir: options.dataDir, loadDataDir: options.loadDataDir });
  const db: Database = drizzlePglite({ client: pg, schema });
  trackWrites(pg, db);
  const events = new LocalHub();
  internals.set(db, { driver: { kind: "embedded", pg }, events });
  let closed = false;
  return {
    kind: "embedded",
    db,
    pg,
    async close() {
      if (closed) return;
      closed = true;
      events.close();
      await pg.close();
    },
  };
}

/** Opens a PostgreSQL server's database (`postgres://…`). Checks the connection before answering. */
export async function openServerDatabase(
  url: string,
  options: OpenServerDatabaseOptions = {},
): Promise<ServerDatabase> {
  const log = options.log ?? ((error, context) => console.error(`[covarion] ${context}:`, error));
  const pool = new pg.Pool({ connectionString: url, max: options.maxConnections ?? 10 });
  let closed = false;
  // An idle connection the server closes must not crash the process; the pool replaces it.
  pool.on("error", (error) => {
    if (!closed) log(error, "database connection");
  });
  try {
    await pool.query("select 1");
  } catch (error) {
    await pool.end().catch(() => {});
    throw new Error(
      `cannot reach the PostgreSQL server at ${redactedUrl(url)} (DATABASE_URL): ${(error as Error).message}`,
      { cause: error },
    );
  }
  const db: Database = drizzleNodePg({ client: pool, schema });
  const events = new ServerHub(url, log);
  internals.set(db, { driver: { kind: "server", pool }, events });
  return {
    kind: "server",
    db,
    pool,
    async close() {
      if (closed) return;
      closed = true;
      await events.close();
      await pool.end();
    },
  };
}

/** A database address without its password, for messages and logs. */
export function redactedUrl(url: string): string {
  try {
    const parsed = new URL(url);
    if (parsed.password) parsed.password = "***";
    return parsed.toString();
  } catch {
    return "(an address that cannot be read)";
  }
}

/** Opens the database the configuration names: the server at `databaseUrl`, else the embedded one in `databaseDir`. */
export function openConfiguredDatabase(
  config: { databaseUrl: string | null; databaseDir: string },
  options: OpenServerDatabaseOptions = {},
): Promise<OpenDatabase> {
  return config.databaseUrl
    ? openServerDatabase(config.databaseUrl, options)
    : openDatabase({ dataDir: config.databaseDir });
}

// ─── Bulk loading ───

/**
 * Loads CSV rows (PostgreSQL's CSV format: an unquoted empty field is NULL)
 * into `table (columns…)` with COPY — the fastest way into either database.
 * Not inside a transaction: the caller makes the rows visible afterwards.
 */
export async function copyCsv(
  db: Database,
  table: string,
  columns: readonly string[],
  csv: Uint8Array,
): Promise<void> {
  const driver = driverOf(db);
  const target = `${pg.escapeIdentifier(table)} (${columns.map((c) => pg.escapeIdentifier(c)).join(", ")})`;
  if (driver.kind === "embedded") {
    await driver.pg.query(`COPY ${target} FROM '/dev/blob' WITH (FORMAT csv)`, [], {
      blob: new Blob([csv as Uint8Array<ArrayBuffer>]),
    });
    return;
  }
  const client = await driver.pool.connect();
  try {
    await copyIn(client, `COPY ${target} FROM STDIN WITH (FORMAT csv)`, csv);
  } finally {
    client.release();
  }
}

/**
 * COPY … FROM STDIN on one connection: `pg`'s query object, answering the
 * server's request for data with the bytes (the protocol's CopyData and
 * CopyDone messages) instead of refusing it as a plain query does.
 */
function copyIn(client: pg.PoolClient, statement: string, data: Uint8Array): Promise<void> {
  return new Promise<void>((resolve, reject) => {
    const query = new pg.Query(statement, undefined, (error: Error | undefined) =>
      error ? reject(error) : resolve(),
    ) as pg.Query & {
      handleCopyInResponse(connection: {
        sendCopyFromChunk(chunk: Buffer): void;
        endCopyFrom(): void;
      }): void;
    };
    query.handleCopyInResponse = (connection) => {
      connection.sendCopyFromChunk(Buffer.from(data.buffer, data.byteOffset, data.byteLength));
      connection.endCopyFrom();
    };
    client.query(query);
  });
}

// ─── Claims between processes ───

/** A claim on a key, held until released (see `claim`). */
export interface Claim {
  release(): Promise<void>;
}

const noClaim: Claim = { release: async () => {} };

/**
 * Claims `key` for this process until `release()`: on a server, a session
 * advisory lock on a connection of its own (so hold claims briefly and
 * few at a time: each holds a pooled connection), which `tryClaim` in any
 * other process sees; embedded there is no other process and nothing to hold.
 */
export async function claim(db: Database, key: string): Promise<Claim> {
  return (await claimOn(db, key, true)) as Claim;
}

/** Claims `key` unless another process holds it (then null). Same rules as `claim`. */
export function tryClaim(db: Database, key: string): Promise<Claim | null> {
  return claimOn(db, key, false);
}

async function claimOn(db: Database, key: string, wait: boolean): Promise<Claim | null> {
  const driver = driverOf(db);
  if (driver.kind === "embedded") return noClaim;
  const client = await driver.pool.connect();
  try {
    const { rows } = await client.query<{ held: boolean }>(
      wait
        ? "select pg_advisory_lock(hashtextextended($1, 0)) is not null as held"
        : "select pg_try_advisory_lock(hashtextextended($1, 0)) as held",
      [key],
    );
    if (!rows[0]?.held) {
      client.release();
      return null;
    }
  } catch (error) {
    client.release(error as Error);
    throw error;
  }
  let released = false;
  return {
    async release() {
      if (released) return;
      released = true;
      try {
        await client.query("select pg_advisory_unlock(hashtextextended($1, 0))", [key]);
        client.release();
      } catch (error) {
        // A connection that cannot unlock is closed, which ends its locks.
        client.release(error as Error);
      }
    },
  };
}

// ─── Channels between processes ───

/**
 * A named channel of small JSON messages that reaches every process on the
 * database, the sender included: on a server, PostgreSQL's LISTEN/NOTIFY
 * (a message is at most ~7,900 bytes of JSON; messages one process sends
 * arrive in the order it sent them); embedded, the process itself (it is
 * the only one). A message sent while no connection listens is lost, so a
 * listener reads the current state after subscribing.
 */
export interface Channel<T> {
  publish(message: T): void;
  /** Calls `handler` with every message until the returned function is called. */
  subscribe(handler: (message: T) => void): () => void;
  /** Resolves once this channel's subscriptions receive messages (on a server: LISTEN has been answered). */
  ready(): Promise<void>;
}

export function channel<T>(db: Database, name: string): Channel<T> {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`channel: bad name ${name}`);
  const hub = internalsOf(db).events;
  return {
    publish: (message) => hub.publish(name, JSON.stringify(message)),
    subscribe: (handler) => hub.subscribe(name, (text) => handler(JSON.parse(text) as T)),
    ready: () => hub.ready(name),
  };
}

interface ChannelHub {
  publish(name: string, payload: string): void;
  subscribe(name: string, handler: (payload: string) => void): () => void;
  ready(name: string): Promise<void>;
}

class LocalHub implements ChannelHub {
  private readonly emitter = new EventEmitter().setMaxListeners(0);
  publish(name: string, payload: string): void {
    this.emitter.emit(name, payload);
  }
  subscribe(name: string, handler: (payload: string) => void): () => void {
    this.emitter.on(name, handler);
    return () => this.emitter.off(name, handler);
  }
  async ready(): Promise<void> {}
  close(): void {
    this.emitter.removeAllListeners();
  }
}

/**
 * LISTEN on one connection of its own (reconnecting after a loss), NOTIFY on
 * another, one message after the other so they arrive in order.
 */
class ServerHub implements ChannelHub {
  private readonly handlers = new Map<string, Set<(payload: string) => void>>();
  private readonly listening = new Map<string, Promise<void>>();
  private listener: pg.Client | null = null;
  private connecting: Promise<pg.Client> | null = null;
  private sender: pg.Client | null = null;
  private sending: Promise<unknown> = Promise.resolve();
  private retry: ReturnType<typeof setTimeout> | null = null;
  private closed = false;

  constructor(
    private readonly url: string,
    private readonly log: (error: unknown, context: string) => void,
  ) {}

  publish(name: string, payload: string): void {
    if (this.closed) return;
    this.sending = this.sending
      .then(async () => {
        if (!this.sender) {
          const client = new pg.Client({ connectionString: this.url });
          client.on("error", () => {
            if (this.sender === client) this.sender = null;
          });
          client.on("end", () => {
            if (this.sender === client) this.sender = null;
          });
          await client.connect();
          this.sender = client;
        }
        await this.sender.query("select pg_notify($1, $2)", [name, payload]);
      })
      .catch((error) => this.log(error, `channel ${name}`));
  }

  subscribe(name: string, handler: (payload: string) => void): () => void {
    let set = this.handlers.get(name);
    if (!set) {
      set = new Set();
      this.handlers.set(name, set);
      this.listening.set(name, this.listen(name));
    }
    set.add(handler);
    return () => {
      set.delete(handler);
    };
  }

  async ready(name: string): Promise<void> {
    await this.listening.get(name);
  }

  private async listen(name: string): Promise<void> {
    try {
      const client = await this.connection();
      await client.query(`LISTEN ${pg.escapeIdentifier(name)}`);
    } catch (error) {
      if (this.closed) return;
      this.log(error, `channel ${name}`);
      this.listenAgainSoon();
    }
  }

  /** Listens to every channel again after a second, on a new connection (messages sent in between are lost, see Channel). */
  private listenAgainSoon(): void {
    if (this.retry || this.closed) return;
    this.retry = setTimeout(() => {
      this.retry = null;
      if (this.closed) return;
      for (const name of this.handlers.keys()) this.listening.set(name, this.listen(name));
    }, 1000);
  }

  private connection(): Promise<pg.Client> {
    if (this.listener) return Promise.resolve(this.listener);
    if (!this.connecting) {
      this.connecting = (async () => {
        const client = new pg.Client({ connectionString: this.url });
        const lost = (error?: unknown) => {
          if (this.listener !== client) return;
          this.listener = null;
          if (this.closed) return;
          if (error) this.log(error, "channel connection");
          this.listenAgainSoon();
        };
        client.on("error", lost);
        client.on("end", () => lost());
        client.on("notification", (message) => {
          for (const handler of this.handlers.get(message.channel) ?? []) {
            try {
              handler(message.payload ?? "");
            } catch (error) {
              this.log(error, `channel ${message.channel} handler`);
            }
          }
        });
        try {
          await client.connect();
        } finally {
          this.connecting = null;
        }
        this.listener = client;
        return client;
      })();
    }
    return this.connecting;
  }

  async close(): Promise<void> {
    this.closed = true;
    if (this.retry) clearTimeout(this.retry);
    this.handlers.clear();
    await this.sending.catch(() => {});
    const listener = this.listener;
    const sender = this.sender;
    this.listener = null;
    this.sender = null;
    await Promise.all([listener?.end(), sender?.end()].map((p) => p?.catch(() => {})));
  }
}
