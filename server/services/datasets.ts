/**
 * Datasets: uploads, previews, confirmation into immutable versions, and
 * reading versions back.
 *
 * Flow: an upload arrives as a file on disk (server/http/upload-storage.ts),
 * is read and checked by the intake library in a worker thread
 * (server/jobs/intake-jobs.ts) and answered with a preview (first rows,
 * column types, problems, identifier columns); the file waits on disk,
 * held by the PreviewStore, which removes it once it is confirmed or
 * expires (a refused upload's file is removed at once). Confirmation applies the uploader's decisions (type
 * changes, dropped columns, reasons for keeping identifier columns) in a
 * worker thread, which also builds the rows to store; the main thread then
 * stores them (storeVersion). An upload whose problems no decision can
 * resolve is refused at upload (422); see `previewUpload` in the intake.
 *
 * Storing never holds the database for long (it answers one query or
 * transaction at a time, for every request): the version is written
 * incomplete, its rows in bulk loads of about a thousand rows each with a
 * turn of the event loop between them, and then, in one short transaction,
 * the version is marked complete and its audit events recorded. Only
 * complete versions are ever read, so a stop in the middle leaves nothing
 * visible; what it left is deleted before the next version is stored.
 *
 * Versions are numbered 1, 2, … per study and kind; the newest is current.
 * Services receive the database, the store, the intake pool and the time
 * as parameters.
 */
import { rm } from "node:fs/promises";
import { and, asc, desc, eq, getTableName, gte, inArray, lt, sql } from "drizzle-orm";
import { claim, copyCsv, type Database, type Queryable, tryClaim } from "../../db/client";
import {
  datasetColumns,
  datasetRows,
  datasetVersions,
  users,
  type DatasetRow,
  type DatasetVersion,
} from "../../db/schema";
import type {
  DatasetKind,
  DatasetView,
  PersonRef,
  PreviewView,
  RowsPage,
  TablePreview,
  UploadOptions,
} from "../../contract/views/datasets";
import type { BrainTable, Confirmation, ParticipantSheet, SheetColumn } from "../intake";
import { conflict, gone, notFound } from "../http/errors";
import type { UploadLimits } from "../jobs/intake-file";
import { type IntakeJobs, intakeJobs } from "../jobs/intake-jobs";
import { type EncodedVersion, STORED_ROW_COLUMNS, decodeNumbers } from "../jobs/intake-rows";
import { recordEvent } from "./audit";
import { forEachColumn, hasColumns, storeColumns } from "./dataset-columns";
import { applyCurrentPlanRules } from "./plans";
import type { PreviewStore, StoredPreview } from "./preview-store";

// ─── Upload and preview ───

/** The answer (410) to a confirm or read of a preview that is no longer held: it expired, or the server restarted. */
export const UPLOAD_EXPIRED = "this upload expired; upload the file again";

export interface UploadInput {
  studyId: string;
  kind: DatasetKind;
  fileName: string;
  /** The uploaded file on disk (the store takes it over; removed when refused), or its bytes. */
  upload: { path: string } | { bytes: Uint8Array };
  /** The file's size as received. */
  byteSize: number;
  /** The limits the file is read under (MAX_UPLOAD_MB, MAX_UPLOAD_COLUMNS). */
  limits?: UploadLimits;
  options: UploadOptions;
  uploader: PersonRef;
  now: Date;
}

/**
 * Reads and checks an upload in a worker thread and keeps it as a preview.
 * Throws IntakeError (400 unreadable, 413 too large, 422 content refused)
 * — nothing is kept then, and the uploaded file is removed.
 */
export async function previewUpload(
  store: PreviewStore,
  input: UploadInput,
  jobs: IntakeJobs = intakeJobs(),
): Promise<PreviewView> {
  let answer: { preview: TablePreview; sha256: string };
  try {
    answer = await jobs.preview({
      ...input.upload,
      limits: input.limits,
      fileName: input.fileName,
      kind: input.kind,
      options: input.options,
    });
  } catch (error) {
    if ("path" in input.upload) await rm(input.upload.path, { force: true }).catch(() => {});
    throw error;
  }
  const { preview, sha256 } = answer;
  const stored: StoredPreview = {
    id: store.newId(input.studyId),
    studyId: input.studyId,
    kind: input.kind,
    fileName: input.fileName,
    upload: input.upload,
    byteSize: input.byteSize,
    limits: input.limits,
    sha256,
    uploadedBy: input.uploader.id,
    uploadedAt: input.now,
    expiresAt: new Date(input.now.getTime() + store.ttlMs),
    options: input.options,
    preview,
  };
  store.put(stored, input.now);
  return previewView(stored, input.uploader);
}

function previewView(p: StoredPreview, uploader: PersonRef): PreviewView {
  return {
    ...p.preview,
    id: p.id,
    studyId: p.studyId,
    status: "preview",
    fileName: p.fileName,
    sha256: p.sha256,
    byteSize: p.byteSize,
    options: p.options,
    uploadedBy: uploader,
    uploadedAt: p.uploadedAt.toISOString(),
    expiresAt: p.expiresAt.toISOString(),
  };
}

// ─── Confirmation ───

export interface ConfirmInput {
  studyId: string;
  datasetId: string;
  actor: PersonRef;
  confirmation: Confirmation;
  now: Date;
}

/**
 * Confirms a preview into a stored version. Throws 404 (no such upload in
 * this study), 409 (already confirmed, or being stored), 410 (the preview
 * expired), and IntakeError 422 (an identifier column left undecided, a
 * named column that does not exist, a cell that does not fit the chosen
 * type).
 */
export async function confirmUpload(
  db: Database,
  store: PreviewStore,
  input: ConfirmInput,
  jobs: IntakeJobs = intakeJobs(),
): Promise<DatasetView> {
  const found = store.get(input.datasetId, input.now, input.studyId);
  if (found === undefined || found === "expired" || found.studyId !== input.studyId) {
    const [stored] = await db
      .select({
        version: datasetVersions.version,
        studyId: datasetVersions.studyId,
        complete: datasetVersions.complete,
      })
      .from(datasetVersions)
      .where(eq(datasetVersions.id, input.datasetId));
    if (stored && stored.studyId === input.studyId && stored.complete)
      throw conflict(`This upload is already confirmed as version ${stored.version}.`);
    if (found === "expired") throw gone(UPLOAD_EXPIRED);
    throw notFound("Upload not found.");
  }
  if (!store.claim(found.id))
    throw conflict("This upload is being stored; wait until its version is shown.");
  try {
    const options: Confirmation = { ...found.options, ...withoutUndefined(input.confirmation) };
    const view = await storeVersion(
      db,
      {
        id: found.id,
        studyId: found.studyId,
        kind: found.kind,
        fileName: found.fileName,
        ...found.upload,
        byteSize: found.byteSize,
        limits: found.limits,
        confirmation: options,
        uploadedBy: found.uploadedBy,
        uploadedAt: found.uploadedAt,
        confirmedBy: input.actor.id,
        now: input.now,
      },
      jobs,
    );
    store.remove(found.id);
    return view;
  } finally {
    store.release(found.id);
  }
}

function withoutUndefined<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}

export interface StoreVersionInput {
  id: string;
  studyId: string;
  kind: DatasetKind;
  fileName: string;
  /** The uploaded file on disk, or its bytes (one of the two). */
  path?: string;
  bytes?: Uint8Array;
  /** The file's size as received (default: the bytes' length). */
  byteSize?: number;
  limits?: UploadLimits;
  confirmation: Confirmation;
  uploadedBy: string;
  uploadedAt: Date;
  confirmedBy: string;
  now: Date;
}

/** Rows deleted per statement when an incomplete version is removed. */
const DELETE_BATCH = 5000;

/**
 * Versions this process is storing right now, per database; another process
 * on a shared database claims the versions it stores (`versionClaim`). An
 * incomplete version neither lists nor claims was left by a stop.
 */
const storing = new WeakMap<Database, Set<string>>();

const versionClaim = (id: string) => `dataset version ${id}`;

const nextTurn = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * Reads, types and stores one version with its rows and audit events (see
 * the module note: written incomplete, rows in bulk loads yielding to the
 * event loop between them, then marked complete with its audit events in
 * one short transaction). Used by confirmation and by the demo seed (the
 * same path for both). Throws IntakeError as confirmTable does.
 */
export async function storeVersion(
  db: Database,
  input: StoreVersionInput,
  jobs: IntakeJobs = intakeJobs(),
): Promise<DatasetView> {
  const byteSize = input.byteSize ?? input.bytes?.byteLength ?? 0;
  const { encoded, sha256 } = await jobs.encode({
    path: input.path,
    bytes: input.bytes,
    limits: input.limits,
    fileName: input.fileName,
    kind: input.kind,
    confirmation: input.confirmation,
    datasetId: input.id,
  });
  let mine = storing.get(db);
  if (!mine) {
    mine = new Set();
    storing.set(db, mine);
  }
  mine.add(input.id);
  // Other processes on a shared database see the claim and leave this version alone.
  const claimed = await claim(db, versionClaim(input.id));
  try {
    await removeIncompleteVersions(db);
    const version = await db.transaction(async (tx) => {
      const [last] = await tx
        .select({ n: sql<number>`coalesce(max(${datasetVersions.version}), 0)` })
        .from(datasetVersions)
        .where(
          and(eq(datasetVersions.studyId, input.studyId), eq(datasetVersions.kind, input.kind)),
        );
      const next = Number(last?.n ?? 0) + 1;
      await tx.insert(datasetVersions).values({
        id: input.id,
        studyId: input.studyId,
        kind: input.kind,
        version: next,
        fileName: input.fileName,
        sha256,
        byteSize,
        delimiter: encoded.delimiter,
        layout: encoded.layout,
        idColumn: encoded.idColumn,
        sessionColumn: encoded.sessionColumn,
        seSuffix: encoded.seSuffix,
        columns: encoded.columns,
        droppedColumns: encoded.dropped,
        identifierDecisions: encoded.decisions,
        rowCount: encoded.rowCount,
        participantCount: encoded.participantCount,
        uploadedBy: input.uploadedBy,
        uploadedAt: input.uploadedAt,
        confirmedBy: input.confirmedBy,
        confirmedAt: input.now,
        complete: false,
      });
      return next;
    });
    try {
      // A brain table's number columns in binary form first, then let them go (they can be
      // hundreds of megabytes) while the rows are stored.
      await storeColumns(db, input.id, encoded.numberColumns);
      encoded.numberColumns = [];
      await loadRows(db, encoded);
      await db.transaction(async (tx) => {
        await tx
          .update(datasetVersions)
          .set({ complete: true })
          .where(eq(datasetVersions.id, input.id));
        await recordEvent(tx, {
          studyId: input.studyId,
          actorId: input.confirmedBy,
          kind: "dataset.confirmed",
          targetType: "dataset",
          targetId: input.id,
          after: {
            kind: input.kind,
            version,
            fileName: input.fileName,
            sha256,
            byteSize,
            rows: encoded.rowCount,
            participants: encoded.participantCount,
            columns: encoded.columns.map((c) => ({ name: c.name, type: c.type, role: c.role })),
            droppedColumns: encoded.dropped,
            uploadedAt: input.uploadedAt,
          },
          at: input.now,
        });
        for (const d of encoded.decisions) {
          await recordEvent(tx, {
            studyId: input.studyId,
            actorId: input.confirmedBy,
            kind: "dataset.identifier_confirmed",
            targetType: "dataset",
            targetId: input.id,
            after: d,
            at: input.now,
          });
        }
        // The current analysis plan's exclusion rules reach the new data (services/plans.ts).
        await applyCurrentPlanRules(tx, { id: input.confirmedBy }, input.studyId, input.now);
      });
    } catch (error) {
      await removeVersion(db, input.id, encoded.rowCount).catch(() => {});
      throw error;
    }
  } finally {
    mine.delete(input.id);
    await claimed.release();
  }
  const view = await findVersion(db, input.studyId, input.id);
  if (!view) throw new Error("storeVersion: the stored version cannot be read back");
  return view;
}

/** Bulk-loads the encoded rows chunk by chunk, with a turn of the event loop after each, so requests are served in between. */
async function loadRows(db: Database, encoded: EncodedVersion): Promise<void> {
  // The bulk load is COPY (db/client.ts); the ORM has no form of it.
  const table = getTableName(datasetRows);
  let from = 0;
  for (const end of encoded.chunkEnds) {
    await copyCsv(db, table, STORED_ROW_COLUMNS, encoded.csv.subarray(from, end));
    from = end;
    await nextTurn();
  }
}

/** Deletes an incomplete version, its number columns and its rows (the triggers refuse this for complete versions), rows in batches. */
async function removeVersion(db: Database, id: string, rowCount: number): Promise<void> {
  await db.delete(datasetColumns).where(eq(datasetColumns.datasetId, id));
  for (let from = 0; from < rowCount; from += DELETE_BATCH) {
    await db
      .delete(datasetRows)
      .where(
        and(
          eq(datasetRows.datasetId, id),
          gte(datasetRows.position, from),
          lt(datasetRows.position, from + DELETE_BATCH),
        ),
      );
    await nextTurn();
  }
  await db.delete(datasetRows).where(eq(datasetRows.datasetId, id));
  await db
    .delete(datasetVersions)
    .where(and(eq(datasetVersions.id, id), eq(datasetVersions.complete, false)));
}

/** Deletes the incomplete versions a stop in the middle of storing left behind (never one this process is storing). */
export async function removeIncompleteVersions(db: Database): Promise<number> {
  const mine = storing.get(db) ?? new Set<string>();
  const left = await db
    .select({ id: datasetVersions.id, rowCount: datasetVersions.rowCount })
    .from(datasetVersions)
    .where(eq(datasetVersions.complete, false));
  let removed = 0;
  for (const v of left) {
    if (mine.has(v.id)) continue;
    const claimed = await tryClaim(db, versionClaim(v.id));
    if (!claimed) continue; // another process is storing it
    try {
      await removeVersion(db, v.id, v.rowCount);
    } finally {
      await claimed.release();
    }
    removed += 1;
  }
  return removed;
}

// ─── Reading versions ───

async function people(db: Queryable, ids: readonly string[]): Promise<Map<string, PersonRef>> {
  const unique = [...new Set(ids)];
  if (unique.length === 0) return new Map();
  const rows = await db
    .select({ id: users.id, name: users.name, email: users.email })
    .from(users)
    .where(inArray(users.id, unique));
  return new Map(rows.map((r) => [r.id, r]));
}

async function currentIds(db: Queryable, studyId: string): Promise<Set<string>> {
  const rows = await db
    .selectDistinctOn([datasetVersions.kind], { id: datasetVersions.id })
    .from(datasetVersions)
    .where(and(eq(datasetVersions.studyId, studyId), eq(datasetVersions.complete, true)))
    .orderBy(datasetVersions.kind, desc(datasetVersions.version));
  return new Set(rows.map((r) => r.id));
}

function versionView(
  v: DatasetVersion,
  current: boolean,
  who: Map<string, PersonRef>,
): DatasetView {
  const person = (id: string): PersonRef => who.get(id) ?? { id, name: null, email: null };
  return {
    id: v.id,
    studyId: v.studyId,
    kind: v.kind,
    status: "confirmed",
    version: v.version,
    current,
    fileName: v.fileName,
    sha256: v.sha256,
    byteSize: v.byteSize,
    delimiter: v.delimiter,
    layout: v.layout,
    idColumn: v.idColumn,
    sessionColumn: v.sessionColumn,
    seSuffix: v.seSuffix,
    columns: v.columns,
    droppedColumns: v.droppedColumns,
    identifierDecisions: v.identifierDecisions,
    rowCount: v.rowCount,
    participantCount: v.participantCount,
    regions:
      v.kind === "brain" ? v.columns.filter((c) => c.role === "region").map((c) => c.name) : null,
    uploadedBy: person(v.uploadedBy),
    uploadedAt: v.uploadedAt.toISOString(),
    confirmedBy: person(v.confirmedBy),
    confirmedAt: v.confirmedAt.toISOString(),
  };
}

async function findVersion(
  db: Queryable,
  studyId: string,
  id: string,
): Promise<DatasetView | null> {
  const [v] = await db
    .select()
    .from(datasetVersions)
    .where(
      and(
        eq(datasetVersions.id, id),
        eq(datasetVersions.studyId, studyId),
        eq(datasetVersions.complete, true),
      ),
    );
  if (!v) return null;
  const [current, who] = await Promise.all([
    currentIds(db, studyId),
    people(db, [v.uploadedBy, v.confirmedBy]),
  ]);
  return versionView(v, current.has(v.id), who);
}

/** Every version of a study (newest first) and its live previews (newest first). */
export async function listDatasets(
  db: Database,
  store: PreviewStore,
  studyId: string,
  now: Date,
): Promise<(DatasetView | PreviewView)[]> {
  const versions = await db
    .select()
    .from(datasetVersions)
    .where(and(eq(datasetVersions.studyId, studyId), eq(datasetVersions.complete, true)))
    .orderBy(desc(datasetVersions.confirmedAt), desc(datasetVersions.version));
  const previews = store.forStudy(studyId, now).reverse();
  const who = await people(db, [
    ...versions.flatMap((v) => [v.uploadedBy, v.confirmedBy]),
    ...previews.map((p) => p.uploadedBy),
  ]);
  const current = await currentIds(db, studyId);
  const person = (id: string): PersonRef => who.get(id) ?? { id, name: null, email: null };
  return [
    ...previews.map((p) => ({
      ...previewView(p, person(p.uploadedBy)),
      rows: [] as TablePreview["rows"],
    })),
    ...versions.map((v) => versionView(v, current.has(v.id), who)),
  ];
}

export interface RowsQuery {
  offset: number;
  limit: number;
}

/**
 * One dataset — a version with a page of its rows, or a live preview — by
 * id. `withRows: false` leaves participant-level rows out (restricted
 * studies, roles that may not read them). Throws 404 / 410.
 */
export async function getDataset(
  db: Database,
  store: PreviewStore,
  studyId: string,
  id: string,
  query: RowsQuery & { withRows: boolean },
  now: Date,
): Promise<(DatasetView & { rows: RowsPage | null }) | PreviewView> {
  const p = store.get(id, now, studyId);
  if (p !== undefined && p !== "expired" && p.studyId === studyId) {
    const who = await people(db, [p.uploadedBy]);
    const view = previewView(
      p,
      who.get(p.uploadedBy) ?? { id: p.uploadedBy, name: null, email: null },
    );
    return query.withRows ? view : { ...view, rows: [] };
  }
  const v = await findVersion(db, studyId, id);
  if (!v) {
    if (p === "expired") throw gone(UPLOAD_EXPIRED);
    throw notFound("Dataset not found.");
  }
  return { ...v, rows: query.withRows ? await rowsPage(db, v, query) : null };
}

async function rowsPage(db: Queryable, v: DatasetView, q: RowsQuery): Promise<RowsPage> {
  // Positions run 0, 1, … without gaps: a range reads one page without walking the rows before it.
  const rows = await db
    .select()
    .from(datasetRows)
    .where(
      and(
        eq(datasetRows.datasetId, v.id),
        gte(datasetRows.position, q.offset),
        lt(datasetRows.position, q.offset + q.limit),
      ),
    )
    .orderBy(asc(datasetRows.position));
  const numberCount = v.columns.filter((c) => c.type === "number").length;
  return {
    total: v.rowCount,
    offset: q.offset,
    limit: q.limit,
    items: rows.map((r) => {
      const numbers = decodeNumbers(r.numbers, numberCount);
      return {
        row: r.sourceRow,
        cells: v.columns.map((c) => {
          if (c.role === "id") return r.participantId;
          if (c.role === "session") return r.session;
          if (c.type === "number") {
            const x = numbers[c.slot as number];
            return Number.isNaN(x) ? null : x;
          }
          return r.categories[c.slot as number] ?? null;
        }),
      };
    }),
  };
}

/** The current (newest) version of each kind in a study, or null. */
export async function currentVersions(
  db: Queryable,
  studyId: string,
): Promise<{ brain: DatasetVersion | null; participants: DatasetVersion | null }> {
  const ids = await currentIds(db, studyId);
  if (ids.size === 0) return { brain: null, participants: null };
  const rows = await db
    .select()
    .from(datasetVersions)
    .where(inArray(datasetVersions.id, [...ids]));
  return {
    brain: rows.find((r) => r.kind === "brain") ?? null,
    participants: rows.find((r) => r.kind === "participants") ?? null,
  };
}

/** Rows read per query when a whole version is read (fewer for wide rows, see pageRows). */
const READ_PAGE = 5000;
/** Numbers decoded per page at most: a page of a 1,000-region table decodes in well under 100 ms. */
const PAGE_NUMBERS = 250_000;

/** Rows per page for a version: READ_PAGE, or fewer so a page holds at most PAGE_NUMBERS numbers. */
function pageRows(v: DatasetVersion): number {
  const numbers = v.columns.filter((c) => c.type === "number").length;
  return Math.max(1, Math.min(READ_PAGE, Math.floor(PAGE_NUMBERS / Math.max(1, numbers))));
}

/**
 * Calls `each` with the rows of a version page by page, in order, with a
 * turn of the event loop between pages (a version can hold hundreds of
 * thousands of rows; one query for all would hold the database meanwhile).
 */
export async function forEachRowPage(
  db: Queryable,
  v: DatasetVersion,
  each: (rows: readonly DatasetRow[], first: number) => void,
): Promise<void> {
  const page = pageRows(v);
  for (let first = 0; first < v.rowCount; first += page) {
    const rows = await db
      .select()
      .from(datasetRows)
      .where(
        and(
          eq(datasetRows.datasetId, v.id),
          gte(datasetRows.position, first),
          lt(datasetRows.position, first + page),
        ),
      )
      .orderBy(asc(datasetRows.position));
    each(rows, first);
    if (first + page < v.rowCount) await nextTurn();
  }
}

/**
 * A stored brain-table version as the intake's BrainTable (the form fits
 * run on). Versions stored since migration 0017 give their values from the
 * binary number columns (services/dataset-columns.ts) and only the row
 * keys (participant, session, source row) from their rows; older ones
 * decode their rows' numbers from text. Both give the same numbers.
 */
export async function loadBrainTable(db: Queryable, v: DatasetVersion): Promise<BrainTable> {
  const regionColumns = v.columns.filter((c) => c.role === "region");
  const n = v.rowCount;
  const seSlot = regionColumns.map(
    (rc) => v.columns.find((c) => c.role === "se" && c.region === rc.region)?.slot ?? -1,
  );
  const binary = await hasColumns(db, v.id);
  // Binary columns arrive as arrays of their own; text fills arrays made here.
  const empty = new Float64Array(0);
  const values: Float64Array[] = regionColumns.map(() => (binary ? empty : new Float64Array(n)));
  const standardErrors: (Float64Array | null)[] = seSlot.map((s) =>
    s < 0 ? null : binary ? empty : new Float64Array(n),
  );
  const entries: BrainTable["entries"][number][] = [];
  if (binary) {
    const region = new Map(regionColumns.map((rc, r) => [rc.slot as number, r]));
    const se = new Map<number, number>();
    seSlot.forEach((s, r) => {
      if (s >= 0) se.set(s, r);
    });
    await forEachColumn(db, v.id, n, [...region.keys(), ...se.keys()], (slot, column) => {
      const r = region.get(slot);
      if (r !== undefined) values[r] = column;
      const q = se.get(slot);
      if (q !== undefined) standardErrors[q] = column;
    });
    await forEachRowKeyPage(db, v, (rows) => {
      for (const row of rows)
        entries.push({ id: row.participantId, session: row.session, row: row.sourceRow });
    });
    return brainTableOf(v, regionColumns, entries, values, standardErrors);
  }
  const numberCount = v.columns.filter((c) => c.type === "number").length;
  await forEachRowPage(db, v, (rows, first) => {
    rows.forEach((row, j) => {
      const k = first + j;
      const numbers = decodeNumbers(row.numbers, numberCount);
      regionColumns.forEach((rc, r) => {
        values[r][k] = numbers[rc.slot as number];
        const se = standardErrors[r];
        if (se !== null) se[k] = numbers[seSlot[r]];
      });
      entries.push({ id: row.participantId, session: row.session, row: row.sourceRow });
    });
  });
  return brainTableOf(v, regionColumns, entries, values, standardErrors);
}

/** Rows' keys read per query when the values come from the binary columns. */
const KEY_PAGE = 5000;

/** Calls `each` with the keys of a version's rows (participant, session, source row) page by page, in order. */
async function forEachRowKeyPage(
  db: Queryable,
  v: DatasetVersion,
  each: (rows: readonly Pick<DatasetRow, "participantId" | "session" | "sourceRow">[]) => void,
): Promise<void> {
  for (let first = 0; first < v.rowCount; first += KEY_PAGE) {
    const rows = await db
      .select({
        participantId: datasetRows.participantId,
        session: datasetRows.session,
        sourceRow: datasetRows.sourceRow,
      })
      .from(datasetRows)
      .where(
        and(
          eq(datasetRows.datasetId, v.id),
          gte(datasetRows.position, first),
          lt(datasetRows.position, first + KEY_PAGE),
        ),
      )
      .orderBy(asc(datasetRows.position));
    each(rows);
    if (first + KEY_PAGE < v.rowCount) await nextTurn();
  }
}

function brainTableOf(
  v: DatasetVersion,
  regionColumns: readonly DatasetVersion["columns"][number][],
  entries: BrainTable["entries"][number][],
  values: Float64Array[],
  standardErrors: (Float64Array | null)[],
): BrainTable {
  return {
    file: v.fileName,
    layout: (v.layout ?? "wide") as BrainTable["layout"],
    idColumn: v.idColumn,
    idColumnGuessed: false,
    sessionColumn: v.sessionColumn,
    seSuffix: v.seSuffix ?? "_se",
    regions: regionColumns.map((c) => c.region ?? c.name),
    entries,
    values,
    standardErrors,
    columns: [],
  };
}

/** A stored participant-sheet version as the intake's ParticipantSheet. */
export async function loadParticipantSheet(
  db: Queryable,
  v: DatasetVersion,
): Promise<ParticipantSheet> {
  const numberCount = v.columns.filter((c) => c.type === "number").length;
  const variables = v.columns.filter((c) => c.role === "variable");
  const values: (number | string | null)[][] = variables.map(() => []);
  const ids: string[] = [];
  const sourceRows: number[] = [];
  await forEachRowPage(db, v, (rows) => {
    for (const r of rows) {
      const numbers = decodeNumbers(r.numbers, numberCount);
      variables.forEach((c, j) => {
        if (c.type === "number") {
          const x = numbers[c.slot as number];
          values[j].push(Number.isNaN(x) ? null : x);
        } else values[j].push(r.categories[c.slot as number] ?? null);
      });
      ids.push(r.participantId);
      sourceRows.push(r.sourceRow);
    }
  });
  const columns = variables.map(
    (c, j): SheetColumn =>
      c.type === "number"
        ? { name: c.name, type: "number", values: values[j] as (number | null)[] }
        : { name: c.name, type: "category", values: values[j] as (string | null)[] },
  );
  return {
    file: v.fileName,
    idColumn: v.idColumn,
    idColumnGuessed: false,
    ids,
    rows: sourceRows,
    columns,
    dropped: v.droppedColumns,
  };
}
