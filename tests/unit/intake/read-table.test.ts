import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  DEFAULT_MAX_BYTES,
  DEFAULT_MAX_COLUMNS,
  IntakeError,
  parseNumberCell,
  readTable,
  tableRows,
} from "../../../server/intake";

const enc = (s: string) => new TextEncoder().encode(s);

function refusal(input: Uint8Array | string, file = "brain.csv"): IntakeError {
  try {
    readTable(input, file);
  } catch (e) {
    if (e instanceof IntakeError) return e;
    throw e;
  }
  throw new Error("expected an IntakeError");
}

describe("readTable: reading", () => {
  it("reads a comma-separated table", () => {
    const t = readTable(enc("participant_id,age\nsub-01,23\nsub-02,31\n"), "p.csv");
    expect(t.delimiter).toBe(",");
    expect(t.header).toEqual(["participant_id", "age"]);
    expect(tableRows(t)).toEqual([
      ["sub-01", "23"],
      ["sub-02", "31"],
    ]);
    expect(t.rowNumbers).toEqual([2, 3]);
  });

  it("detects tab and semicolon", () => {
    expect(readTable("a\tb\n1\t2\n", "p.tsv").delimiter).toBe("\t");
    expect(readTable("a;b\n1;2\n", "p.csv").delimiter).toBe(";");
  });

  it("prefers the delimiter that splits every row alike (semicolon file with decimal commas)", () => {
    const t = readTable("id;x\ns1;0,5\ns2;1,25\n", "p.csv");
    expect(t.delimiter).toBe(";");
    expect(tableRows(t)[0]).toEqual(["s1", "0,5"]);
  });

  it("strips a UTF-8 byte-order mark and keeps non-ASCII text", () => {
    const bytes = new Uint8Array([
      0xef,
      0xbb,
      0xbf,
      ...enc("participant_id,site\nsub-01,Zürich\n"),
    ]);
    const t = readTable(bytes, "p.csv");
    expect(t.header[0]).toBe("participant_id");
    expect(t.cell(0, 1)).toBe("Zürich");
  });

  it("reads quoted fields holding delimiters, quotes and line breaks; a quoted multi-line field is one row", () => {
    const t = readTable(
      'id,note\r\n1,"a, b"\r\n2,"he said ""hi"""\r\n3,"line one\r\nline two"\r\n4,x\r\n',
      "n.csv",
    );
    expect(tableRows(t).map((r) => r[1])).toEqual([
      "a, b",
      'he said "hi"',
      "line one\r\nline two",
      "x",
    ]);
    // Spreadsheet rows: header 1, then 2, 3, 4 (the multi-line record), 5 (counted by hand).
    expect(t.rowNumbers).toEqual([2, 3, 4, 5]);
  });

  it("skips blank rows but keeps the spreadsheet numbering", () => {
    const t = readTable("id,x\n1,2\n\n,\n3,4\n", "b.csv");
    expect(tableRows(t)).toEqual([
      ["1", "2"],
      ["3", "4"],
    ]);
    expect(t.rowNumbers).toEqual([2, 5]);
  });

  it("trims header names", () => {
    expect(readTable(" id , x \n1,2\n", "b.csv").header).toEqual(["id", "x"]);
  });

  it("reads old Mac line ends", () => {
    expect(tableRows(readTable("id,x\r1,2\r3,4", "b.csv"))).toEqual([
      ["1", "2"],
      ["3", "4"],
    ]);
  });
});

describe("readTable: refusals (one per bad-input kind)", () => {
  it("empty file", () => {
    const e = refusal(new Uint8Array(0));
    expect(e.status).toBe(400);
    expect(e.problems[0].code).toBe("empty_file");
    expect(e.message).toBe("brain.csv: the file is empty; expected a header row and data rows");
  });

  it("white space only counts as empty", () => {
    expect(refusal(" \n\r\n ").problems[0].code).toBe("empty_file");
  });

  it("header only", () => {
    const e = refusal("participant_id,L_insula\n\n");
    expect(e.status).toBe(400);
    expect(e.problems[0]).toMatchObject({ code: "header_only", row: 1 });
  });

  it("duplicate header", () => {
    const e = refusal("participant_id,L_insula,L_insula\ns1,1,2\n");
    expect(e.status).toBe(400);
    expect(e.problems[0]).toMatchObject({ code: "duplicate_header", row: 1, column: "L_insula" });
    expect(e.message).toContain(
      "brain.csv row 1, column L_insula: the name appears twice in the header (columns 2 and 3)",
    );
  });

  it("empty header name", () => {
    const e = refusal("participant_id,,x\ns1,1,2\n");
    expect(e.problems[0].code).toBe("empty_header");
    expect(e.message).toContain("column 2 has no name");
  });

  it("ragged rows: every ragged row is named", () => {
    const e = refusal("id,a,b\n1,2,3\n4,5\n6,7,8,9\n");
    expect(e.status).toBe(400);
    expect(e.problems.map((p) => [p.code, p.row])).toEqual([
      ["ragged_row", 3],
      ["ragged_row", 4],
    ]);
    expect(e.problems[0].message).toBe(
      "brain.csv row 3: has 2 fields; expected 3 as in the header (comma-separated)",
    );
  });

  it("unknown delimiter", () => {
    const e = refusal("participant_id|age\nsub-01|23\n");
    expect(e.status).toBe(400);
    expect(e.problems[0].code).toBe("unknown_delimiter");
    expect(e.message).toContain("unknown delimiter");
    expect(e.message).toContain('"|"');
  });

  it("a single column without any delimiter is an unknown delimiter", () => {
    expect(refusal("participant_id\nsub-01\n").problems[0].code).toBe("unknown_delimiter");
  });

  it("spreadsheet (zip) renamed .csv", () => {
    const e = refusal(new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00]));
    expect(e.status).toBe(400);
    expect(e.problems[0].code).toBe("binary_file");
    expect(e.message).toContain("zip archive");
  });

  it("legacy spreadsheet (OLE2) renamed .csv", () => {
    const e = refusal(new Uint8Array([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1, 0, 0]));
    expect(e.problems[0].code).toBe("binary_file");
    expect(e.message).toContain("legacy binary spreadsheet");
  });

  it("NUL bytes", () => {
    const e = refusal(new Uint8Array([...enc("id,x\n1,2\n3,"), 0, ...enc("\n")]));
    expect(e.problems[0]).toMatchObject({ code: "binary_file", row: 3 });
  });

  it("invalid UTF-8 (Latin-1 text) names the row", () => {
    const bytes = new Uint8Array([...enc("id,site\ns1,Z"), 0xfc, ...enc("rich\n")]);
    const e = refusal(bytes);
    expect(e.status).toBe(400);
    expect(e.problems[0]).toMatchObject({ code: "not_utf8", row: 2 });
  });

  it("UTF-16 text", () => {
    expect(refusal(new Uint8Array([0xff, 0xfe, 0x69, 0x00])).problems[0].code).toBe("not_utf8");
  });

  it("unterminated quote", () => {
    const e = refusal('id,x\n1,"abc\n2,3\n');
    expect(e.problems[0]).toMatchObject({ code: "bad_quotes", row: 2 });
  });

  it("more than 20,000 columns → 413", () => {
    const header = Array.from({ length: DEFAULT_MAX_COLUMNS + 1 }, (_, j) => `c${j}`).join(",");
    const row = Array.from({ length: DEFAULT_MAX_COLUMNS + 1 }, () => "1").join(",");
    const e = refusal(`${header}\n${row}\n`);
    expect(e.status).toBe(413);
    expect(e.problems[0].code).toBe("too_many_columns");
  }, 30_000);

  it("exactly 20,000 columns is accepted", () => {
    const header = Array.from({ length: DEFAULT_MAX_COLUMNS }, (_, j) => `c${j}`).join(",");
    const row = Array.from({ length: DEFAULT_MAX_COLUMNS }, () => "1").join(",");
    expect(readTable(`${header}\n${row}\n`, "wide.csv").header.length).toBe(DEFAULT_MAX_COLUMNS);
  }, 30_000);

  it("more than 50 MB → 413 (checked before decoding)", () => {
    const e = refusal(new Uint8Array(DEFAULT_MAX_BYTES + 1).fill(0x61));
    expect(e.status).toBe(413);
    expect(e.problems[0].code).toBe("too_large");
  }, 30_000);

  it("the byte limit can be lowered by the caller", () => {
    try {
      readTable("id,x\n1,2\n", "small.csv", { maxBytes: 5 });
      throw new Error("not refused");
    } catch (e) {
      expect((e as IntakeError).status).toBe(413);
    }
  });
});

describe("number cells", () => {
  // The documented number syntax, and the engine's own correctly rounded conversion, as the reference.
  const SYNTAX = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
  const reference = (t: string) =>
    SYNTAX.test(t) && Number.isFinite(Number(t)) ? Number(t) : undefined;

  it("reads plain decimals exactly as Number() does, and refuses everything else", () => {
    const cases = [
      "0",
      "-0.42",
      "+3e-4",
      ".5",
      "5.",
      "1e22",
      "1e23",
      "123456789012345",
      "1234567890123456789",
      "0.1",
      "0.000000000000000000000001234",
      "9007199254740993",
      "1e400",
      "-",
      ".",
      "1e",
      "e5",
      "1,5",
      "0x10",
      "Inf",
      "NaN",
      " 2.5 ",
      "1 000",
      "--1",
      "1e+5",
      "1E-5",
      "00012.5000",
    ];
    for (const c of cases) {
      const expected = c.trim() === "" ? null : reference(c.trim());
      expect(parseNumberCell(c), c).toBe(expected);
    }
  });

  it("agrees with Number() on thousands of random decimal strings (seeded)", () => {
    const decimal = fc
      .tuple(
        fc.constantFrom("", "+", "-"),
        fc.stringMatching(/^\d{0,20}$/),
        fc.constantFrom("", "."),
        fc.stringMatching(/^\d{0,20}$/),
        fc.constantFrom("", "e", "E", "e-", "e+"),
        fc.stringMatching(/^\d{0,3}$/),
      )
      .map((parts) => parts.join(""));
    fc.assert(
      fc.property(decimal, (t) => {
        const expected = t === "" ? null : reference(t);
        expect(Object.is(parseNumberCell(t), expected) || parseNumberCell(t) === expected).toBe(
          true,
        );
      }),
      { seed: 31, numRuns: 5000 },
    );
  }, 30_000);

  it("reads the missing markers as missing", () => {
    for (const m of ["", " ", "n/a", "N/A", "NA", " n/a "]) expect(parseNumberCell(m)).toBeNull();
    expect(parseNumberCell("na")).toBeUndefined();
  });
});
