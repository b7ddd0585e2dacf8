/**
 * Datasets: uploads, previews, confirmation into immutable versions, and
 * reading versions back.
 *
 * Flow: an upload is read and checked by the intake library and answered
 * with a preview (first rows, column types, problems, identifier columns);
 * the file waits in the PreviewStore. Confirmation applies the uploader's
 * decisions (type changes, dropped columns, reasons for keeping identifier
 * columns), then stores the version, its rows and the audit events in one
 * transaction: nothing is half-stored. A brain table with any problem is
 * refused at upload (422) — its values must all be numbers; a participant
 * sheet whose only problems are text cells in numeric-looking columns is
 * previewed, because typing those columns as categories resolves them.
 *
 * Versions are numbered 1, 2, … per study and kind; the newest is current.
 * Services receive the database, the store and the time as parameters.
 */
import { randomUUID } from "node:crypto";
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import {
  datasetRows,
  datasetVersions,
  users,
  type DatasetKind,
  type DatasetVersion,
  type IdentifierDecisionRecord,
  type StoredColumn,
} from "../../db/schema";
import {
  type BrainTable,
  type Confirmation,
  IntakeError,
  type ParticipantSheet,
  type RawTable,
  type SheetColumn,
  type TablePreview,
  confirmTable,
  parseNumberCell,
  previewTable,
  readTable,
  sha256Hex,
} from "../intake";
import { conflict, gone, notFound } from "../http/errors";
import { recordEvent } from "./audit";
import type { PreviewStore, StoredPreview, UploadOptions } from "./preview-store";

export interface PersonRef {
  id: string;
  name: string | null;
  email: string | null;
}

export interface PreviewView extends TablePreview {
  id: string;
  studyId: string;
  status: "preview";
  fileName: string;
  sha256: string;
  byteSize: number;
  options: UploadOptions;
  uploadedBy: PersonRef;
  uploadedAt: string;
  expiresAt: string;
}

export interface DatasetView {
  id: string;
  studyId: string;
  kind: DatasetKind;
  status: "confirmed";
  version: number;
  /** The newest version of its kind in the study. */
  current: boolean;
  fileName: string;
  sha256: string;
  byteSize: number;
  delimiter: string;
  layout: string | null;
  idColumn: string;
  sessionColumn: string | null;
  seSuffix: string | null;
  columns: StoredColumn[];
  droppedColumns: string[];
  identifierDecisions: IdentifierDecisionRecord[];
  rowCount: number;
  participantCount: number;
  regions: string[] | null;
  uploadedBy: PersonRef;
  uploadedAt: string;
  confirmedBy: PersonRef;
  confirmedAt: string;
}

export interface RowsPage {
  total: number;
  offset: number;
  limit: number;
  /** Each row's spreadsheet row number and its cells, in the order of `columns`. */
  items: { row: number; cells: (string | number | null)[] }[];
}

// ─── Upload and preview ───

export interface UploadInput {
  studyId: string;
  kind: DatasetKind;
  fileName: string;
  bytes: Uint8Array;
  options: UploadOptions;
  uploader: PersonRef;
  now: Date;
}

/** Codes a participant-sheet preview may carry (resolved by typing the column as a category). */
const PREVIEWABLE = new Set(["not_a_number"]);

/**
 * Reads and checks an upload and keeps it as a preview. Throws IntakeError
 * (400 unreadable, 413 too large, 422 content refused) — nothing is kept then.
 */
export function previewUpload(store: PreviewStore, input: UploadInput): PreviewView {
  const raw = readTable(input.bytes, input.fileName);
  const preview = previewTable(raw, input.kind, input.options);
  const blocking = input.kind === "brain" ? preview.problems : preview.problems.filter((p) => !PREVIEWABLE.has(p.code));
  if (blocking.length > 0) {
    const total = input.kind === "brain" ? preview.problemCount : blocking.length;
    throw new IntakeError(422, blocking, total);
  }
  const stored: StoredPreview = {
    id: randomUUID(),
    studyId: input.studyId,
    kind: input.kind,
    fileName: input.fileName,
    bytes: input.bytes,
    sha256: sha256Hex(input.bytes),
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
    byteSize: p.bytes.byteLength,
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
 * this study), 409 (already confirmed), 410 (the preview expired), and
 * IntakeError 422 (an identifier column left undecided, a named column
 * that does not exist, a cell that does not fit the chosen type).
 */
export async function confirmUpload(db: Database, store: PreviewStore, input: ConfirmInput): Promise<DatasetView> {
  const found = store.get(input.datasetId, input.now);
  if (found === "expired") throw gone("This upload's preview expired before it was confirmed; upload the file again.");
  if (found === undefined || found.studyId !== input.studyId) {
    const [stored] = await db
      .select({ version: datasetVersions.version, studyId: datasetVersions.studyId })
      .from(datasetVersions)
      .where(eq(datasetVersions.id, input.datasetId));
    if (stored && stored.studyId === input.studyId) throw conflict(`This upload is already confirmed as version ${stored.version}.`);
    throw notFound("Upload not found.");
  }
  const options: Confirmation = { ...found.options, ...withoutUndefined(input.confirmation) };
  const view = await storeVersion(db, {
    id: found.id,
    studyId: found.studyId,
    kind: found.kind,
    fileName: found.fileName,
    bytes: found.bytes,
    confirmation: options,
    uploadedBy: found.uploadedBy,
    uploadedAt: found.uploadedAt,
    confirmedBy: input.actor.id,
    now: input.now,
  });
  store.remove(found.id);
  return view;
}

function withoutUndefined<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}

export interface StoreVersionInput {
  id: string;
  studyId: string;
  kind: DatasetKind;
  fileName: string;
  bytes: Uint8Array;
  confirmation: Confirmation;
  uploadedBy: string;
  uploadedAt: Date;
  confirmedBy: string;
  now: Date;
}

/** Rows inserted per statement (the embedded database prefers batches). */
const ROW_BATCH = 500;

/**
 * Reads, types and stores one version with its rows and audit events, in
 * one transaction. Used by confirmation and by the demo seed (the same
 * path for both). Throws IntakeError as confirmTable does.
 */
export async function storeVersion(db: Database, input: StoreVersionInput): Promise<DatasetView> {
  const raw = readTable(input.bytes, input.fileName);
  const confirmed = confirmTable(raw, input.kind, input.confirmation);
  const encoded = confirmed.kind === "brain" ? encodeBrain(confirmed.brain, raw) : encodeSheet(confirmed.sheet);
  const decisions: IdentifierDecisionRecord[] = confirmed.identifierDecisions.map((d) => ({ ...d }));
  const sha256 = sha256Hex(input.bytes);
  await db.transaction(async (tx) => {
    const [last] = await tx
      .select({ n: sql<number>`coalesce(max(${datasetVersions.version}), 0)` })
      .from(datasetVersions)
      .where(and(eq(datasetVersions.studyId, input.studyId), eq(datasetVersions.kind, input.kind)));
    const version = Number(last?.n ?? 0) + 1;
    await tx.insert(datasetVersions).values({
      id: input.id,
      studyId: input.studyId,
      kind: input.kind,
      version,
      fileName: input.fileName,
      sha256,
      byteSize: input.bytes.byteLength,
      delimiter: raw.delimiter,
      layout: encoded.layout,
      idColumn: encoded.idColumn,
      sessionColumn: encoded.sessionColumn,
      seSuffix: encoded.seSuffix,
      columns: encoded.columns,
      droppedColumns: encoded.dropped,
      identifierDecisions: decisions,
      rowCount: encoded.rows.length,
      participantCount: encoded.participantCount,
      uploadedBy: input.uploadedBy,
      uploadedAt: input.uploadedAt,
      confirmedBy: input.confirmedBy,
      confirmedAt: input.now,
      complete: true,
    });
    for (let i = 0; i < encoded.rows.length; i += ROW_BATCH) {
      await tx.insert(datasetRows).values(encoded.rows.slice(i, i + ROW_BATCH).map((r) => ({ ...r, datasetId: input.id })));
    }
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
        byteSize: input.bytes.byteLength,
        rows: encoded.rows.length,
        participants: encoded.participantCount,
        columns: encoded.columns.map((c) => ({ name: c.name, type: c.type, role: c.role })),
        droppedColumns: encoded.dropped,
        uploadedAt: input.uploadedAt,
      },
      at: input.now,
    });
    for (const d of decisions) {
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
  });
  const view = await findVersion(db, input.studyId, input.id);
  if (!view) throw new Error("storeVersion: the stored version cannot be read back");
  return view;
}

interface EncodedRow {
  position: number;
  sourceRow: number;
  participantId: string;
  session: string | null;
  numbers: string;
  categories: (string | null)[];
}

interface Encoded {
  layout: string | null;
  idColumn: string;
  sessionColumn: string | null;
  seSuffix: string | null;
  columns: StoredColumn[];
  dropped: string[];
  rows: EncodedRow[];
  participantCount: number;
}

/** Numbers as shortest round-trip decimals separated by commas; empty = missing. */
export function encodeNumbers(values: readonly number[]): string {
  let out = "";
  for (let k = 0; k < values.length; k++) {
    if (k > 0) out += ",";
    const x = values[k];
    if (Number.isFinite(x)) out += String(x);
  }
  return out;
}

/** The inverse of encodeNumbers for `count` numbers (NaN where missing). */
export function decodeNumbers(text: string, count: number): Float64Array {
  const out = new Float64Array(count).fill(Number.NaN);
  if (count === 0) return out;
  const parts = text.split(",");
  for (let k = 0; k < count && k < parts.length; k++) {
    const x = parseNumberCell(parts[k]);
    if (typeof x === "number") out[k] = x;
  }
  return out;
}

/**
 * A wide table's row as stored numbers, straight from the uploaded cells
 * (already checked to be numbers or missing markers): the exact text
 * written, trimmed, with missing markers as empty. Equal, once read, to
 * encodeNumbers of the typed values, and cheaper than printing them again.
 */
function rawNumbers(row: readonly string[], columns: readonly number[]): string {
  let out = "";
  for (let k = 0; k < columns.length; k++) {
    if (k > 0) out += ",";
    const cell = row[columns[k]];
    const x = parseNumberCell(cell);
    if (typeof x === "number") out += cell.length > 0 && cell.charCodeAt(0) > 32 && cell.charCodeAt(cell.length - 1) > 32 ? cell : cell.trim();
  }
  return out;
}

function encodeBrain(b: BrainTable, raw: RawTable): Encoded {
  const columns: StoredColumn[] = [{ name: b.idColumn, type: "id", role: "id" }];
  if (b.sessionColumn !== null) columns.push({ name: b.sessionColumn, type: "category", role: "session" });
  let slot = 0;
  const valueSlots: number[] = [];
  const seSlots: (number | null)[] = [];
  b.regions.forEach((region, r) => {
    valueSlots.push(slot);
    columns.push({ name: region, type: "number", role: "region", region, slot: slot++ });
    if (b.standardErrors[r] !== null) {
      const seName = b.layout === "wide" ? `${region}${b.seSuffix}` : `${region}_se`;
      columns.push({ name: seName, type: "number", role: "se", region, slot });
      seSlots.push(slot++);
    } else seSlots.push(null);
  });
  // Wide layout: each entry is one uploaded row, and each slot one uploaded column.
  const rawIndex = new Map(b.columns.map((c) => [c.name, c.profile.index]));
  const slotColumns = columns.filter((c) => c.type === "number").map((c) => rawIndex.get(c.name) ?? -1);
  const fromRaw = b.layout === "wide" && b.entries.length === raw.rows.length && slotColumns.every((j) => j >= 0);
  const buffer = new Array<number>(slot);
  const rows = b.entries.map((e, k): EncodedRow => {
    let numbers: string;
    if (fromRaw) numbers = rawNumbers(raw.rows[k], slotColumns);
    else {
      for (let r = 0; r < b.regions.length; r++) {
        buffer[valueSlots[r]] = b.values[r][k];
        const s = seSlots[r];
        if (s !== null) buffer[s] = (b.standardErrors[r] as Float64Array)[k];
      }
      numbers = encodeNumbers(buffer);
    }
    return { position: k, sourceRow: e.row, participantId: e.id, session: e.session, numbers, categories: [] };
  });
  const dropped = b.columns.filter((c) => c.role === "dropped").map((c) => c.name);
  return {
    layout: b.layout,
    idColumn: b.idColumn,
    sessionColumn: b.sessionColumn,
    seSuffix: b.layout === "wide" ? b.seSuffix : null,
    columns,
    dropped,
    rows,
    participantCount: new Set(b.entries.map((e) => e.id)).size,
  };
}

function encodeSheet(s: ParticipantSheet): Encoded {
  const columns: StoredColumn[] = [{ name: s.idColumn, type: "id", role: "id" }];
  let numberSlot = 0;
  let categorySlot = 0;
  for (const c of s.columns) {
    columns.push({ name: c.name, type: c.type, role: "variable", slot: c.type === "number" ? numberSlot++ : categorySlot++ });
  }
  const numberColumns = s.columns.filter((c): c is Extract<SheetColumn, { type: "number" }> => c.type === "number");
  const categoryColumns = s.columns.filter((c): c is Extract<SheetColumn, { type: "category" }> => c.type === "category");
  const buffer = new Array<number>(numberColumns.length);
  const rows = s.ids.map((id, k): EncodedRow => {
    numberColumns.forEach((c, j) => {
      buffer[j] = c.values[k] ?? Number.NaN;
    });
    return {
      position: k,
      sourceRow: s.rows[k],
      participantId: id,
      session: null,
      numbers: encodeNumbers(buffer),
      categories: categoryColumns.map((c) => c.values[k]),
    };
  });
  return {
    layout: null,
    idColumn: s.idColumn,
    sessionColumn: null,
    seSuffix: null,
    columns,
    dropped: [...s.dropped],
    rows,
    participantCount: s.ids.length,
  };
}

// ─── Reading versions ───

async function people(db: Queryable, ids: readonly string[]): Promise<Map<string, PersonRef>> {
  const unique = [...new Set(ids)];
  if (unique.length === 0) return new Map();
  const rows = await db.select({ id: users.id, name: users.name, email: users.email }).from(users).where(inArray(users.id, unique));
  return new Map(rows.map((r) => [r.id, r]));
}

async function currentIds(db: Queryable, studyId: string): Promise<Set<string>> {
  const rows = await db
    .selectDistinctOn([datasetVersions.kind], { id: datasetVersions.id })
    .from(datasetVersions)
    .where(eq(datasetVersions.studyId, studyId))
    .orderBy(datasetVersions.kind, desc(datasetVersions.version));
  return new Set(rows.map((r) => r.id));
}

function versionView(v: DatasetVersion, current: boolean, who: Map<string, PersonRef>): DatasetView {
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
    regions: v.kind === "brain" ? v.columns.filter((c) => c.role === "region").map((c) => c.name) : null,
    uploadedBy: person(v.uploadedBy),
    uploadedAt: v.uploadedAt.toISOString(),
    confirmedBy: person(v.confirmedBy),
    confirmedAt: v.confirmedAt.toISOString(),
  };
}

async function findVersion(db: Queryable, studyId: string, id: string): Promise<DatasetView | null> {
  const [v] = await db
    .select()
    .from(datasetVersions)
    .where(and(eq(datasetVersions.id, id), eq(datasetVersions.studyId, studyId)));
  if (!v) return null;
  const [current, who] = await Promise.all([currentIds(db, studyId), people(db, [v.uploadedBy, v.confirmedBy])]);
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
    .where(eq(datasetVersions.studyId, studyId))
    .orderBy(desc(datasetVersions.confirmedAt), desc(datasetVersions.version));
  const previews = store.forStudy(studyId, now).reverse();
  const who = await people(db, [...versions.flatMap((v) => [v.uploadedBy, v.confirmedBy]), ...previews.map((p) => p.uploadedBy)]);
  const current = await currentIds(db, studyId);
  const person = (id: string): PersonRef => who.get(id) ?? { id, name: null, email: null };
  return [
    ...previews.map((p) => ({ ...previewView(p, person(p.uploadedBy)), rows: [] as TablePreview["rows"] })),
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
  const p = store.get(id, now);
  if (p !== undefined && p !== "expired" && p.studyId === studyId) {
    const who = await people(db, [p.uploadedBy]);
    const view = previewView(p, who.get(p.uploadedBy) ?? { id: p.uploadedBy, name: null, email: null });
    return query.withRows ? view : { ...view, rows: [] };
  }
  const v = await findVersion(db, studyId, id);
  if (!v) {
    if (p === "expired") throw gone("This upload's preview expired before it was confirmed.");
    throw notFound("Dataset not found.");
  }
  return { ...v, rows: query.withRows ? await rowsPage(db, v, query) : null };
}

async function rowsPage(db: Queryable, v: DatasetView, q: RowsQuery): Promise<RowsPage> {
  const rows = await db
    .select()
    .from(datasetRows)
    .where(eq(datasetRows.datasetId, v.id))
    .orderBy(asc(datasetRows.position))
    .offset(q.offset)
    .limit(q.limit);
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
  const rows = await db.select().from(datasetVersions).where(inArray(datasetVersions.id, [...ids]));
  return {
    brain: rows.find((r) => r.kind === "brain") ?? null,
    participants: rows.find((r) => r.kind === "participants") ?? null,
  };
}

/** A stored brain-table version as the intake's BrainTable (the form fits run on). */
export async function loadBrainTable(db: Queryable, v: DatasetVersion): Promise<BrainTable> {
  const rows = await db.select().from(datasetRows).where(eq(datasetRows.datasetId, v.id)).orderBy(asc(datasetRows.position));
  const regionColumns = v.columns.filter((c) => c.role === "region");
  const numberCount = v.columns.filter((c) => c.type === "number").length;
  const n = rows.length;
  const values = regionColumns.map(() => new Float64Array(n));
  const standardErrors = regionColumns.map((rc) => (v.columns.some((c) => c.role === "se" && c.region === rc.region) ? new Float64Array(n) : null));
  const seSlot = regionColumns.map((rc) => v.columns.find((c) => c.role === "se" && c.region === rc.region)?.slot ?? -1);
  rows.forEach((row, k) => {
    const numbers = decodeNumbers(row.numbers, numberCount);
    regionColumns.forEach((rc, r) => {
      values[r][k] = numbers[rc.slot as number];
      const se = standardErrors[r];
      if (se !== null) se[k] = numbers[seSlot[r]];
    });
  });
  return {
    file: v.fileName,
    layout: (v.layout ?? "wide") as BrainTable["layout"],
    idColumn: v.idColumn,
    idColumnGuessed: false,
    sessionColumn: v.sessionColumn,
    seSuffix: v.seSuffix ?? "_se",
    regions: regionColumns.map((c) => c.region ?? c.name),
    entries: rows.map((r) => ({ id: r.participantId, session: r.session, row: r.sourceRow })),
    values,
    standardErrors,
    columns: [],
  };
}

/** A stored participant-sheet version as the intake's ParticipantSheet. */
export async function loadParticipantSheet(db: Queryable, v: DatasetVersion): Promise<ParticipantSheet> {
  const rows = await db.select().from(datasetRows).where(eq(datasetRows.datasetId, v.id)).orderBy(asc(datasetRows.position));
  const numberCount = v.columns.filter((c) => c.type === "number").length;
  const decoded = rows.map((r) => decodeNumbers(r.numbers, numberCount));
  const columns: SheetColumn[] = v.columns
    .filter((c) => c.role === "variable")
    .map((c) =>
      c.type === "number"
        ? { name: c.name, type: "number" as const, values: decoded.map((d) => (Number.isNaN(d[c.slot as number]) ? null : d[c.slot as number])) }
        : { name: c.name, type: "category" as const, values: rows.map((r) => r.categories[c.slot as number] ?? null) },
    );
  return {
    file: v.fileName,
    idColumn: v.idColumn,
    idColumnGuessed: false,
    ids: rows.map((r) => r.participantId),
    rows: rows.map((r) => r.sourceRow),
    columns,
    dropped: v.droppedColumns,
  };
}
