/**
 * Reading an uploaded file from disk in the intake's worker thread: its
 * SHA-256 (of the bytes as received), and its table. A gzip-compressed file
 * (`.csv.gz`, `.tsv.gz`; told by its first bytes, RFC 1952) is decompressed
 * as a stream (node:zlib) into one buffer of its text — sized beforehand
 * from the size the gzip trailer records, so the text is not copied as it
 * grows — and the text is read as any other upload (the delimiter is
 * detected from the text, as for an uncompressed file). A damaged or
 * truncated gzip file is refused (400) naming the file.
 *
 * Limits: the bytes received are limited before the file reaches here
 * (MAX_UPLOAD_MB, server/http/upload-storage.ts); a compressed file's text
 * may be at most TEXT_PER_BYTE_RECEIVED times that (a small file that
 * decompresses into gigabytes is refused as it decompresses, not after);
 * the header's columns by MAX_UPLOAD_COLUMNS.
 *
 * Cost: O(bytes) reading and hashing; memory: the text once, plus the
 * reader's offsets (read-table.ts).
 */
import { createHash } from "node:crypto";
import { createReadStream } from "node:fs";
import { open, readFile } from "node:fs/promises";
import { createGunzip } from "node:zlib";
import {
  DEFAULT_MAX_BYTES,
  DEFAULT_MAX_COLUMNS,
  IntakeError,
  MAX_TEXT_BYTES,
  type RawTable,
  type ReadOptions,
  problem,
  readTable,
  sha256Hex,
} from "../intake";

/** The limits an upload is read under (server/config.ts `uploads`). */
export interface UploadLimits {
  /** Most bytes received (MAX_UPLOAD_MB). */
  maxBytes: number;
  /** Most columns in the header (MAX_UPLOAD_COLUMNS). */
  maxColumns: number;
}

export const DEFAULT_UPLOAD_LIMITS: UploadLimits = {
  maxBytes: DEFAULT_MAX_BYTES,
  maxColumns: DEFAULT_MAX_COLUMNS,
};

/** A compressed upload's text may be at most this many times the upload limit. */
export const TEXT_PER_BYTE_RECEIVED = 20;

/** Where an upload's bytes are: a file on disk, or (the demo seed, tests) in memory. */
export type UploadSource = { path: string } | { bytes: Uint8Array };

const SETTINGS = { maxBytes: "MAX_UPLOAD_MB", maxColumns: "MAX_UPLOAD_COLUMNS" };

function mb(bytes: number): string {
  return `${(bytes / (1024 * 1024)).toFixed(bytes < 1024 * 1024 ? 2 : 0)} MB`;
}

/** Reads an upload into a raw table, with the SHA-256 of its bytes as received. Throws IntakeError. */
export async function readUpload(
  source: UploadSource,
  file: string,
  limits: UploadLimits = DEFAULT_UPLOAD_LIMITS,
): Promise<{ table: RawTable; sha256: string }> {
  const read: ReadOptions = {
    maxBytes: limits.maxBytes,
    maxColumns: limits.maxColumns,
    settings: SETTINGS,
  };
  if ("bytes" in source) {
    const bytes = isGzip(source.bytes) ? await gunzipAll(source.bytes, file, limits) : null;
    return {
      table: readTable(
        bytes ?? source.bytes,
        file,
        bytes ? { ...read, maxBytes: textLimit(limits) } : read,
      ),
      sha256: sha256Hex(source.bytes),
    };
  }
  const head = await firstBytes(source.path, 2);
  if (!isGzip(head)) {
    if (/\.gz$/i.test(file)) {
      throw new IntakeError(400, [
        problem(
          file,
          "bad_gzip",
          "is named .gz but is not gzip-compressed; upload it as .csv or .tsv, or compress it with gzip",
        ),
      ]);
    }
    const bytes = await readFile(source.path);
    return { table: readTable(bytes, file, read), sha256: sha256Hex(bytes) };
  }
  const hash = createHash("sha256");
  const text = await gunzipFile(source.path, file, limits, (chunk) => hash.update(chunk));
  return {
    table: readTable(text, file, { ...read, maxBytes: textLimit(limits) }),
    sha256: hash.digest("hex"),
  };
}

function textLimit(limits: UploadLimits): number {
  return Math.min(MAX_TEXT_BYTES, limits.maxBytes * TEXT_PER_BYTE_RECEIVED);
}

function isGzip(bytes: Uint8Array): boolean {
  return bytes.length >= 2 && bytes[0] === 0x1f && bytes[1] === 0x8b;
}

async function firstBytes(path: string, n: number): Promise<Buffer> {
  const handle = await open(path, "r");
  try {
    const buffer = Buffer.alloc(n);
    const { bytesRead } = await handle.read(buffer, 0, n, 0);
    return buffer.subarray(0, bytesRead);
  } finally {
    await handle.close();
  }
}

/** The text size a gzip file's trailer records (its last 4 bytes: the size modulo 2^32, RFC 1952). */
async function recordedSize(path: string): Promise<number> {
  const handle = await open(path, "r");
  try {
    const { size } = await handle.stat();
    if (size < 18) return 0;
    const buffer = Buffer.alloc(4);
    await handle.read(buffer, 0, 4, size - 4);
    return buffer.readUInt32LE(0);
  } finally {
    await handle.close();
  }
}

function gzipRefusal(file: string, error: NodeJS.ErrnoException): IntakeError {
  const truncated = error.code === "Z_BUF_ERROR" || /unexpected end/i.test(error.message);
  return new IntakeError(400, [
    problem(
      file,
      "bad_gzip",
      truncated
        ? "is a truncated gzip file: it ends before its compressed data does; upload the whole file again"
        : `is a damaged gzip file (${error.message}); compress the table again with gzip and upload it`,
    ),
  ]);
}

function tooLargeText(file: string, limits: UploadLimits): IntakeError {
  const limit = textLimit(limits);
  return new IntakeError(413, [
    problem(
      file,
      "too_large",
      `decompressed, the file has more than ${mb(limit)} of text; the limit is ${TEXT_PER_BYTE_RECEIVED} × the upload limit of ${mb(limits.maxBytes)} (raise it with MAX_UPLOAD_MB)`,
    ),
  ]);
}

/** Collects decompressed chunks into one buffer, growing it (by doubling) only when the expected size was short. */
class TextBuffer {
  private buffer: Buffer;
  length = 0;

  constructor(
    expected: number,
    private readonly limit: number,
    private readonly onTooLarge: () => Error,
  ) {
    this.buffer = Buffer.allocUnsafe(Math.max(1024, Math.min(expected, limit)));
  }

  add(chunk: Buffer): void {
    const need = this.length + chunk.byteLength;
    if (need > this.limit) throw this.onTooLarge();
    if (need > this.buffer.length) {
      const grown = Buffer.allocUnsafe(
        Math.min(this.limit, Math.max(need, this.buffer.length * 2)),
      );
      this.buffer.copy(grown, 0, 0, this.length);
      this.buffer = grown;
    }
    chunk.copy(this.buffer, this.length);
    this.length = need;
  }

  text(): Buffer {
    return this.buffer.subarray(0, this.length);
  }
}

async function gunzipFile(
  path: string,
  file: string,
  limits: UploadLimits,
  onCompressed: (chunk: Buffer) => void,
): Promise<Buffer> {
  const collected = new TextBuffer(await recordedSize(path), textLimit(limits), () =>
    tooLargeText(file, limits),
  );
  const input = createReadStream(path, { highWaterMark: 256 * 1024 });
  const gunzip = createGunzip({ chunkSize: 1024 * 1024 });
  return new Promise<Buffer>((resolve, reject) => {
    let settled = false;
    const stop = (error: unknown) => {
      if (settled) return;
      settled = true;
      input.destroy();
      gunzip.destroy();
      reject(error);
    };
    input.on("data", (chunk) => onCompressed(chunk as Buffer));
    input.on("error", stop);
    gunzip.on("data", (chunk: Buffer) => {
      try {
        collected.add(chunk);
      } catch (error) {
        stop(error);
      }
    });
    gunzip.on("error", (error) => stop(gzipRefusal(file, error)));
    gunzip.on("end", () => {
      if (settled) return;
      settled = true;
      resolve(collected.text());
    });
    input.pipe(gunzip);
  });
}

async function gunzipAll(bytes: Uint8Array, file: string, limits: UploadLimits): Promise<Buffer> {
  const trailer =
    bytes.length >= 18 ? Buffer.from(bytes.buffer, bytes.byteOffset + bytes.length - 4, 4) : null;
  const collected = new TextBuffer(trailer ? trailer.readUInt32LE(0) : 0, textLimit(limits), () =>
    tooLargeText(file, limits),
  );
  const gunzip = createGunzip({ chunkSize: 1024 * 1024 });
  return new Promise<Buffer>((resolve, reject) => {
    let settled = false;
    gunzip.on("data", (chunk: Buffer) => {
      try {
        collected.add(chunk);
      } catch (error) {
        settled = true;
        gunzip.destroy();
        reject(error);
      }
    });
    gunzip.on("error", (error) => {
      if (settled) return;
      settled = true;
      reject(gzipRefusal(file, error));
    });
    gunzip.on("end", () => {
      if (!settled) resolve(collected.text());
    });
    gunzip.end(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength));
  });
}
