import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  IntakeError,
  buildBrainTable,
  buildFitData,
  buildParticipantSheet,
  neutraliseCell,
  previewTable,
  readTable,
  tableRows,
  toCsv,
} from "../../../server/intake";

// Bytes that make CSV-like files: delimiters, quotes, line ends, digits, letters,
// missing markers' letters, a few high and control bytes (invalid UTF-8, NUL).
const ALPHABET = [
  ...'\t,;"\r\n .-+eE0123456789abcNA/_sub',
  0x00,
  0xc3,
  0xa9,
  0xff,
  0xef,
  0xbb,
  0xbf,
].map((c) => (typeof c === "number" ? c : c.charCodeAt(0)));
const csvLikeBytes = fc
  .array(fc.constantFrom(...ALPHABET), { maxLength: 300 })
  .map((a) => new Uint8Array(a));

// Files shaped like tables: lines of a few cells, one delimiter, then a few random bytes changed.
const CELLS = [
  "sub-01",
  "sub-1",
  "01",
  "7",
  "07",
  "0.42",
  "-1e-3",
  "n/a",
  "NA",
  "",
  "O.42",
  '"a,b"',
  "1",
  "2",
  "2.5",
];
const NAMES = [
  "participant_id",
  "session",
  "L_insula",
  "L_insula_se",
  "age",
  "group",
  "region",
  "value",
  "se",
  "x_se",
];
const lineShapedBytes = fc
  .integer({ min: 2, max: 4 })
  .chain((cols) =>
    fc.record({
      delimiter: fc.constantFrom(",", "\t", ";"),
      header: fc.uniqueArray(fc.constantFrom(...NAMES), { minLength: cols, maxLength: cols }),
      lines: fc.array(fc.array(fc.constantFrom(...CELLS), { minLength: cols, maxLength: cols }), {
        minLength: 1,
        maxLength: 8,
      }),
      edits: fc.array(fc.tuple(fc.nat(), fc.constantFrom(...ALPHABET)), { maxLength: 2 }),
    }),
  )
  .map(({ delimiter, header, lines, edits }) => {
    const text = [header, ...lines].map((l) => l.join(delimiter)).join("\n");
    const bytes = new TextEncoder().encode(`${text}\n`);
    for (const [at, b] of edits) bytes[at % bytes.length] = b;
    return bytes;
  });

function readsOrRefuses(run: () => unknown): void {
  try {
    run();
  } catch (e) {
    if (!(e instanceof IntakeError)) throw e;
    expect([400, 413, 422]).toContain(e.status);
    expect(e.problems.length).toBeGreaterThan(0);
    for (const p of e.problems) expect(p.message.startsWith(p.file)).toBe(true);
  }
}

describe("intake never fails with anything but IntakeError", () => {
  it("on thousands of random CSV-like byte strings (seeded)", () => {
    const outcomes = { read: 0, built: 0 };
    fc.assert(
      fc.property(fc.oneof(csvLikeBytes, lineShapedBytes), (bytes) => {
        readsOrRefuses(() => {
          const raw = readTable(bytes, "fuzz.csv");
          outcomes.read += 1;
          previewTable(raw, "brain");
          previewTable(raw, "participants");
          const brain = buildBrainTable(raw);
          const sheet = buildParticipantSheet(raw);
          buildFitData(brain, sheet);
          outcomes.built += 1;
        });
      }),
      { seed: 20261201, numRuns: 3000 },
    );
    // The generator must reach past the reader often enough to exercise the later stages.
    expect(outcomes.read).toBeGreaterThan(300);
    expect(outcomes.built).toBeGreaterThan(30);
  }, 60_000);

  it("on random well-formed tables, and export then re-read gives the same cells", () => {
    const cell = fc.oneof(
      fc.constantFrom("", "n/a", "NA", "=1+1", "-0.5", "@x", "a,b", 'q"q', "x\ny"),
      fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
      fc.string({ maxLength: 6 }),
    );
    const table = fc.integer({ min: 2, max: 5 }).chain((cols) =>
      fc
        .array(fc.array(cell, { minLength: cols, maxLength: cols }), { minLength: 1, maxLength: 8 })
        .map((rows) => ({
          header: Array.from({ length: cols }, (_, j) => (j === 0 ? "participant_id" : `c${j}`)),
          rows,
        })),
    );
    fc.assert(
      fc.property(table, ({ header, rows }) => {
        const csv = toCsv(header, rows);
        const written = rows.map((r) => r.map((c) => (c === "" ? "" : neutraliseCell(c))));
        const kept = written.filter((r) => r.some((c) => c.trim() !== ""));
        if (kept.length === 0) {
          expect(() => readTable(csv, "roster.csv")).toThrow(/no data rows/);
          return;
        }
        const raw = readTable(csv, "roster.csv");
        expect(raw.header).toEqual(header);
        expect(tableRows(raw)).toEqual(kept);
        readsOrRefuses(() => buildFitData(buildBrainTable(raw), buildParticipantSheet(raw)));
      }),
      { seed: 7, numRuns: 1000 },
    );
  }, 60_000);
});
