/**
 * Writes a PNG's physical resolution: the pHYs chunk (PNG specification,
 * 2nd ed., W3C 2003, §11.3.5.3: pixels per unit on each axis as 4-byte
 * big-endian integers and a unit byte, 1 = metre), placed right after IHDR
 * with its CRC-32 (§5.5, the ISO 3309 polynomial). An existing pHYs chunk
 * is replaced. Pure; cost O(bytes).
 */

const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

let table: Uint32Array | null = null;

/** CRC-32 of `bytes` as PNG computes it (reflected polynomial 0xEDB88320). */
export function crc32(bytes: Uint8Array): number {
  if (!table) {
    table = new Uint32Array(256);
    for (let n = 0; n < 256; n++) {
      let c = n;
      for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
      table[n] = c >>> 0;
    }
  }
  let c = 0xffffffff;
  for (const b of bytes) c = table[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** Pixels per metre for `dpi` dots per inch: 300 dpi → 11811. */
export function pixelsPerMetre(dpi: number): number {
  return Math.round(dpi / 0.0254);
}

/** The pixel width of `mm` millimetres at `dpi`: 89 mm at 300 dpi → 1051. */
export function pixelsFor(mm: number, dpi: number): number {
  return Math.round((mm / 25.4) * dpi);
}

/** A pHYs chunk (length, type, data, CRC) for `ppm` pixels per metre on both axes. */
export function physChunk(ppm: number): Buffer {
  const chunk = Buffer.alloc(4 + 4 + 9 + 4);
  chunk.writeUInt32BE(9, 0);
  chunk.write("pHYs", 4, "latin1");
  chunk.writeUInt32BE(ppm, 8);
  chunk.writeUInt32BE(ppm, 12);
  chunk.writeUInt8(1, 16);
  chunk.writeUInt32BE(crc32(chunk.subarray(4, 17)), 17);
  return chunk;
}

/**
 * `png` with a pHYs chunk saying `dpi` dots per inch right after IHDR (any
 * earlier pHYs chunk is left out). Throws when `png` is not a PNG.
 */
export function withResolution(png: Uint8Array, dpi: number): Buffer {
  const bytes = Buffer.from(png);
  if (bytes.length < 33 || SIGNATURE.some((b, i) => bytes[i] !== b))
    throw new Error("withResolution: not a PNG (the signature is missing)");
  if (bytes.toString("latin1", 12, 16) !== "IHDR")
    throw new Error("withResolution: not a PNG (IHDR is not the first chunk)");
  const parts: Buffer[] = [bytes.subarray(0, 8)];
  let offset = 8;
  let first = true;
  while (offset + 12 <= bytes.length) {
    const length = bytes.readUInt32BE(offset);
    const end = offset + 12 + length;
    if (end > bytes.length)
      throw new Error(`withResolution: chunk at byte ${offset} runs past the end`);
    const type = bytes.toString("latin1", offset + 4, offset + 8);
    if (type !== "pHYs") parts.push(bytes.subarray(offset, end));
    if (first) {
      parts.push(physChunk(pixelsPerMetre(dpi)));
      first = false;
    }
    offset = end;
  }
  return Buffer.concat(parts);
}
