/**
 * Sends a body encoded ahead of time (services/fit-view-body.ts): gzip to
 * clients that accept it, the plain text to the others, each with the
 * strong ETag of its own bytes, and 304 with no body when the request's
 * If-None-Match names that ETag.
 *
 * `Cache-Control: private, no-cache, no-transform`: a browser may keep the
 * answer but asks again each time (an unchanged body answers 304), nothing
 * shared keeps it, and nothing on the way encodes it again — the
 * compression middleware leaves a no-transform answer alone, so the bytes
 * are the ones the ETag names (and a gzip body is never compressed twice).
 */
import type { Request, Response } from "express";
import type { EncodedBody } from "../services/fit-view-body";

export const ENCODED_CACHE_CONTROL = "private, no-cache, no-transform";

/** True when an If-None-Match header names `etag` (weak comparison, RFC 9110 §13.1.2) or is "*". */
export function ifNoneMatch(header: string | undefined, etag: string): boolean {
  if (!header) return false;
  const bare = (tag: string) => tag.trim().replace(/^W\//, "");
  return header.split(",").some((tag) => tag.trim() === "*" || bare(tag) === bare(etag));
}

export function sendEncoded(
  req: Request,
  res: Response,
  body: EncodedBody,
  contentType = "application/json; charset=utf-8",
): void {
  const zipped = req.acceptsEncodings("gzip", "identity") === "gzip";
  const chosen = zipped ? body.gzip : body.identity;
  res.vary("Accept-Encoding");
  res.setHeader("Cache-Control", ENCODED_CACHE_CONTROL);
  res.setHeader("ETag", chosen.etag);
  if (ifNoneMatch(req.headers["if-none-match"], chosen.etag)) {
    res.status(304).end();
    return;
  }
  res.setHeader("Content-Type", contentType);
  if (zipped) res.setHeader("Content-Encoding", "gzip");
  res.setHeader("Content-Length", chosen.bytes.length);
  res.status(200).end(chosen.bytes);
}
