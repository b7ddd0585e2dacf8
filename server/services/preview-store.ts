/**
 * Upload previews waiting for confirmation, held in the server's memory;
 * their files wait on disk, in the uploads folder.
 *
 * A preview is never used as data and never written to the database: an
 * uploaded file stays here, with its preview, until it is confirmed (then it
 * becomes a stored version and leaves the store), or until it expires. So a
 * column dropped as a direct identifier at confirmation is never stored.
 * The store owns the files it holds: a preview's file is removed when the
 * preview is confirmed, expires or is evicted. One server process owns the
 * data directory, so one store per app is the whole truth. A byte budget
 * (of the files' sizes on disk) evicts the oldest previews first. Ids of
 * expired or evicted previews are remembered for a day so a late confirm is
 * told "expired" rather than "not found".
 *
 * A restart empties the store. So that a preview issued by an earlier
 * process is still told "expired", not "not found", preview ids carry their
 * own proof of issue: a UUID (version 8, RFC 9562) whose first 64 bits are
 * random and whose last 64 (less the variant bits) are an HMAC-SHA-256 of
 * those bits and the study's id, keyed by the server's secret (kept in the
 * data directory across restarts). An id that verifies for the study but is
 * not held was issued here and has expired; any other id is unknown.
 * Cost: O(previews) per sweep.
 */
import { createHmac, randomBytes, randomUUID, timingSafeEqual } from "node:crypto";
import { rm } from "node:fs/promises";
import type { DatasetKind, TablePreview, UploadOptions } from "../../contract/views/datasets";
import type { UploadLimits } from "../jobs/intake-file";

export interface StoredPreview {
  id: string;
  studyId: string;
  kind: DatasetKind;
  fileName: string;
  /** The uploaded file on disk (or, from the demo seed and benchmarks, its bytes). */
  upload: { path: string } | { bytes: Uint8Array };
  /** The uploaded file's size as received. */
  byteSize: number;
  /** The limits it was read under (the confirmation reads it under the same). */
  limits?: UploadLimits;
  sha256: string;
  uploadedBy: string;
  uploadedAt: Date;
  expiresAt: Date;
  options: UploadOptions;
  preview: TablePreview;
}

export interface PreviewStoreOptions {
  /** How long a preview waits for confirmation (default 1 hour). */
  ttlMs?: number;
  /** Bytes of uploaded files held at most (default 4 GiB, on disk). */
  maxBytes?: number;
}

const DAY = 24 * 60 * 60 * 1000;

export class PreviewStore {
  readonly ttlMs: number;
  readonly maxBytes: number;
  private readonly live = new Map<string, StoredPreview>();
  /** Expired or evicted previews: when, and for which study. */
  private readonly gone = new Map<string, { at: number; studyId: string }>();
  private readonly confirming = new Set<string>();
  private idKey: Buffer | null = null;
  private bytes = 0;

  constructor(options: PreviewStoreOptions = {}) {
    this.ttlMs = options.ttlMs ?? 60 * 60 * 1000;
    this.maxBytes = options.maxBytes ?? 4 * 1024 * 1024 * 1024;
  }

  /** Keys preview ids with the server's secret (see the module note); without it ids are random UUIDs. */
  signIdsWith(secret: string): void {
    this.idKey = createHmac("sha256", secret).update("covarion preview ids").digest();
  }

  /** A new preview id for `studyId`. */
  newId(studyId: string): string {
    if (this.idKey === null) return randomUUID();
    const bytes = Buffer.alloc(16);
    randomBytes(8).copy(bytes, 0);
    bytes[6] = (bytes[6] & 0x0f) | 0x80; // version 8: custom
    this.seal(bytes, studyId).copy(bytes, 8);
    return formatUuid(bytes);
  }

  /** True when `id` was issued by this server (this process or an earlier one) for `studyId`. */
  issued(id: string, studyId: string): boolean {
    if (
      this.idKey === null ||
      !/^[0-9a-f]{8}-[0-9a-f]{4}-8[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/i.test(id)
    )
      return false;
    const bytes = Buffer.from(id.replaceAll("-", ""), "hex");
    return timingSafeEqual(bytes.subarray(8), this.seal(bytes, studyId));
  }

  /** The last 8 bytes of an id: HMAC of its first 8 and the study, with the RFC 9562 variant bits. */
  private seal(bytes: Buffer, studyId: string): Buffer {
    const mac = createHmac("sha256", this.idKey as Buffer)
      .update(bytes.subarray(0, 8))
      .update(studyId)
      .digest()
      .subarray(0, 8);
    mac[0] = (mac[0] & 0x3f) | 0x80;
    return mac;
  }

  /** Adds a preview, evicting the oldest ones beyond the byte budget. */
  put(preview: StoredPreview, now: Date): void {
    this.sweep(now);
    this.live.set(preview.id, preview);
    this.bytes += preview.byteSize;
    for (const [id, p] of this.live) {
      if (this.bytes <= this.maxBytes || id === preview.id) break;
      this.drop(id, p, now);
    }
  }

  /**
   * The live preview with this id, "expired" when it expired or was
   * evicted, or was issued for `studyId` by an earlier process (or so long
   * ago it is forgotten), or undefined. (A preview that was confirmed is a
   * version now: callers look for the version first.)
   */
  get(id: string, now: Date, studyId?: string): StoredPreview | "expired" | undefined {
    this.sweep(now);
    const p = this.live.get(id);
    if (p) return p;
    const left = this.gone.get(id);
    if (left !== undefined && (studyId === undefined || left.studyId === studyId)) return "expired";
    return studyId !== undefined && this.issued(id, studyId) ? "expired" : undefined;
  }

  /** Removes a preview that has been confirmed, and its file. */
  remove(id: string): void {
    const p = this.live.get(id);
    if (!p) return;
    this.live.delete(id);
    this.bytes -= p.byteSize;
    removeFile(p);
  }

  /** Marks a preview as being confirmed; false when it already is (a second confirm must wait for the first). */
  claim(id: string): boolean {
    if (this.confirming.has(id)) return false;
    this.confirming.add(id);
    return true;
  }

  /** Ends what `claim` started (the confirmation succeeded or failed). */
  release(id: string): void {
    this.confirming.delete(id);
  }

  /** Live previews of one study, oldest first. */
  forStudy(studyId: string, now: Date): StoredPreview[] {
    this.sweep(now);
    return [...this.live.values()].filter((p) => p.studyId === studyId);
  }

  private drop(id: string, p: StoredPreview, now: Date): void {
    this.live.delete(id);
    this.bytes -= p.byteSize;
    removeFile(p);
    this.gone.set(id, { at: now.getTime(), studyId: p.studyId });
  }

  private sweep(now: Date): void {
    const t = now.getTime();
    for (const [id, p] of this.live) if (p.expiresAt.getTime() <= t) this.drop(id, p, now);
    for (const [id, left] of this.gone) if (t - left.at > DAY) this.gone.delete(id);
  }
}

/** Removes a preview's file on disk (one already gone is no error). */
function removeFile(p: StoredPreview): void {
  if ("path" in p.upload) void rm(p.upload.path, { force: true }).catch(() => {});
}

function formatUuid(b: Buffer): string {
  const h = b.toString("hex");
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}
