/**
 * The preview store owns the uploaded files of the previews it holds: a
 * preview's file is removed when the preview is confirmed (removed from the
 * store), expires, or is evicted past the byte budget — and not before.
 */
import { existsSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { PreviewStore, type StoredPreview } from "../../../server/services/preview-store";

const dir = mkdtempSync(join(tmpdir(), "covarion-preview-files-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let counter = 0;
function preview(store: PreviewStore, now: Date, byteSize = 10): StoredPreview {
  counter += 1;
  const path = join(dir, `upload-${counter}.part`);
  writeFileSync(path, "x".repeat(byteSize));
  return {
    id: store.newId("study-1"),
    studyId: "study-1",
    kind: "brain",
    fileName: "brain.csv",
    upload: { path },
    byteSize,
    sha256: "0".repeat(64),
    uploadedBy: "user-1",
    uploadedAt: now,
    expiresAt: new Date(now.getTime() + store.ttlMs),
    options: {},
    preview: {} as StoredPreview["preview"],
  };
}

/** Waits a little for removals (they run without being awaited). */
async function settled(): Promise<void> {
  await new Promise((r) => setTimeout(r, 50));
}

const pathOf = (p: StoredPreview) => (p.upload as { path: string }).path;

describe("preview store files", () => {
  it("keeps a held preview's file and removes it when the preview is confirmed", async () => {
    const store = new PreviewStore();
    const now = new Date();
    const p = preview(store, now);
    store.put(p, now);
    await settled();
    expect(existsSync(pathOf(p))).toBe(true);
    store.remove(p.id);
    await settled();
    expect(existsSync(pathOf(p))).toBe(false);
  });

  it("removes the file of a preview that expired", async () => {
    const store = new PreviewStore({ ttlMs: 1000 });
    const now = new Date();
    const p = preview(store, now);
    store.put(p, now);
    expect(store.get(p.id, new Date(now.getTime() + 2000), "study-1")).toBe("expired");
    await settled();
    expect(existsSync(pathOf(p))).toBe(false);
  });

  it("removes the oldest previews' files past the byte budget, never the newest", async () => {
    const store = new PreviewStore({ maxBytes: 25 });
    const now = new Date();
    const [a, b, c] = [preview(store, now), preview(store, now), preview(store, now, 20)];
    for (const p of [a, b, c]) store.put(p, now);
    await settled();
    expect([a, b, c].map((p) => existsSync(pathOf(p)))).toEqual([false, false, true]);
  });
});
