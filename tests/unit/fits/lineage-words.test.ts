/**
 * The words of a fit's header and the fits list for its lineage
 * (components/fit/lineage-words.ts). The product's own wording (common
 * practice, no source).
 */
import { describe, expect, it } from "vitest";
import {
  nWords,
  refitOfWords,
  setAsideByline,
  setAsideTitle,
} from "../../../components/fit/lineage-words";

describe("lineage words", () => {
  it("says N once when every region has the same N, else the range", () => {
    expect(nWords({ min: 64, max: 64 })).toBe("N = 64");
    expect(nWords({ min: 58, max: 64 })).toBe("N = 58–64");
    expect(nWords(null)).toBeNull();
  });

  it("names a set-aside's participant and scope, or 'A participant' when ids are withheld", () => {
    expect(setAsideTitle({ participant: "sub-12", region: null })).toBe("sub-12 · all regions");
    expect(setAsideTitle({ participant: null, region: "L_dlpfc" })).toBe("A participant · L_dlpfc");
  });

  it("says who set a participant aside and when, or that it is not recorded", () => {
    expect(
      setAsideByline({
        createdBy: { id: "u1", name: "Tomas Ferreira" },
        createdAt: "2026-12-03T17:21:00Z",
      }),
    ).toMatch(/^Set aside by Tomas Ferreira on 3 Dec 2026, \d\d:\d\d$/);
    expect(setAsideByline({ createdBy: null, createdAt: null })).toBe(
      "Who set it aside is not recorded",
    );
  });

  it("names the earlier fit by its model and date, or by its short id", () => {
    expect(refitOfWords("Load effect", "0123456789abcdef", "2026-12-03T17:02:00Z")).toMatch(
      /^Refit of Load effect \(3 Dec 2026, \d\d:\d\d\)$/,
    );
    expect(refitOfWords("Load effect", "0123456789abcdef", null)).toBe(
      "Refit of Load effect (fit 01234567)",
    );
  });
});
