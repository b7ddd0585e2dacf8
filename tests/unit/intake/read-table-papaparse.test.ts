/**
 * The reader splits cells itself (offsets into the file's bytes, no string
 * per cell until asked for). Its cells must be those papaparse 5 gives —
 * the library the reader used before — on any text made of delimiters,
 * quotes, line ends and a few other characters, and on small tables of
 * quoted and unquoted cells with each line ending (seeded random texts).
 */
import fc from "fast-check";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { IntakeError, readTable, tableRows } from "../../../server/intake";

const ALPHABET = [...'\t,;"\r\n .-+eE01ab'];
const CELLS = [
  "a",
  "1.5",
  "",
  " ",
  '"x"',
  '"a,b"',
  '"q""q"',
  '"l1\nl2"',
  '"x" ',
  "n/a",
  '"',
  'a"b',
];
const randomText = fc.array(fc.constantFrom(...ALPHABET), { maxLength: 80 }).map((c) => c.join(""));
const tableText = fc
  .record({
    delimiter: fc.constantFrom(",", "\t", ";"),
    newline: fc.constantFrom("\n", "\r\n", "\r"),
    rows: fc.array(fc.array(fc.constantFrom(...CELLS), { minLength: 3, maxLength: 3 }), {
      minLength: 2,
      maxLength: 6,
    }),
  })
  .map(({ delimiter, newline, rows }) =>
    ["h1,h2,h3".replaceAll(",", delimiter), ...rows.map((r) => r.join(delimiter))].join(newline),
  );

describe("readTable splits cells as papaparse does", () => {
  it("on random delimited texts (seeded)", () => {
    let read = 0;
    fc.assert(
      fc.property(fc.oneof(randomText, tableText), (text) => {
        let raw: ReturnType<typeof readTable>;
        try {
          raw = readTable(text, "f.csv");
        } catch (e) {
          if (!(e instanceof IntakeError)) throw e;
          if (e.problems[0]?.code === "bad_quotes") {
            const p = Papa.parse<string[]>(text, { delimiter: ",", quoteChar: '"' });
            const q = Papa.parse<string[]>(text, { delimiter: "\t", quoteChar: '"' });
            const r = Papa.parse<string[]>(text, { delimiter: ";", quoteChar: '"' });
            const quoteError = (x: Papa.ParseResult<string[]>) =>
              x.errors.some((er) => er.code === "MissingQuotes" || er.code === "InvalidQuotes");
            expect(quoteError(p) || quoteError(q) || quoteError(r)).toBe(true);
          }
          return;
        }
        read += 1;
        const p = Papa.parse<string[]>(text, {
          delimiter: raw.delimiter,
          quoteChar: '"',
          escapeChar: '"',
          skipEmptyLines: false,
        });
        expect(p.errors.filter((e) => e.type === "Quotes")).toEqual([]);
        const records = p.data.filter((r) => !r.every((c) => c.trim() === ""));
        expect([raw.header, ...tableRows(raw)]).toEqual([
          records[0].map((h) => h.trim()),
          ...records.slice(1),
        ]);
      }),
      { seed: 20261204, numRuns: 20_000 },
    );
    expect(read).toBeGreaterThan(2000);
  }, 60_000);
});
