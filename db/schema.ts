/**
 * Covarion's database schema: the source of truth for tables and row types.
 *
 * The first four tables are the ones the Auth.js Drizzle adapter works on;
 * their TypeScript property names are the adapter's own (`emailVerified`,
 * `sessionToken`, `userId`, `providerAccountId`, …) while SQL names are
 * snake_case. Then studies, memberships, invitations and the append-only
 * audit trail (a trigger added in a hand-written migration refuses UPDATE
 * and DELETE on `audit_events`).
 *
 * Migrations are generated from this file with `npm run db:generate` and
 * committed under db/migrations.
 */
import { sql } from "drizzle-orm";
import type { Role } from "../contract/permissions";
import type { Recipe } from "../contract/recipe";
import type {
  DatasetKind,
  IdentifierDecisionRecord,
  StoredColumn,
} from "../contract/views/datasets";
import type { FitStatus } from "../contract/views/fits";
import type { Plan } from "../contract/plans";
import {
  type AnyPgColumn,
  boolean,
  check,
  customType,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
} from "drizzle-orm/pg-core";

const id = () =>
  text("id")
    .primaryKey()
    .$defaultFn(() => crypto.randomUUID());
const createdAt = () =>
  timestamp("created_at", { mode: "date", withTimezone: true }).notNull().defaultNow();

export const users = pgTable("users", {
  id: id(),
  name: text("name"),
  email: text("email").unique(),
  emailVerified: timestamp("email_verified", { mode: "date", withTimezone: true }),
  image: text("image"),
  createdAt: createdAt(),
});

/**
 * What a person's screens remember for them (contract/preferences.ts names
 * the keys and the shape of each value). One row a person and key.
 */
export const userPreferences = pgTable(
  "user_preferences",
  {
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    key: text("key").notNull(),
    value: jsonb("value").notNull(),
    updatedAt: timestamp("updated_at", { mode: "date", withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.key] })],
);

export const accounts = pgTable(
  "accounts",
  {
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    type: text("type").$type<"oauth" | "oidc" | "email" | "webauthn">().notNull(),
    provider: text("provider").notNull(),
    providerAccountId: text("provider_account_id").notNull(),
    refresh_token: text("refresh_token"),
    access_token: text("access_token"),
    expires_at: integer("expires_at"),
    token_type: text("token_type"),
    scope: text("scope"),
    id_token: text("id_token"),
    session_state: text("session_state"),
  },
  (t) => [primaryKey({ columns: [t.provider, t.providerAccountId] })],
);

export const sessions = pgTable(
  "sessions",
  {
    sessionToken: text("session_token").primaryKey(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    expires: timestamp("expires", { mode: "date", withTimezone: true }).notNull(),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

export const verificationTokens = pgTable(
  "verification_tokens",
  {
    identifier: text("identifier").notNull(),
    token: text("token").notNull(),
    expires: timestamp("expires", { mode: "date", withTimezone: true }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.identifier, t.token] })],
);

export const studies = pgTable("studies", {
  id: id(),
  name: text("name").notNull(),
  description: text("description").notNull().default(""),
  /** When true, Viewers do not see participant-level rows. */
  restricted: boolean("restricted").notNull().default(false),
  createdBy: text("created_by").references(() => users.id),
  createdAt: createdAt(),
  updatedAt: timestamp("updated_at", { mode: "date", withTimezone: true }).notNull().defaultNow(),
  /** Soft delete: the row and its audit trail stay; the study disappears from every route. */
  deletedAt: timestamp("deleted_at", { mode: "date", withTimezone: true }),
  deletedBy: text("deleted_by").references(() => users.id),
  /** Archived: read-only for everyone, still readable (a study with sealed fits is archived, never deleted). */
  archivedAt: timestamp("archived_at", { mode: "date", withTimezone: true }),
  archivedBy: text("archived_by").references(() => users.id),
  /**
   * "A second person signs off": while true, whoever started a fit cannot
   * approve it. An Owner may turn it off (a one-person lab); a seal then
   * records that one person signed off.
   */
  secondPersonSignOff: boolean("second_person_sign_off").notNull().default(true),
});

export const memberships = pgTable(
  "memberships",
  {
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: text("role").$type<Role>().notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    primaryKey({ columns: [t.studyId, t.userId] }),
    index("memberships_user_idx").on(t.userId),
    check("memberships_role_check", sql`${t.role} in ('owner', 'analyst', 'reviewer', 'viewer')`),
  ],
);

export const invitations = pgTable(
  "invitations",
  {
    id: id(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    /** Invited address, lower-cased. */
    email: text("email").notNull(),
    role: text("role").$type<Role>().notNull(),
    /** SHA-256 of the single-use token; the token itself is only in the e-mail. */
    tokenHash: text("token_hash").notNull(),
    invitedBy: text("invited_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    expiresAt: timestamp("expires_at", { mode: "date", withTimezone: true }).notNull(),
    acceptedAt: timestamp("accepted_at", { mode: "date", withTimezone: true }),
    acceptedBy: text("accepted_by").references(() => users.id),
    revokedAt: timestamp("revoked_at", { mode: "date", withTimezone: true }),
    revokedBy: text("revoked_by").references(() => users.id),
  },
  (t) => [
    uniqueIndex("invitations_token_hash_idx").on(t.tokenHash),
    index("invitations_study_idx").on(t.studyId),
    check("invitations_role_check", sql`${t.role} in ('owner', 'analyst', 'reviewer', 'viewer')`),
  ],
);

/**
 * The audit trail: who did what, when, in which study, to which target, with
 * the state before and after where it applies. Append-only (enforced by a
 * trigger); written in the same transaction as the change it records.
 */
export const auditEvents = pgTable(
  "audit_events",
  {
    id: id(),
    /** Monotonic order within one database, for stable newest-first lists. */
    seq: integer("seq").generatedAlwaysAsIdentity(),
    studyId: text("study_id").references(() => studies.id),
    actorId: text("actor_id").references(() => users.id),
    kind: text("kind").notNull(),
    targetType: text("target_type"),
    targetId: text("target_id"),
    before: jsonb("before"),
    after: jsonb("after"),
    at: timestamp("at", { mode: "date", withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index("audit_events_study_idx").on(t.studyId, t.seq)],
);

export type User = typeof users.$inferSelect;
export type Study = typeof studies.$inferSelect;
export type Membership = typeof memberships.$inferSelect;
export type Invitation = typeof invitations.$inferSelect;
export type AuditEvent = typeof auditEvents.$inferSelect;

// ─── Data intake: dataset versions, their rows, confirmed roster mappings ───
// (owned by the data intake; see server/services/datasets.ts)

/**
 * One confirmed, immutable version of an uploaded brain table or
 * participant sheet (a trigger refuses UPDATE and DELETE). Its id is the
 * id the upload's preview had. `sha256` is the hash of the uploaded bytes.
 *
 * A version is stored in steps so that no long transaction holds the
 * database: the row is written with `complete` false, its rows in batches,
 * then `complete` is set in one short transaction with the audit events.
 * Only complete versions are ever read; the trigger allows exactly that
 * one change, and the deletion of an incomplete version and its rows (left
 * by a stop in the middle of storing).
 */
export const datasetVersions = pgTable(
  "dataset_versions",
  {
    id: text("id").primaryKey(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    kind: text("kind").$type<DatasetKind>().notNull(),
    /** 1, 2, … per study and kind. */
    version: integer("version").notNull(),
    fileName: text("file_name").notNull(),
    sha256: text("sha256").notNull(),
    byteSize: integer("byte_size").notNull(),
    delimiter: text("delimiter").notNull(),
    /** brain tables: "wide" or "long" as uploaded */
    layout: text("layout"),
    idColumn: text("id_column").notNull(),
    sessionColumn: text("session_column"),
    seSuffix: text("se_suffix"),
    columns: jsonb("columns").$type<StoredColumn[]>().notNull(),
    droppedColumns: jsonb("dropped_columns").$type<string[]>().notNull(),
    identifierDecisions: jsonb("identifier_decisions")
      .$type<IdentifierDecisionRecord[]>()
      .notNull(),
    rowCount: integer("row_count").notNull(),
    participantCount: integer("participant_count").notNull(),
    uploadedBy: text("uploaded_by")
      .notNull()
      .references(() => users.id),
    uploadedAt: timestamp("uploaded_at", { mode: "date", withTimezone: true }).notNull(),
    confirmedBy: text("confirmed_by")
      .notNull()
      .references(() => users.id),
    confirmedAt: timestamp("confirmed_at", { mode: "date", withTimezone: true }).notNull(),
    /** False while its rows are being stored; readers see complete versions only. */
    complete: boolean("complete").notNull().default(false),
  },
  (t) => [
    uniqueIndex("dataset_versions_study_kind_version_idx").on(t.studyId, t.kind, t.version),
    check("dataset_versions_kind_check", sql`${t.kind} in ('brain', 'participants')`),
  ],
);

/**
 * The rows of a dataset version: one per participant (and session, for
 * brain tables), in file order. `numbers` holds the row's numeric cells as
 * shortest round-trip decimals separated by commas (empty = missing), in
 * slot order; `categories` the category cells (null = missing). Text is
 * used for the numbers because the embedded database reads and writes long
 * text an order of magnitude faster than long float arrays or bytea. A
 * brain table's numbers are also in `dataset_columns`, which fits read.
 */
export const datasetRows = pgTable(
  "dataset_rows",
  {
    datasetId: text("dataset_id")
      .notNull()
      .references(() => datasetVersions.id),
    position: integer("position").notNull(),
    /** Spreadsheet row of the uploaded file (header = row 1). */
    sourceRow: integer("source_row").notNull(),
    participantId: text("participant_id").notNull(),
    session: text("session"),
    numbers: text("numbers").notNull(),
    categories: jsonb("categories").$type<(string | null)[]>().notNull(),
  },
  (t) => [primaryKey({ columns: [t.datasetId, t.position] })],
);

/**
 * Bytes as PostgreSQL `bytea`, seen as base64 text: written and read through
 * SQL's `decode`/`encode` (see datasetColumns); a plain select of the column
 * (the driver's Uint8Array or Buffer) is turned into base64 alike.
 */
const bytea = customType<{ data: string; driverData: string | Uint8Array }>({
  dataType: () => "bytea",
  fromDriver: (value) =>
    typeof value === "string" ? value : Buffer.from(value).toString("base64"),
});

/**
 * The number columns of a brain-table version stored since migration 0017,
 * one row per slot (region values and standard errors, the `slot` of
 * `columns`): the column's values in row order (`dataset_rows.position`
 * 0, 1, …) as little-endian IEEE-754 doubles, NaN where missing, so a fit
 * loads them without parsing text (server/services/dataset-columns.ts).
 * They travel as base64 through SQL's `encode`/`decode`: both drivers
 * answer text alike, and the embedded database moves long text far faster
 * than `bytea` in its own wire form. Versions stored before have none and
 * are read from their rows' text. Immutable like the rows.
 */
export const datasetColumns = pgTable(
  "dataset_columns",
  {
    datasetId: text("dataset_id")
      .notNull()
      .references(() => datasetVersions.id),
    slot: integer("slot").notNull(),
    values: bytea("values").notNull(),
  },
  (t) => [primaryKey({ columns: [t.datasetId, t.slot] })],
);

/** A confirmed id mapping (brain-table id → participant-sheet id) of a study's roster. */
export const rosterMappings = pgTable(
  "roster_mappings",
  {
    id: id(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    brainId: text("brain_id").notNull(),
    sheetId: text("sheet_id").notNull(),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex("roster_mappings_brain_idx").on(t.studyId, t.brainId),
    uniqueIndex("roster_mappings_sheet_idx").on(t.studyId, t.sheetId),
  ],
);

export type DatasetVersion = typeof datasetVersions.$inferSelect;
export type DatasetRow = typeof datasetRows.$inferSelect;
export type RosterMapping = typeof rosterMappings.$inferSelect;

// ─── Models, fits and set-asides ───
// (owned by the fits work; see server/services/models.ts, fits.ts, set-asides.ts)

/**
 * A saved question of a study. `spec` holds the model fields as
 * `modelSpecSchema` parses them (defaults filled in). `regionSelection`
 * records how the regions were chosen (see contract/model-form.ts);
 * `circular` is true when they were chosen from the same data the model
 * tests. Soft delete: fits keep pointing at a deleted model.
 */
export const models = pgTable(
  "models",
  {
    id: id(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    name: text("name").notNull(),
    spec: jsonb("spec").notNull(),
    regionSelection: text("region_selection").notNull(),
    circular: boolean("circular").notNull().default(false),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    updatedBy: text("updated_by")
      .notNull()
      .references(() => users.id),
    updatedAt: timestamp("updated_at", { mode: "date", withTimezone: true }).notNull().defaultNow(),
    deletedAt: timestamp("deleted_at", { mode: "date", withTimezone: true }),
    deletedBy: text("deleted_by").references(() => users.id),
  },
  (t) => [
    index("models_study_idx").on(t.studyId),
    uniqueIndex("models_study_name_idx").on(t.studyId, t.name).where(sql`${t.deletedAt} is null`),
    check(
      "models_region_selection_check",
      sql`${t.regionSelection} in ('anatomical-or-prior', 'independent-data', 'same-data')`,
    ),
  ],
);

/**
 * One execution of a model on fixed dataset versions with a fixed seed.
 * `recipe` is the full recipe (model fields with defaults, dataset version
 * ids and hashes, confirmed id mappings, set-asides, software version): the
 * fit job builds its data from the recipe alone, so a re-run gives the
 * same numbers. `result` is the FitResult without its per-participant
 * diagnostics, which are stored per region in `fit_regions`. Progress and
 * status are written by the main thread only.
 */
export const fits = pgTable(
  "fits",
  {
    id: id(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    modelId: text("model_id")
      .notNull()
      .references(() => models.id),
    status: text("status").$type<FitStatus>().notNull().default("queued"),
    /** 0…1 */
    progress: doublePrecision("progress").notNull().default(0),
    /** Estimated seconds left while running; null when unknown. */
    secondsLeft: integer("seconds_left"),
    brainVersionId: text("brain_version_id")
      .notNull()
      .references(() => datasetVersions.id),
    sheetVersionId: text("sheet_version_id").references(() => datasetVersions.id),
    recipe: jsonb("recipe").$type<Recipe>().notNull(),
    result: jsonb("result"),
    /** failed: the reason in plain words; cancelled: who cancelled. */
    error: text("error"),
    errorCode: text("error_code"),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    startedAt: timestamp("started_at", { mode: "date", withTimezone: true }),
    finishedAt: timestamp("finished_at", { mode: "date", withTimezone: true }),
    cancelledBy: text("cancelled_by").references(() => users.id),
    /** The earlier fit of the same model this one re-runs (after a set-aside or new data); null for a first fit. */
    refitOf: text("refit_of").references((): AnyPgColumn => fits.id),
  },
  (t) => [
    index("fits_study_idx").on(t.studyId, t.createdAt),
    index("fits_status_idx").on(t.status),
    check(
      "fits_status_check",
      sql`${t.status} in ('queued', 'running', 'done', 'failed', 'cancelled')`,
    ),
  ],
);

/**
 * A participant set aside from every region (`region` null) or from one
 * region, with a required reason. Nothing is deleted: a restore fills
 * `restoredAt`/`restoredBy` (and an optional reason).
 */
export const setAsides = pgTable(
  "set_asides",
  {
    id: id(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    participantId: text("participant_id").notNull(),
    region: text("region"),
    reason: text("reason").notNull(),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    restoredBy: text("restored_by").references(() => users.id),
    restoredAt: timestamp("restored_at", { mode: "date", withTimezone: true }),
    restoreReason: text("restore_reason"),
  },
  (t) => [index("set_asides_study_idx").on(t.studyId)],
);

export type Model = typeof models.$inferSelect;
export type Fit = typeof fits.$inferSelect;
export type SetAsideRow = typeof setAsides.$inferSelect;

/**
 * Per-participant diagnostics of a finished fit, one row per region (kept
 * apart from `fits.result` so a region's detail is read without loading
 * every region's participants).
 */
export const fitRegions = pgTable(
  "fit_regions",
  {
    fitId: text("fit_id")
      .notNull()
      .references(() => fits.id),
    /** Order of the region in the fit's result. */
    position: integer("position").notNull(),
    region: text("region").notNull(),
    /**
     * The region's ParticipantDiagnostics rows as JSON text, column by
     * column (server/jobs/region-rows.ts), serialized in the worker thread;
     * text is stored and read without the embedded database parsing it,
     * which matters at hundreds of regions × thousands of participants.
     * Stored out of line without compression (migration 0011), so storing
     * a large fit does not hold up requests.
     */
    participants: text("participants").notNull(),
    /** What the region's plots draw (server/stats/region-plot.ts), or { error }, as JSON text. */
    plot: text("plot"),
  },
  (t) => [
    primaryKey({ columns: [t.fitId, t.position] }),
    uniqueIndex("fit_regions_region_idx").on(t.fitId, t.region),
  ],
);

export type FitRegionRow = typeof fitRegions.$inferSelect;

// ─── Measurement: stated reliabilities of participant-sheet traits ───
// (owned by the measurement work; see server/services/reliability.ts)

/**
 * A trait's reliability as the study states it, with its source (for
 * example "test–retest r = .82, manual of the scale"). One row per study
 * and participant-sheet column; a PUT replaces the study's whole list.
 * Used for Spearman's correction for attenuation beside association results.
 */
export const traitReliabilities = pgTable(
  "trait_reliabilities",
  {
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    /** Participant-sheet column (a numeric trait). */
    column: text("column").notNull(),
    /** 0 < reliability ≤ 1. */
    reliability: doublePrecision("reliability").notNull(),
    /** Where the value comes from, in the user's words. */
    source: text("source").notNull(),
    updatedBy: text("updated_by")
      .notNull()
      .references(() => users.id),
    updatedAt: timestamp("updated_at", { mode: "date", withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    primaryKey({ columns: [t.studyId, t.column] }),
    check("trait_reliabilities_range_check", sql`${t.reliability} > 0 and ${t.reliability} <= 1`),
    check("trait_reliabilities_source_check", sql`length(trim(${t.source})) > 0`),
  ],
);

export type TraitReliability = typeof traitReliabilities.$inferSelect;

// ─── Publication: approval and sealing of fits ───
// (owned by the publication work; see server/services/sealing.ts)

/**
 * A Reviewer's (or Owner's) approval of a finished fit for sealing. One per
 * fit; append-only (a trigger refuses UPDATE and DELETE).
 */
export const fitApprovals = pgTable("fit_approvals", {
  fitId: text("fit_id")
    .primaryKey()
    .references(() => fits.id),
  approvedBy: text("approved_by")
    .notNull()
    .references(() => users.id),
  approvedAt: timestamp("approved_at", { mode: "date", withTimezone: true }).notNull(),
});

/**
 * The seal of an approved fit: the SHA-256 of its canonical recipe+result
 * JSON, who sealed it and when. Once a seal exists, triggers refuse any
 * change to the fit's recipe, result, status or data versions, to its
 * per-region rows, and to the seal itself.
 */
export const fitSeals = pgTable(
  "fit_seals",
  {
    fitId: text("fit_id")
      .primaryKey()
      .references(() => fits.id),
    sha256: text("sha256").notNull(),
    sealedBy: text("sealed_by")
      .notNull()
      .references(() => users.id),
    sealedAt: timestamp("sealed_at", { mode: "date", withTimezone: true }).notNull(),
    /** True when the study let one person start, approve and seal this fit. */
    singlePersonSignOff: boolean("single_person_sign_off").notNull().default(false),
    /** The model as it was at sealing ({ name, regionSelection, circular }); later renames do not reach a sealed fit. */
    model: jsonb("model"),
  },
  (t) => [check("fit_seals_sha256_check", sql`${t.sha256} ~ '^[0-9a-f]{64}$'`)],
);

export type FitApproval = typeof fitApprovals.$inferSelect;
export type FitSeal = typeof fitSeals.$inferSelect;

/**
 * A registered analysis plan (contract/plans.ts): the plan as given, the
 * SHA-256 of its canonical JSON, who registered it and when, and whether
 * the study already held confirmed data then. A trigger refuses every
 * change except setting the countersignature once; a new version is a new
 * row naming the plan it replaces and why.
 */
export const plans = pgTable(
  "plans",
  {
    id: id(),
    studyId: text("study_id")
      .notNull()
      .references(() => studies.id),
    plan: jsonb("plan").$type<Plan>().notNull(),
    sha256: text("sha256").notNull(),
    registeredBy: text("registered_by")
      .notNull()
      .references(() => users.id),
    registeredAt: timestamp("registered_at", { mode: "date", withTimezone: true }).notNull(),
    dataSeen: boolean("data_seen").notNull(),
    replaces: text("replaces").references((): AnyPgColumn => plans.id),
    replaceReason: text("replace_reason"),
    countersignedBy: text("countersigned_by").references(() => users.id),
    countersignedAt: timestamp("countersigned_at", { mode: "date", withTimezone: true }),
  },
  (t) => [
    index("plans_study_idx").on(t.studyId, t.registeredAt),
    check("plans_sha256_check", sql`${t.sha256} ~ '^[0-9a-f]{64}$'`),
  ],
);

export type PlanRow = typeof plans.$inferSelect;

// ─── Fits on a job queue (PostgreSQL server only; server/worker/) ───

/**
 * A fit whose permutation test runs as chunks on worker processes: how many
 * chunks it has (region chunks × rearrangement blocks,
 * server/stats/permutation-kernel.ts) and when its result was merged. The
 * row is written once by the worker that plans the fit; `mergedAt` is set
 * once, by the one party that merges (under the fit's advisory lock).
 */
export const fitRuns = pgTable("fit_runs", {
  fitId: text("fit_id")
    .primaryKey()
    .references(() => fits.id, { onDelete: "cascade" }),
  chunks: integer("chunks").notNull(),
  plannedAt: timestamp("planned_at", { mode: "date", withTimezone: true }).notNull(),
  mergedAt: timestamp("merged_at", { mode: "date", withTimezone: true }),
});

/**
 * What a split permutation test's chunks need, one row per region chunk,
 * written once by the worker that plans the fit so that other workers
 * compute their chunks without loading the data or planning again:
 * `setup` is the region chunk's blocks (basis, reduced-model residuals,
 * observed statistics) with the draw, seed and test options, in the
 * structured-clone serialization (node:v8, exact for numbers and typed
 * arrays). It serves chunks `chunk_from` … `chunk_to` − 1 and is removed
 * once the fit is merged, fails or is cancelled.
 */
export const fitChunkSetups = pgTable(
  "fit_chunk_setups",
  {
    fitId: text("fit_id")
      .notNull()
      .references(() => fits.id, { onDelete: "cascade" }),
    regionChunk: integer("region_chunk").notNull(),
    chunkFrom: integer("chunk_from").notNull(),
    chunkTo: integer("chunk_to").notNull(),
    setup: bytea("setup").notNull(),
  },
  (t) => [primaryKey({ columns: [t.fitId, t.regionChunk] })],
);

/**
 * One computed chunk of a fit's permutation test, written once (a retried
 * chunk whose row exists adds nothing). The arrays are little-endian
 * binary as base64 text: `counts` Float64 per region of the chunk,
 * `maxAbs` Float64 per rearrangement of its block (max-T), `nulls` Float32
 * region after region (kept null statistics).
 */
export const fitChunks = pgTable(
  "fit_chunks",
  {
    fitId: text("fit_id")
      .notNull()
      .references(() => fits.id, { onDelete: "cascade" }),
    chunk: integer("chunk").notNull(),
    regionFrom: integer("region_from").notNull(),
    block: integer("block").notNull(),
    counts: text("counts").notNull(),
    maxAbs: text("max_abs"),
    nulls: text("nulls"),
    exact: boolean("exact").notNull(),
    rearrangements: integer("rearrangements").notNull(),
    workerId: text("worker_id").notNull(),
    computedAt: timestamp("computed_at", { mode: "date", withTimezone: true }).notNull(),
  },
  (t) => [
    primaryKey({ columns: [t.fitId, t.chunk] }),
    index("fit_chunks_worker_idx").on(t.workerId, t.computedAt),
  ],
);

/** A job a worker process has in hand: its queue and its id in the job queue. */
export interface HeldJob {
  queue: string;
  id: string;
}

/**
 * A worker process (`npm run worker`): its heartbeat, refreshed every few
 * seconds while it runs (`seen_at`, the database's clock), and the jobs it
 * has in hand, which another worker hands back to the queue when the
 * heartbeat stops (server/worker/chunk-store.ts `reapStoppedWorkers`).
 */
export const workers = pgTable("workers", {
  id: text("id").primaryKey(),
  host: text("host").notNull(),
  pid: integer("pid").notNull(),
  startedAt: timestamp("started_at", { mode: "date", withTimezone: true }).notNull(),
  seenAt: timestamp("seen_at", { mode: "date", withTimezone: true }).notNull(),
  jobs: jsonb("jobs").$type<HeldJob[]>().notNull().default([]),
});
