import { describe, expect, it } from "vitest";
import { neutraliseCell, readTable, sha256Hex, tableRows, toCsv } from "../../../server/intake";

describe("CSV export", () => {
  it("neutralises text cells that a spreadsheet would run as formulas", () => {
    expect(neutraliseCell("=1+1")).toBe("'=1+1");
    expect(neutraliseCell("+cmd")).toBe("'+cmd");
    expect(neutraliseCell("-2+3")).toBe("'-2+3");
    expect(neutraliseCell("@SUM(A1)")).toBe("'@SUM(A1)");
    expect(neutraliseCell("\tx")).toBe("'\tx");
    expect(neutraliseCell("\rx")).toBe("'\rx");
    expect(neutraliseCell("-")).toBe("'-");
  });

  it("keeps plain numbers, as numbers or as text, unchanged", () => {
    expect(neutraliseCell("-0.42")).toBe("-0.42");
    expect(neutraliseCell("+3e-4")).toBe("+3e-4");
    expect(neutraliseCell("sub-01")).toBe("sub-01");
    expect(toCsv(["x"], [[-0.42], [1e-7]])).toBe("x\r\n-0.42\r\n1e-7\r\n");
  });

  it("writes missing values as n/a and quotes fields that need it", () => {
    const csv = toCsv(
      ["id", "note", "v"],
      [
        ["s1", 'say "hi", ok', null],
        ["s2", "two\nlines", Number.NaN],
      ],
    );
    expect(csv).toBe('id,note,v\r\ns1,"say ""hi"", ok",n/a\r\ns2,"two\nlines",n/a\r\n');
  });

  it("round trips through the reader (apostrophes aside)", () => {
    const header = ["participant_id", "group", "L_insula"];
    const rows = [
      ["sub-01", "patient; mild", -0.42],
      ["sub-02", 'a "quoted" word', 1.5],
      ["sub-03", null, 0],
    ];
    for (const delimiter of [",", "\t", ";"] as const) {
      const back = readTable(toCsv(header, rows, { delimiter }), "roster.csv");
      expect(back.delimiter).toBe(delimiter);
      expect(back.header).toEqual(header);
      expect(tableRows(back)).toEqual([
        ["sub-01", "patient; mild", "-0.42"],
        ["sub-02", 'a "quoted" word', "1.5"],
        ["sub-03", "n/a", "0"],
      ]);
    }
  });
});

describe("sha256Hex", () => {
  it("matches the FIPS 180-2 examples", () => {
    // (FIPS 180-2, Appendix B.1: one-block message "abc")
    expect(sha256Hex("abc")).toBe(
      "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
    );
    // (FIPS 180-2, Appendix B.2: two-block message)
    expect(sha256Hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq")).toBe(
      "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1",
    );
    expect(sha256Hex(new TextEncoder().encode("abc"))).toBe(sha256Hex("abc"));
  });
});
