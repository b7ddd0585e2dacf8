/**
 * The intake's worker threads: uploads are read, checked and previewed,
 * confirmed uploads typed and turned into rows to store, and rosters
 * joined, in a pool of worker threads (piscina; the task is
 * intake-task.ts), never on the request thread — a 50 MB table takes
 * seconds to read. The main thread alone reads and writes the database
 * (server/services/datasets.ts stores what the pool returns).
 *
 * One pool per process, started with the first upload: as many threads as
 * cores less one (at least one), ended after a minute without work (idle
 * threads never keep the process alive). An upload is handed over as
 * the path of its file on disk (the worker reads it, intake-file.ts) and
 * is at most MAX_UPLOAD_MB (server/config.ts), which caps a task's time.
 * A refusal of the file comes back as the IntakeError it was in the
 * worker.
 */
import { availableParallelism } from "node:os";
import type { Piscina } from "piscina";
import { workerPool } from "./worker-pool";
import {
  type Confirmation,
  IntakeError,
  type PreviewOptions,
  type TableKind,
  type TablePreview,
} from "../intake";
import type { UploadLimits, UploadSource } from "./intake-file";
import type { MappingFacts, RosterInput, RosterRequest } from "./intake-roster";
import type { EncodedVersion } from "./intake-rows";
import type { IntakeTask, IntakeTaskOutcome } from "./intake-task";

export interface IntakeJobsOptions {
  /** Worker threads (default: available parallelism − 1, at least 1). */
  threads?: number;
  /** A thread without work ends after this long (default one minute). */
  idleTimeoutMs?: number;
}

/** An upload as the pool takes it: the path of its file, or its bytes; and the limits it is read under. */
export interface UploadInput {
  path?: string;
  bytes?: Uint8Array;
  limits?: UploadLimits;
}

function sourceOf(input: UploadInput): UploadSource {
  if (input.path !== undefined) return { path: input.path };
  if (input.bytes !== undefined) return { bytes: input.bytes };
  throw new Error("intake: an upload needs its path or its bytes");
}

export class IntakeJobs {
  readonly threads: number;
  private readonly idleTimeoutMs: number;
  private pool: Piscina | null = null;

  constructor(options: IntakeJobsOptions = {}) {
    this.threads = options.threads ?? Math.max(1, availableParallelism() - 1);
    this.idleTimeoutMs = options.idleTimeoutMs ?? 60_000;
  }

  /**
   * Reads and previews an uploaded file (its `path` on disk, or its
   * `bytes`), with its SHA-256. Throws IntakeError.
   */
  async preview(
    input: UploadInput & { fileName: string; kind: TableKind; options: PreviewOptions },
  ): Promise<{ preview: TablePreview; sha256: string }> {
    const outcome = await this.run({
      op: "preview",
      source: sourceOf(input),
      limits: input.limits,
      fileName: input.fileName,
      kind: input.kind,
      options: input.options,
    });
    if (outcome.op !== "preview") throw new Error("intake task: unexpected answer");
    return { preview: outcome.preview, sha256: outcome.sha256 };
  }

  /** Reads, types and checks a file with the uploader's decisions and builds the rows to store. Throws IntakeError. */
  async encode(
    input: UploadInput & {
      fileName: string;
      kind: TableKind;
      confirmation: Confirmation;
      datasetId: string;
    },
  ): Promise<{ encoded: EncodedVersion; sha256: string }> {
    const outcome = await this.run({
      op: "encode",
      source: sourceOf(input),
      limits: input.limits,
      fileName: input.fileName,
      kind: input.kind,
      confirmation: input.confirmation,
      datasetId: input.datasetId,
    });
    if (outcome.op !== "encode") throw new Error("intake task: unexpected answer");
    return { encoded: outcome.encoded, sha256: outcome.sha256 };
  }

  /** Answers a request about a study's roster (intake-roster.ts): JSON or CSV text, or the facts mappings are checked against. */
  async roster(input: RosterInput, request: RosterRequest): Promise<string | MappingFacts> {
    const outcome = await this.run({ op: "roster", input, request });
    if (outcome.op !== "roster") throw new Error("intake task: unexpected answer");
    return outcome.answer;
  }

  /** Stops the worker threads. */
  async close(): Promise<void> {
    const pool = this.pool;
    this.pool = null;
    if (pool) await pool.destroy();
  }

  private async run(task: IntakeTask): Promise<Extract<IntakeTaskOutcome, { ok: true }>> {
    if (!this.pool) {
      this.pool = workerPool("intake-task.ts", {
        minThreads: 0,
        maxThreads: this.threads,
        idleTimeout: this.idleTimeoutMs,
      });
    }
    const outcome = (await this.pool.run(task)) as IntakeTaskOutcome;
    if (!outcome.ok) throw new IntakeError(outcome.status, outcome.problems, outcome.problemCount);
    return outcome;
  }
}

let shared: IntakeJobs | null = null;

/** The process's intake pool (created on first use). */
export function intakeJobs(): IntakeJobs {
  shared ??= new IntakeJobs();
  return shared;
}
