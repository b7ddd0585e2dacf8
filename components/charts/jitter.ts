/**
 * Deterministic horizontal jitter for strip plots: each participant's offset
 * comes from a hash of their id, so a participant sits in the same place on
 * every render, on every device and whatever the order of the rows, and no
 * random generator is involved.
 *
 * Hash: 32-bit FNV-1a over the id's UTF-8 bytes (Fowler, Noll & Vo; offset
 * basis 2166136261, prime 16777619), followed by the 32-bit finalizer of
 * MurmurHash3 (Appleby) so that ids differing only in the last character
 * ("sub-01", "sub-02") land far apart instead of in a row.
 */

const encoder = new TextEncoder();

/** 32-bit FNV-1a hash of the UTF-8 bytes of `text`, as an unsigned integer. Cost O(length). */
export function fnv1a32(text: string): number {
  let h = 0x811c9dc5;
  for (const byte of encoder.encode(text)) {
    h ^= byte;
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

/** MurmurHash3's 32-bit finalizer (avalanche step), unsigned. */
export function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** A number in [−1, 1) fixed by `id`. */
export function jitterUnit(id: string): number {
  return (fmix32(fnv1a32(id)) / 2 ** 32) * 2 - 1;
}

/** Offset in [−halfWidth, halfWidth) for participant `id`. */
export function jitterOffset(id: string, halfWidth: number): number {
  return jitterUnit(id) * halfWidth;
}
