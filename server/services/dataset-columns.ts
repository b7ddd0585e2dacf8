/**
 * The number columns of a brain-table version in binary form
 * (`dataset_columns`, migration 0017): one row per slot holding the
 * column's values in row order as little-endian IEEE-754 doubles, NaN
 * where missing. Written while the version is stored (before it is marked
 * complete), read when a fit loads the version, so the values are never
 * parsed from text again.
 *
 * The bytes travel as base64 text through SQL's `encode`/`decode`: the
 * same on the embedded database and on a PostgreSQL server (no driver's
 * own form of `bytea` — Uint8Array or Buffer — is involved), and the
 * embedded database moves long text far faster than `bytea` in its own
 * wire form (about 1 ms per 20,000-value column, against ~50 ms). Decoding
 * base64 is Node's own (native) code.
 *
 * Versions stored before migration 0017 have no columns; `hasColumns` says
 * so and the caller reads their rows' text instead.
 */
import { endianness } from "node:os";
import { and, asc, eq, gte, lt, sql } from "drizzle-orm";
import type { Queryable } from "../../db/client";
import { datasetColumns } from "../../db/schema";

/** Values read per query at most (≈ 0.8 MB of doubles: a short hold of the database and the event loop). */
const READ_VALUES = 100_000;
/** Values written per INSERT at most: writing costs more per value than reading. */
const WRITE_VALUES = 40_000;

const bigEndian = endianness() === "BE";

const nextTurn = () => new Promise<void>((resolve) => setImmediate(resolve));

/** Slots per batch of at most `values` values for columns of `rows` values (at least one). */
function slotsPerBatch(values: number, rows: number): number {
  return Math.max(1, Math.floor(values / Math.max(1, rows)));
}

/** A column's values as base64 of their little-endian bytes. */
export function columnToBase64(values: Float64Array): string {
  const bytes = Buffer.from(values.buffer, values.byteOffset, values.byteLength);
  if (!bigEndian) return bytes.toString("base64");
  return Buffer.from(bytes).swap64().toString("base64");
}

/** The inverse of columnToBase64 (whitespace, as SQL's `encode` writes it, is ignored). */
export function columnFromBase64(text: string, rows: number): Float64Array<ArrayBuffer> {
  const bytes = Buffer.from(text, "base64");
  if (bytes.byteLength !== rows * 8)
    throw new Error(`dataset column: ${bytes.byteLength} bytes stored, ${rows * 8} expected`);
  if (bigEndian) bytes.swap64();
  const out = new Float64Array(rows);
  new Uint8Array(out.buffer).set(bytes);
  return out;
}

/**
 * Stores a version's number columns, `columns[s]` as slot s, in batches with
 * a turn of the event loop between them. Each column has one value per row
 * of the version, in row order.
 */
export async function storeColumns(
  db: Queryable,
  datasetId: string,
  columns: readonly Float64Array[],
): Promise<void> {
  if (columns.length === 0) return;
  const per = slotsPerBatch(WRITE_VALUES, columns[0].length);
  for (let first = 0; first < columns.length; first += per) {
    const batch = columns.slice(first, first + per).map((values, k) => ({
      datasetId,
      slot: first + k,
      values: sql`decode(${columnToBase64(values)}, 'base64')`,
    }));
    await db.insert(datasetColumns).values(batch);
    await nextTurn();
  }
}

/** Whether a version's number columns are stored in binary form (versions stored since 0017). */
export async function hasColumns(db: Queryable, datasetId: string): Promise<boolean> {
  const [row] = await db
    .select({ slot: datasetColumns.slot })
    .from(datasetColumns)
    .where(eq(datasetColumns.datasetId, datasetId))
    .limit(1);
  return row !== undefined;
}

/**
 * Calls `each(slot, values)` for every stored column of a version whose
 * slot is in `slots`, reading a batch of neighbouring slots per query with
 * a turn of the event loop between queries. Throws when a slot is missing.
 */
export async function forEachColumn(
  db: Queryable,
  datasetId: string,
  rows: number,
  slots: readonly number[],
  each: (slot: number, values: Float64Array<ArrayBuffer>) => void,
): Promise<void> {
  const wanted = [...new Set(slots)].sort((a, b) => a - b);
  const per = slotsPerBatch(READ_VALUES, rows);
  let k = 0;
  while (k < wanted.length) {
    const from = wanted[k];
    let end = k;
    while (end < wanted.length && wanted[end] < from + per) end++;
    const found = await db
      .select({
        slot: datasetColumns.slot,
        values: sql<string>`encode(${datasetColumns.values}, 'base64')`,
      })
      .from(datasetColumns)
      .where(
        and(
          eq(datasetColumns.datasetId, datasetId),
          gte(datasetColumns.slot, from),
          lt(datasetColumns.slot, from + per),
        ),
      )
      .orderBy(asc(datasetColumns.slot));
    const bySlot = new Map(found.map((f) => [f.slot, f.values]));
    for (let j = k; j < end; j++) {
      const text = bySlot.get(wanted[j]);
      if (text === undefined)
        throw new Error(`dataset column: slot ${wanted[j]} of version ${datasetId} is missing`);
      each(wanted[j], columnFromBase64(text, rows));
    }
    k = end;
    if (k < wanted.length) await nextTurn();
  }
}
