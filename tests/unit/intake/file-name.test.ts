import { describe, expect, it } from "vitest";
import { cleanFileName } from "../../../server/intake";

describe("uploaded file names", () => {
  it("drops bidirectional formatting characters, so a name cannot display as another", () => {
    // "brain<RLO>vsc.exe" displays as "brainexe.csv" (the override reverses what follows).
    expect(cleanFileName("brain\u202Evsc.exe")).toBe("brainvsc.exe");
    expect(cleanFileName("\u202A\u202B\u202C\u202Dx\u202E.csv")).toBe("x.csv");
    expect(cleanFileName("\u2066a\u2067b\u2068c\u2069.csv")).toBe("abc.csv");
    expect(cleanFileName("a\u200Eb\u200Fc\u061C.tsv")).toBe("abc.tsv");
    expect(cleanFileName("Zürich \u6771\u4eac.csv")).toBe("Zürich \u6771\u4eac.csv");
  });

  it("keeps the last path part, without control characters, trimmed", () => {
    expect(cleanFileName("C:\\fakepath\\brain.csv")).toBe("brain.csv");
    expect(cleanFileName("../../etc/brain.csv")).toBe("brain.csv");
    expect(cleanFileName(" a\u0000b\u001f\u007f.csv ")).toBe("ab.csv");
    expect(cleanFileName("x".repeat(300))).toHaveLength(200);
  });

  it("an empty name, . or .. is no name", () => {
    for (const name of [
      "",
      "   ",
      ".",
      "..",
      "dir/..",
      "dir/",
      "\u202E",
      "\u2066..\u2069",
      "\u0000",
    ])
      expect(cleanFileName(name)).toBeNull();
    expect(cleanFileName("...")).toBe("...");
  });
});
