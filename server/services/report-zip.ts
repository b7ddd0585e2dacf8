/**
 * A deterministic, streamed ZIP archive (fflate's `Zip` streaming class):
 * the same entries with the same time give the same bytes, on any machine
 * and in any time zone.
 *
 * - Entries are written in the order given, one at a time: an entry's
 *   bytes are asked for (`bytes()`, which may render or read them) only
 *   when the one before it has been written out, so the archive is never
 *   held whole in memory — at most one entry and its compressed form.
 * - Every entry carries the same modification time. ZIP stores a local
 *   date and time (2-second steps) that fflate reads from a `Date` in the
 *   server's time zone; the entry time is given as the Date whose local
 *   fields are the UTC fields of `mtime`, so the stored fields are UTC
 *   wherever the server runs. No extra fields, comments or attributes.
 * - Text is deflated (level 6); entries that are already compressed (PNG,
 *   DOCX) are stored. Deflating runs on Node's thread pool (zlib's
 *   asynchronous raw deflate; fflate's own asynchronous deflate starts a
 *   new worker thread for every entry, which cost seconds for a bundle of
 *   figures), so the request thread never compresses; it only computes
 *   each entry's CRC-32 (zlib, well over 100 MB/s). The deflated bytes are
 *   zlib's: the same for the same input and zlib build, so a server gives
 *   the same bundle for the same fit until its Node.js is upgraded.
 */
import { promisify } from "node:util";
import { crc32, deflateRaw } from "node:zlib";
import { Zip, type ZipInputFile, ZipPassThrough } from "fflate";

export interface ZipEntry {
  /** Path inside the archive ("results/regions.csv"). */
  name: string;
  /** Deflate it (text) or store it as it is (already compressed: PNG, DOCX). */
  compress: boolean;
  bytes(): Promise<Uint8Array> | Uint8Array;
}

const deflateLevel = 6;
const deflate = promisify(deflateRaw);

/** The Date whose local fields are `at`'s UTC fields, rounded down to ZIP's 2-second step. */
export function zipTime(at: Date): Date {
  return new Date(
    at.getUTCFullYear(),
    at.getUTCMonth(),
    at.getUTCDate(),
    at.getUTCHours(),
    at.getUTCMinutes(),
    at.getUTCSeconds() - (at.getUTCSeconds() % 2),
  );
}

/**
 * Writes `entries` as one ZIP archive to `write`, awaiting each chunk's
 * write (back-pressure). `mtime` must fall in 1980–2099 (ZIP's range).
 * Rejects with the first error of an entry's `bytes()`, of deflating or of
 * `write`; what was written until then is an incomplete archive.
 */
export async function writeZip(
  entries: readonly ZipEntry[],
  mtime: Date,
  write: (chunk: Uint8Array) => Promise<void> | void,
): Promise<void> {
  const time = zipTime(mtime);
  const chunks: Uint8Array[] = [];
  let failure: Error | null = null;
  let ended: () => void = () => {};
  const end = new Promise<void>((resolve) => {
    ended = resolve;
  });
  const zip = new Zip((error, chunk, final) => {
    if (error) failure ??= error;
    else chunks.push(chunk);
    if (error || final) ended();
  });
  const flush = async () => {
    while (chunks.length > 0) await write(chunks.shift() as Uint8Array);
  };
  for (const entry of entries) {
    const data = await entry.bytes();
    // A stored entry passes through; a deflated one is deflated first and handed over whole.
    const packed = entry.compress ? await deflate(data, { level: deflateLevel }) : null;
    const file: ZipInputFile & { push?(chunk: Uint8Array, final: boolean): void } = packed
      ? { filename: entry.name, size: data.length, crc: crc32(data), compression: 8 }
      : new ZipPassThrough(entry.name);
    file.mtime = time;
    const written = new Promise<void>((resolve) => {
      zip.add(file);
      // The archive has taken the entry's last chunk once the entry reports it (Zip.add set `ondata`).
      const inner = file.ondata as NonNullable<ZipInputFile["ondata"]>;
      file.ondata = (error, chunk, final) => {
        inner(error, chunk, final);
        if (error) failure ??= error;
        if (error || final) resolve();
      };
    });
    if (packed)
      file.ondata?.(null, new Uint8Array(packed.buffer, packed.byteOffset, packed.length), true);
    else file.push?.(data, true);
    await written;
    if (failure) throw failure;
    await flush();
  }
  zip.end();
  await end;
  if (failure) throw failure;
  await flush();
}
