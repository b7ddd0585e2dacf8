/**
 * A finished fit's view as bytes ready to send: its JSON text and that text
 * gzip-compressed, each with a strong ETag (the SHA-256 of its bytes), kept
 * in memory so that readers of a large finished fit cost neither
 * serialising nor compressing it again.
 *
 * What the body depends on (services/fits.ts, `fitViewParts`): the view's
 * head (everything but the result: model, approval, seal, who ran it —
 * what can change after a fit is done) and its shown result, which changes
 * only with the result stamp. Each request builds the head (cheap: one
 * query kept until the next write) and looks the body up under the head's
 * JSON and the stamp; when anything in them changed (an approval, a seal, a
 * renamed model, a newly stated trait reliability) the body is made again,
 * and with it its ETags. A fit that is not done is answered as JSON every
 * time (its progress changes by the second).
 *
 * Kept per database and per (fit, participant visibility): at most one
 * body each, least recently used out beyond BODY_CACHE_BYTES. Making a
 * body serialises on the request thread (~2 ms for 400 regions) and
 * compresses in the thread pool (zlib's asynchronous gzip), at the best
 * level since it is done once.
 */
import { createHash } from "node:crypto";
import { promisify } from "node:util";
import { constants, gzip } from "node:zlib";
import type { Queryable } from "../../db/client";
import type { FitJobs } from "../jobs/fit-jobs";
import type { FitView } from "../../contract/views/fits";
import { fitViewParts } from "./fits";

const gzipAsync = promisify(gzip);

/** A body in both encodings, each with its own strong ETag. */
export interface EncodedBody {
  identity: { bytes: Buffer; etag: string };
  gzip: { bytes: Buffer; etag: string };
}

interface Entry {
  key: string;
  body: Promise<EncodedBody>;
  bytes: number;
}

/** Bytes of kept bodies per database (both encodings): about 150 finished fits of 400 regions. */
const BODY_CACHE_BYTES = 48 * 1024 * 1024;
const bodies = new WeakMap<object, { entries: Map<string, Entry>; bytes: number }>();

const etagOf = (bytes: Buffer) => `"${createHash("sha256").update(bytes).digest("base64url")}"`;

/** Encodes a JSON text once: the text and its gzip, each with the ETag of its bytes. */
export async function encodeJson(text: string): Promise<EncodedBody> {
  const identity = Buffer.from(text, "utf8");
  const zipped = await gzipAsync(identity, { level: constants.Z_BEST_COMPRESSION });
  return {
    identity: { bytes: identity, etag: etagOf(identity) },
    gzip: { bytes: zipped, etag: etagOf(zipped) },
  };
}

/**
 * A fit's view: for a finished fit its kept encoded body, otherwise the view
 * itself (to be sent as JSON). The body's JSON is exactly that of
 * `loadFitView`'s answer. Throws 404 like loadFitView.
 */
export async function fitViewBody(
  db: Queryable,
  jobs: FitJobs,
  studyId: string,
  fitId: string,
  participantsVisible: boolean,
): Promise<{ encoded: EncodedBody } | { view: FitView }> {
  const parts = await fitViewParts(db, jobs, studyId, fitId, participantsVisible);
  if (parts.head.status !== "done" || !parts.result)
    return { view: { ...parts.head, result: parts.result } };
  const cache = bodies.get(db) ?? { entries: new Map<string, Entry>(), bytes: 0 };
  bodies.set(db, cache);
  const slot = `${fitId} ${participantsVisible}`;
  const key = `${JSON.stringify(parts.head)}\u0000${parts.resultStamp}`;
  const hit = cache.entries.get(slot);
  if (hit?.key === key) {
    cache.entries.delete(slot);
    cache.entries.set(slot, hit);
    return { encoded: await hit.body };
  }
  const result = parts.result;
  const entry: Entry = {
    key,
    bytes: 0,
    body: encodeJson(JSON.stringify({ ...parts.head, result })),
  };
  if (hit) {
    cache.entries.delete(slot);
    cache.bytes -= hit.bytes;
  }
  cache.entries.set(slot, entry);
  entry.body.then(
    (body) => {
      if (cache.entries.get(slot) !== entry) return;
      entry.bytes = body.identity.bytes.length + body.gzip.bytes.length;
      cache.bytes += entry.bytes;
      for (const [name, old] of cache.entries) {
        if (cache.bytes <= BODY_CACHE_BYTES) break;
        cache.entries.delete(name);
        cache.bytes -= old.bytes;
      }
    },
    () => {
      if (cache.entries.get(slot) === entry) cache.entries.delete(slot);
    },
  );
  return { encoded: await entry.body };
}
