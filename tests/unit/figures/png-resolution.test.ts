/**
 * The PNG resolution chunk: CRC-32 against its published check values, the
 * pHYs chunk right after IHDR saying 300 dpi, an older pHYs replaced, and a
 * rendered figure that decodes (pngjs) at the requested width.
 */
import { PNG } from "pngjs";
import { describe, expect, it } from "vitest";
import { renderPng } from "../../../server/figures/outline";
import {
  crc32,
  physChunk,
  pixelsFor,
  pixelsPerMetre,
  withResolution,
} from "../../../server/figures/png-resolution";

/** The chunks of a PNG in order: type, data, stored CRC. */
function chunks(png: Buffer): { type: string; data: Buffer; crc: number }[] {
  const out: { type: string; data: Buffer; crc: number }[] = [];
  let at = 8;
  while (at < png.length) {
    const length = png.readUInt32BE(at);
    const type = png.toString("latin1", at + 4, at + 8);
    out.push({
      type,
      data: png.subarray(at + 8, at + 8 + length),
      crc: png.readUInt32BE(at + 8 + length),
    });
    at += 12 + length;
  }
  return out;
}

function tinyPng(): Buffer {
  const png = new PNG({ width: 3, height: 2 });
  png.data.fill(255);
  return PNG.sync.write(png);
}

describe("crc32", () => {
  it("gives the published check values", () => {
    // CRC-32 check value of "123456789" (Williams 1993, "A painless guide to CRC error detection algorithms", CRC-32 model: check = CBF43926)
    expect(crc32(Buffer.from("123456789", "latin1"))).toBe(0xcbf43926);
    // every PNG's IEND chunk ends with the CRC AE 42 60 82 (PNG specification, 2nd ed., W3C 2003, §11.2.5: IEND has no data)
    expect(crc32(Buffer.from("IEND", "latin1"))).toBe(0xae426082);
  });
});

describe("sizes at 300 dpi", () => {
  it("turns millimetres and inches into pixels", () => {
    // 300 / 0.0254 = 11,811.02 pixels per metre (arithmetic)
    expect(pixelsPerMetre(300)).toBe(11811);
    // 89 / 25.4 × 300 = 1,051.18; 183 / 25.4 × 300 = 2,161.42 (arithmetic)
    expect(pixelsFor(89, 300)).toBe(1051);
    expect(pixelsFor(183, 300)).toBe(2161);
  });
});

describe("withResolution", () => {
  it("puts a pHYs chunk with a correct CRC right after IHDR", () => {
    const out = withResolution(tinyPng(), 300);
    const list = chunks(out);
    expect(list[0].type).toBe("IHDR");
    expect(list[1].type).toBe("pHYs");
    expect(list.filter((c) => c.type === "pHYs")).toHaveLength(1);
    const phys = list[1];
    expect(phys.data.readUInt32BE(0)).toBe(11811);
    expect(phys.data.readUInt32BE(4)).toBe(11811);
    expect(phys.data.readUInt8(8)).toBe(1);
    for (const c of list)
      expect(c.crc).toBe(crc32(Buffer.concat([Buffer.from(c.type, "latin1"), c.data])));
    const decoded = PNG.sync.read(out);
    expect([decoded.width, decoded.height]).toEqual([3, 2]);
  });

  it("replaces an earlier pHYs chunk", () => {
    const once = withResolution(tinyPng(), 72);
    const twice = withResolution(once, 300);
    const phys = chunks(twice).filter((c) => c.type === "pHYs");
    expect(phys).toHaveLength(1);
    expect(phys[0].data.readUInt32BE(0)).toBe(11811);
    expect(physChunk(11811)).toHaveLength(21);
  });

  it("refuses bytes that are not a PNG", () => {
    expect(() => withResolution(Buffer.from("not a png at all, clearly not one"), 300)).toThrow(
      "signature",
    );
  });

  it("a rendered figure decodes at the requested width", () => {
    const svg =
      '<svg xmlns="http://www.w3.org/2000/svg" width="89mm" height="44.5mm" viewBox="0 0 360 180"><rect width="360" height="180" fill="#fff"/><text x="10" y="20" font-family="Inter" font-size="11">n = 12</text></svg>';
    const png = PNG.sync.read(withResolution(renderPng(svg, pixelsFor(89, 300)), 300));
    expect(png.width).toBe(1051);
    expect(png.height).toBe(Math.round((1051 * 180) / 360));
  });
});
