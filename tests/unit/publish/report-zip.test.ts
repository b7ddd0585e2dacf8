/**
 * The deterministic ZIP writer of the report bundle (server/services/report-zip.ts):
 * entries in the given order, each entry dated at the given time with UTC
 * fields in any time zone, the same bytes on every write, large entries
 * deflated in a worker thread to the same bytes, and the archive readable
 * by fflate's own reader.
 */
import { strFromU8, unzipSync } from "fflate";
import { afterEach, describe, expect, it } from "vitest";
import { writeZip, type ZipEntry } from "../../../server/services/report-zip";

const enc = new TextEncoder();

async function zipOf(entries: readonly ZipEntry[], at: Date): Promise<Buffer> {
  const chunks: Uint8Array[] = [];
  await writeZip(entries, at, (c) => {
    chunks.push(c);
  });
  return Buffer.concat(chunks);
}

/** A text of `bytes` bytes that deflates to something (not all one letter). */
function bigText(bytes: number): string {
  let s = "";
  for (let i = 0; s.length < bytes; i++) s += `row ${i},${(i * 7919) % 1000}\n`;
  return s.slice(0, bytes);
}

const entries: ZipEntry[] = [
  { name: "README.txt", compress: true, bytes: () => enc.encode("hello\n") },
  { name: "results/big.csv", compress: true, bytes: async () => enc.encode(bigText(200_000)) },
  { name: "figures/a.png", compress: false, bytes: () => new Uint8Array([137, 80, 78, 71, 1, 2]) },
];

/** The DOS date and time of each local header as "YYYY-MM-DDTHH:MM:SS". */
function times(zip: Buffer): string[] {
  const out: string[] = [];
  const sig = Buffer.from([0x50, 0x4b, 0x03, 0x04]);
  for (let at = zip.indexOf(sig); at >= 0; at = zip.indexOf(sig, at + 4)) {
    const t = zip.readUInt16LE(at + 10);
    const d = zip.readUInt16LE(at + 12);
    const p = (n: number) => String(n).padStart(2, "0");
    out.push(
      `${(d >> 9) + 1980}-${p((d >> 5) & 15)}-${p(d & 31)}T${p(t >> 11)}:${p((t >> 5) & 63)}:${p((t & 31) * 2)}`,
    );
  }
  return out;
}

const zone = process.env.TZ;
afterEach(() => {
  if (zone === undefined) delete process.env.TZ;
  else process.env.TZ = zone;
});

describe("writeZip", () => {
  it("writes the entries in order, readable, with the same bytes every time", async () => {
    const at = new Date("2026-12-04T01:02:03.900Z");
    const a = await zipOf(entries, at);
    const b = await zipOf(entries, at);
    expect(a.equals(b)).toBe(true);
    const files = unzipSync(new Uint8Array(a));
    expect(Object.keys(files)).toEqual(["README.txt", "results/big.csv", "figures/a.png"]);
    expect(strFromU8(files["README.txt"])).toBe("hello\n");
    expect(strFromU8(files["results/big.csv"])).toBe(bigText(200_000));
    expect([...files["figures/a.png"]]).toEqual([137, 80, 78, 71, 1, 2]);
    // The large text is deflated (the archive is far smaller than the text).
    expect(a.length).toBeLessThan(100_000);
  });

  it("dates every entry at the UTC fields of the time given, in 2-second steps, in any time zone", async () => {
    const at = new Date("2026-12-04T23:59:59.500Z");
    process.env.TZ = "UTC";
    const utc = await zipOf(entries, at);
    process.env.TZ = "Pacific/Auckland";
    const auckland = await zipOf(entries, at);
    process.env.TZ = "America/Los_Angeles";
    const angeles = await zipOf(entries, at);
    expect(times(utc)).toEqual(Array(3).fill("2026-12-04T23:59:58"));
    expect(auckland.equals(utc)).toBe(true);
    expect(angeles.equals(utc)).toBe(true);
  });

  it("passes on an entry's failure", async () => {
    const broken: ZipEntry = {
      name: "figures/b.svg",
      compress: true,
      bytes: () => Promise.reject(new Error("the figure could not be drawn")),
    };
    await expect(zipOf([entries[0], broken], new Date())).rejects.toThrow(
      "the figure could not be drawn",
    );
  });
});
