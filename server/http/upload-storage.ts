/**
 * A multer storage engine that writes an uploaded file to a temporary file
 * in the uploads folder (`<DATA_DIR>/uploads`) as it arrives, so the
 * request thread never holds the file in memory: the intake's worker thread
 * reads it from disk (server/jobs/intake-file.ts), at the preview and again
 * at the confirmation. multer's `fileSize` limit cuts the stream at the
 * limit (MAX_UPLOAD_MB, counted on the bytes received).
 *
 * Who removes the file: multer, when the request fails while or after it
 * arrives (its `_removeFile`); `discardUnlessKept`, when the answer has gone
 * out and nothing took the file; the preview store, once it holds the
 * file, when the preview is confirmed, expires or is evicted. Files left by
 * a stopped process are removed at the next start (`clearStaleUploads`).
 *
 * The file's place is `req.file.path`, its size `req.file.size`.
 */
import { randomBytes } from "node:crypto";
import { createWriteStream, mkdirSync, readdirSync, rmSync, statSync } from "node:fs";
import { rm } from "node:fs/promises";
import { join } from "node:path";
import type { Request, Response } from "express";
import type multer from "multer";

const PREFIX = "upload-";
const SUFFIX = ".part";

/** Removes a file, ignoring one that is already gone. */
export function removeUpload(path: string): Promise<void> {
  return rm(path, { force: true }).catch(() => {});
}

export function uploadStorage(dir: string): multer.StorageEngine {
  mkdirSync(dir, { recursive: true, mode: 0o700 });
  return {
    _handleFile(
      _req: Request,
      file: Express.Multer.File,
      callback: (error?: unknown, info?: Partial<Express.Multer.File>) => void,
    ) {
      const path = join(dir, `${PREFIX}${randomBytes(12).toString("hex")}${SUFFIX}`);
      const out = createWriteStream(path, { flags: "wx", mode: 0o600 });
      let size = 0;
      let failed = false;
      const fail = (error: unknown) => {
        if (failed) return;
        failed = true;
        file.stream.unpipe(out);
        file.stream.resume();
        out.destroy();
        void removeUpload(path).then(() => callback(error));
      };
      file.stream.on("data", (chunk: Buffer) => {
        size += chunk.byteLength;
      });
      file.stream.on("error", fail);
      out.on("error", fail);
      out.on("finish", () => {
        if (!failed) callback(null, { path, size });
      });
      file.stream.pipe(out);
    },
    _removeFile(_req: Request, file: Express.Multer.File, callback: (error: Error | null) => void) {
      if (!file.path) return callback(null);
      void removeUpload(file.path).then(() => callback(null));
    },
  };
}

const kept = new WeakSet<Express.Multer.File>();

/** Marks an uploaded file as taken (by the preview store): it outlives the request. */
export function keepUpload(file: Express.Multer.File): void {
  kept.add(file);
}

/** Once the answer has gone out (or the connection closed), removes the request's uploaded file unless something kept it. */
export function discardUnlessKept(req: Request, res: Response): void {
  res.once("close", () => {
    const file = req.file;
    if (file?.path && !kept.has(file)) void removeUpload(file.path);
  });
}

/** Removes upload files in `dir` older than `olderThanMs` (left by a stopped process). */
export function clearStaleUploads(dir: string, olderThanMs: number, now = Date.now()): number {
  let removed = 0;
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return 0;
  }
  for (const name of names) {
    if (!name.startsWith(PREFIX) || !name.endsWith(SUFFIX)) continue;
    const path = join(dir, name);
    try {
      if (now - statSync(path).mtimeMs > olderThanMs) {
        rmSync(path, { force: true });
        removed += 1;
      }
    } catch {
      // gone meanwhile
    }
  }
  return removed;
}
