/**
 * Upload previews waiting for confirmation, held in the server's memory.
 *
 * A preview is never used as data and never written to the database: an
 * uploaded file stays here, with its preview, until it is confirmed (then it
 * becomes a stored version and leaves the store), or until it expires. So a
 * column dropped as a direct identifier at confirmation is never stored.
 * One server process owns the data directory, so one store per app is the
 * whole truth. A byte budget evicts the oldest previews first. Ids of
 * expired or evicted previews are remembered for a day so a late confirm is
 * told "expired" rather than "not found". Cost: O(previews) per sweep.
 */
import type { DatasetKind } from "../../db/schema";
import type { TablePreview } from "../intake";

export interface UploadOptions {
  idColumn?: string;
  seSuffix?: string;
  layout?: "wide" | "long";
  /** null: the brain table has no session column. */
  sessionColumn?: string | null;
}

export interface StoredPreview {
  id: string;
  studyId: string;
  kind: DatasetKind;
  fileName: string;
  bytes: Uint8Array;
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
  /** Bytes of uploaded files held at most (default 256 MiB). */
  maxBytes?: number;
}

const DAY = 24 * 60 * 60 * 1000;

export class PreviewStore {
  readonly ttlMs: number;
  readonly maxBytes: number;
  private readonly live = new Map<string, StoredPreview>();
  private readonly gone = new Map<string, number>();
  private readonly confirming = new Set<string>();
  private bytes = 0;

  constructor(options: PreviewStoreOptions = {}) {
    this.ttlMs = options.ttlMs ?? 60 * 60 * 1000;
    this.maxBytes = options.maxBytes ?? 256 * 1024 * 1024;
  }

  /** Adds a preview, evicting the oldest ones beyond the byte budget. */
  put(preview: StoredPreview, now: Date): void {
    this.sweep(now);
    this.live.set(preview.id, preview);
    this.bytes += preview.bytes.byteLength;
    for (const [id, p] of this.live) {
      if (this.bytes <= this.maxBytes || id === preview.id) break;
      this.drop(id, p, now);
    }
  }

  /** The live preview with this id, "expired" when it expired or was evicted, or undefined. */
  get(id: string, now: Date): StoredPreview | "expired" | undefined {
    this.sweep(now);
    const p = this.live.get(id);
    if (p) return p;
    return this.gone.has(id) ? "expired" : undefined;
  }

  /** Removes a preview that has been confirmed. */
  remove(id: string): void {
    const p = this.live.get(id);
    if (!p) return;
    this.live.delete(id);
    this.bytes -= p.bytes.byteLength;
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
    this.bytes -= p.bytes.byteLength;
    this.gone.set(id, now.getTime());
  }

  private sweep(now: Date): void {
    const t = now.getTime();
    for (const [id, p] of this.live) if (p.expiresAt.getTime() <= t) this.drop(id, p, now);
    for (const [id, at] of this.gone) if (t - at > DAY) this.gone.delete(id);
  }
}
