/**
 * Worker-thread task of the data intake: everything an upload or its
 * confirmation computes, off the request thread — reading the file from
 * disk (decompressing a gzip file, intake-file.ts; delimiter, cells),
 * typing and checking, the preview, the
 * identifier guard, the SHA-256 hash, the rows to store as CSV chunks
 * (intake-rows.ts), and the roster join (intake-roster.ts). Workers compute only — no database; the
 * only file they touch is the upload they are given, which they read; the
 * main thread stores what this returns.
 *
 * The upload arrives as the path of its file (or, from the demo seed, as
 * bytes); the stored rows go back as one transferred buffer (no copy). A refusal of
 * the file comes back as `{ ok: false, status, problems, problemCount }`
 * (an IntakeError does not survive the thread boundary); any other error
 * is thrown. Worker threads run at a lower priority than the request
 * thread (thread-priority.ts).
 */
import { Piscina } from "piscina";
import {
  type Confirmation,
  IntakeError,
  type IntakeStatus,
  type PreviewOptions,
  type Problem,
  type TableKind,
  type TablePreview,
  confirmTable,
  checkPreviewable,
  previewTable,
} from "../intake";
import { type UploadLimits, type UploadSource, readUpload } from "./intake-file";
import {
  type MappingFacts,
  type RosterInput,
  type RosterRequest,
  answerRoster,
} from "./intake-roster";
import { type EncodedVersion, encodeVersion } from "./intake-rows";
import { lowerWorkerThreadPriority } from "./thread-priority";

lowerWorkerThreadPriority();

export type IntakeTask =
  | {
      op: "preview";
      source: UploadSource;
      fileName: string;
      kind: TableKind;
      options: PreviewOptions;
      limits?: UploadLimits;
    }
  | {
      op: "encode";
      source: UploadSource;
      limits?: UploadLimits;
      fileName: string;
      kind: TableKind;
      confirmation: Confirmation;
      datasetId: string;
    }
  | { op: "roster"; input: RosterInput; request: RosterRequest };

export type IntakeRefusal = {
  ok: false;
  status: IntakeStatus;
  problems: Problem[];
  problemCount: number;
};

export type IntakeTaskOutcome =
  | { ok: true; op: "preview"; preview: TablePreview; sha256: string }
  | { ok: true; op: "encode"; encoded: EncodedVersion; sha256: string }
  | { ok: true; op: "roster"; answer: string | MappingFacts }
  | IntakeRefusal;

export default async function runIntakeTask(
  task: IntakeTask,
): Promise<IntakeTaskOutcome | ReturnType<typeof Piscina.move>> {
  try {
    if (task.op === "preview") {
      const { table, sha256 } = await readUpload(task.source, task.fileName, task.limits);
      const preview = checkPreviewable(previewTable(table, task.kind, task.options));
      return { ok: true, op: "preview", preview, sha256 };
    }
    if (task.op === "roster")
      return { ok: true, op: "roster", answer: answerRoster(task.input, task.request) };
    const { table: raw, sha256 } = await readUpload(task.source, task.fileName, task.limits);
    const encoded = encodeVersion(
      task.datasetId,
      raw,
      confirmTable(raw, task.kind, task.confirmation),
    );
    const outcome: IntakeTaskOutcome = { ok: true, op: "encode", encoded, sha256 };
    // The rows' buffer and the number columns' buffers move to the main thread instead of being
    // copied; a column that is part of a larger buffer is copied out first (a buffer moves whole).
    encoded.numberColumns = encoded.numberColumns.map((c) =>
      c.byteOffset === 0 && c.byteLength === c.buffer.byteLength ? c : c.slice(),
    );
    const buffers = new Set<ArrayBufferLike>([encoded.csv.buffer]);
    for (const c of encoded.numberColumns) buffers.add(c.buffer);
    const movable = {
      [Piscina.transferableSymbol]: [...buffers],
      [Piscina.valueSymbol]: outcome,
    };
    return Piscina.move(movable as unknown as ArrayBuffer);
  } catch (e) {
    if (e instanceof IntakeError)
      return {
        ok: false,
        status: e.status,
        problems: [...e.problems],
        problemCount: e.problemCount,
      };
    throw e;
  }
}
