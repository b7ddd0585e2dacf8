/**
 * A multer storage engine that keeps an uploaded file in shared memory (a
 * SharedArrayBuffer). The intake reads uploads in a worker thread, and
 * shared memory reaches it without a copy, at the preview and again at the
 * confirmation. The chunks are gathered as they arrive and copied once, at
 * the end, into shared memory of exactly the file's size (the one copy
 * multer's memory storage makes too); nothing is reserved from what the
 * request announces before the bytes have arrived.
 *
 * The file's bytes are `req.file.bytes`.
 */
import type { Request } from "express";
import type multer from "multer";

declare global {
  namespace Express {
    namespace Multer {
      interface File {
        /** The file's bytes in shared memory (set by sharedUploadStorage). */
        bytes?: Uint8Array;
      }
    }
  }
}

export function sharedUploadStorage(): multer.StorageEngine {
  return {
    _handleFile(
      _req: Request,
      file: Express.Multer.File,
      callback: (error?: unknown, info?: Partial<Express.Multer.File>) => void,
    ) {
      const chunks: Buffer[] = [];
      let size = 0;
      file.stream.on("data", (chunk: Buffer) => {
        chunks.push(chunk);
        size += chunk.byteLength;
      });
      file.stream.on("error", (error: unknown) => callback(error));
      file.stream.on("end", () => {
        const bytes = new Uint8Array(new SharedArrayBuffer(size));
        let at = 0;
        for (const chunk of chunks) {
          bytes.set(chunk, at);
          at += chunk.byteLength;
        }
        callback(null, { bytes, size });
      });
    },
    _removeFile(_req: Request, file: Express.Multer.File, callback: (error: Error | null) => void) {
      delete file.bytes;
      callback(null);
    },
  };
}
