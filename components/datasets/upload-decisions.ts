/**
 * The uploader's decisions on a preview, kept free of React so they can be
 * tested on their own: which columns may change type and what the two types
 * mean for them, the identifier columns still waiting for a decision (drop
 * it, or keep it with a written reason), the brain-table columns that would
 * be left out and wait for a decision (leave it out, or — wide layout — use
 * it as a region), the body the confirm route takes, the preview's problems
 * a decision has not yet resolved, and the problems carried by an error
 * answer; and the reading options an upload sends.
 */
import { ApiError } from "../../hooks/api";
import { validationSentence } from "../../hooks/validation-words";
import type {
  ColumnPreview,
  ConfirmInput,
  DatasetKind,
  DatasetPreview,
  IntakeProblem,
  UploadOptions,
} from "../../hooks/use-datasets";

export type TypeChoice = "number" | "category";

export interface IdentifierDecision {
  decision: "drop" | "keep";
  /** Why the column is kept (required for "keep"). */
  reason: string;
}

export interface Decisions {
  /** Chosen types by column name (only columns whose type may change). */
  types: Readonly<Record<string, TypeChoice>>;
  /** Decisions by flagged identifier column. */
  identifiers: Readonly<Record<string, IdentifierDecision>>;
  /** Brain-table columns the uploader agreed to leave out (sent as dropped). */
  leaveOut?: Readonly<Record<string, boolean>>;
}

export const noDecisions: Decisions = { types: {}, identifiers: {}, leaveOut: {} };

/** The server's code for a brain-table column that would be left out without a decision. */
export const LEFT_OUT = "column_left_out";

/** The brain-table columns the preview would leave out, each with the server's sentence saying why. */
export function leftOutColumns(
  preview: Pick<DatasetPreview, "problems">,
): { column: string; message: string }[] {
  return preview.problems
    .filter((p) => p.code === LEFT_OUT && p.column !== undefined)
    .map((p) => ({ column: p.column as string, message: p.message }));
}

/** Whether a column that would be left out is decided: left out, or given a type (a region, or "not used"). */
function leftOutDecided(column: string, decisions: Decisions): boolean {
  return decisions.leaveOut?.[column] === true || decisions.types[column] !== undefined;
}

/** One sentence per column that would be left out and is not decided yet; empty when none. */
export function undecidedLeftOut(
  preview: Pick<DatasetPreview, "problems">,
  decisions: Decisions,
): string[] {
  return leftOutColumns(preview)
    .filter((c) => !leftOutDecided(c.column, decisions))
    .map((c) => `Column ${c.column}: choose to leave it out or fix the file.`);
}

type PreviewShape = Pick<
  DatasetPreview,
  "kind" | "layout" | "columns" | "identifierColumns" | "problems" | "id"
>;

/**
 * The words for the two types a column may take, or null when its type is
 * fixed: participant-sheet variables are numbers or categories; in a wide
 * brain table a numeric column is a region and a category column is not
 * used. Id, session, standard-error and long-layout columns are fixed.
 */
export function typeChoices(
  preview: Pick<DatasetPreview, "kind" | "layout">,
  column: ColumnPreview,
): Record<TypeChoice, string> | null {
  if (preview.kind === "participants") {
    return column.role === "variable" ? { number: "number", category: "category" } : null;
  }
  if (
    preview.layout !== "long" &&
    (column.role === "region" || column.role === "ignored") &&
    column.type !== "id"
  ) {
    return { number: "region", category: "not used" };
  }
  return null;
}

/** The column's type after the uploader's choice. */
export function chosenType(column: ColumnPreview, decisions: Decisions): ColumnPreview["type"] {
  return decisions.types[column.name] ?? column.type;
}

/** Columns the uploader chose to drop: identifier columns dropped, and columns agreed to be left out. */
export function droppedColumns(
  preview: Pick<DatasetPreview, "identifierColumns" | "problems">,
  decisions: Decisions,
): string[] {
  const out = preview.identifierColumns
    .filter((f) => decisions.identifiers[f.column]?.decision === "drop")
    .map((f) => f.column);
  for (const { column } of leftOutColumns(preview))
    if (decisions.leaveOut?.[column] === true && !out.includes(column)) out.push(column);
  return out;
}

/**
 * One sentence per flagged identifier column that is not decided yet (no
 * choice, or "keep" without a reason); empty when Confirm may be pressed.
 */
export function undecidedIdentifiers(
  preview: Pick<DatasetPreview, "identifierColumns">,
  decisions: Decisions,
): string[] {
  const out: string[] = [];
  for (const flag of preview.identifierColumns) {
    const d = decisions.identifiers[flag.column];
    if (d === undefined)
      out.push(`Column ${flag.column}: choose to drop it or keep it with a reason.`);
    else if (d.decision === "keep" && d.reason.trim() === "")
      out.push(`Column ${flag.column}: write why it is kept.`);
  }
  return out;
}

/**
 * The confirm route's body: type changes that differ from the detection
 * (dropped columns left out), dropped identifier columns, and the reason for
 * each kept identifier column.
 */
export function confirmInput(preview: PreviewShape, decisions: Decisions): ConfirmInput {
  const dropped = new Set(droppedColumns(preview, decisions));
  const leftOut = new Set(leftOutColumns(preview).map((c) => c.column));
  const types: Record<string, TypeChoice> = {};
  for (const column of preview.columns) {
    const chosen = decisions.types[column.name];
    if (chosen === undefined || dropped.has(column.name) || typeChoices(preview, column) === null)
      continue;
    // A column that would be left out needs its choice said even when it equals the detection ("not used").
    if (chosen !== column.type || leftOut.has(column.name)) types[column.name] = chosen;
  }
  const reasons: Record<string, string> = {};
  for (const flag of preview.identifierColumns) {
    const d = decisions.identifiers[flag.column];
    if (d?.decision === "keep" && d.reason.trim() !== "") reasons[flag.column] = d.reason.trim();
  }
  const input: ConfirmInput = { datasetId: preview.id };
  if (Object.keys(types).length > 0) input.types = types;
  if (dropped.size > 0) input.dropColumns = [...dropped];
  if (Object.keys(reasons).length > 0) input.identifierReasons = reasons;
  return input;
}

/**
 * The preview's problems that the decisions do not resolve. A cell that is
 * not a number is resolved by typing its column as a category or dropping
 * it; a column that would be left out, by leaving it out or choosing its
 * type; any other problem stays.
 */
export function openProblems(preview: PreviewShape, decisions: Decisions): IntakeProblem[] {
  const dropped = new Set(droppedColumns(preview, decisions));
  return preview.problems.filter((p) => {
    if (p.column === undefined) return true;
    if (dropped.has(p.column)) return false;
    if (p.code === LEFT_OUT) return !leftOutDecided(p.column, decisions);
    return !(p.code === "not_a_number" && decisions.types[p.column] === "category");
  });
}

export interface ShownProblems {
  /** One sentence each, naming file, row and column where they apply. */
  messages: string[];
  /** Problems found beyond those carried by the answer. */
  more: number;
}

/**
 * The problems an error answer carries: an intake refusal's
 * `details.problems` (with `problemCount`), or a validation answer's
 * `[{ field, message }]` (said as sentences, hooks/validation-words.ts). Null when the error carries none (show its message).
 */
export function problemsFrom(error: unknown): ShownProblems | null {
  if (!(error instanceof ApiError)) return null;
  const details = error.details as
    | { problems?: unknown; problemCount?: unknown }
    | unknown[]
    | null
    | undefined;
  if (Array.isArray(details)) {
    const messages = details
      .map((d) => d as { field?: unknown; message?: unknown })
      .filter((d) => typeof d.message === "string")
      .map((d) =>
        typeof d.field === "string"
          ? validationSentence({ field: d.field, message: String(d.message) })
          : String(d.message),
      );
    return messages.length > 0 ? { messages, more: 0 } : null;
  }
  if (details && typeof details === "object" && Array.isArray(details.problems)) {
    const messages = (details.problems as unknown[])
      .map((p) => (p as { message?: unknown }).message)
      .filter((m): m is string => typeof m === "string");
    if (messages.length === 0) return null;
    const count = typeof details.problemCount === "number" ? details.problemCount : messages.length;
    return { messages, more: Math.max(0, count - messages.length) };
  }
  return null;
}

/** The upload form's reading options as typed. */
export interface UploadFormValues {
  kind: DatasetKind | null;
  idColumn: string;
  seSuffix: string;
  layout: "detect" | "wide" | "long";
  /** Empty: a column named "session" when there is one; "none": no sessions. */
  sessionColumn: string;
}

/**
 * The options sent with an upload: only those that apply to the kind and
 * were set (the server's defaults cover the rest). The suffix is sent as
 * typed, spaces included, since a suffix is part of column names.
 */
export function uploadOptions(form: UploadFormValues): UploadOptions {
  const options: UploadOptions = {};
  if (form.idColumn.trim() !== "") options.idColumn = form.idColumn.trim();
  if (form.kind === "brain") {
    if (form.seSuffix !== "") options.seSuffix = form.seSuffix;
    if (form.layout !== "detect") options.layout = form.layout;
    if (form.sessionColumn.trim() !== "") options.sessionColumn = form.sessionColumn.trim();
  }
  return options;
}
