import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  type IntakeError,
  ROSTER_RULE,
  findNearMisses,
  joinRoster,
  normaliseId,
  oneEditApart,
} from "../../../server/intake";

describe("roster join", () => {
  it("normalises ids: trim, case, optional sub- prefix", () => {
    expect(normaliseId("  SUB-07 ")).toBe("07");
    expect(normaliseId("sub-07")).toBe("07");
    expect(normaliseId("07")).toBe("07");
    expect(normaliseId("Sub-A1")).toBe("a1");
    expect(normaliseId("sub-")).toBe("sub-");
  });

  it("matches identical ids and ids equal under the rule, and reports the rest", () => {
    const r = joinRoster(
      ["sub-01", "SUB-02", " 03", "sub-99"],
      ["sub-01", "02", "sub-03", "sub-50"],
    );
    expect(r.matched).toEqual([
      { brainId: "sub-01", sheetId: "sub-01", via: "identical" },
      { brainId: "SUB-02", sheetId: "02", via: "rule" },
      { brainId: " 03", sheetId: "sub-03", via: "rule" },
    ]);
    expect(r.onlyInBrainTable).toEqual(["sub-99"]);
    expect(r.onlyInParticipantSheet).toEqual(["sub-50"]);
    expect(r.rule).toBe(ROSTER_RULE);
  });

  it("never merges 7 and 07 silently: a near miss", () => {
    const r = joinRoster(["7", "sub-8"], ["07", "sub-008"]);
    expect(r.matched).toEqual([]);
    expect(r.onlyInBrainTable).toEqual(["7", "sub-8"]);
    expect(r.nearMisses).toEqual([
      { brainId: "7", sheetId: "07", reason: "same number written with different leading zeros" },
      {
        brainId: "sub-8",
        sheetId: "sub-008",
        reason: "same number written with different leading zeros",
      },
    ]);
  });

  it("reports one-character typos of long ids, punctuation differences and swaps", () => {
    const r = joinRoster(
      ["CVN1043", "ab_12", "cvn2017"],
      ["CVN1034x", "CVN1048", "ab12", "cvn2071"],
    );
    expect(r.matched).toEqual([]);
    expect(r.nearMisses).toEqual([
      { brainId: "ab_12", sheetId: "ab12", reason: "differs only in punctuation or spaces" },
      { brainId: "CVN1043", sheetId: "CVN1048", reason: "differs by one character" },
      { brainId: "cvn2017", sheetId: "cvn2071", reason: "two neighbouring characters swapped" },
    ]);
  });

  it("does not call short ids one character apart near misses", () => {
    expect(joinRoster(["s1"], ["s2"]).nearMisses).toEqual([]);
  });

  it("applies confirmed mappings and says so in the rule", () => {
    const r = joinRoster(["7", "8"], ["07", "8"], { mappings: [{ brainId: "7", sheetId: "07" }] });
    expect(r.matched).toEqual([
      { brainId: "7", sheetId: "07", via: "mapping" },
      { brainId: "8", sheetId: "8", via: "identical" },
    ]);
    expect(r.nearMisses).toEqual([]);
    expect(r.rule).toBe(`${ROSTER_RULE} 1 confirmed mapping was applied.`);
  });

  it("refuses mappings naming unknown ids or an id twice", () => {
    const attempt = (mappings: { brainId: string; sheetId: string }[]) => {
      try {
        joinRoster(["7", "9"], ["07", "09"], {
          mappings,
          brainFile: "brain.csv",
          sheetFile: "participants.tsv",
        });
      } catch (e) {
        return e as IntakeError;
      }
      throw new Error("not refused");
    };
    expect(attempt([{ brainId: "8", sheetId: "07" }]).message).toBe(
      'brain.csv: mapping "8" → "07": the brain table has no participant "8"',
    );
    expect(attempt([{ brainId: "7", sheetId: "x" }]).problems[0].file).toBe("participants.tsv");
    expect(
      attempt([
        { brainId: "7", sheetId: "07" },
        { brainId: "7", sheetId: "09" },
      ]).problems[0].code,
    ).toBe("mapping_twice");
    expect(
      attempt([
        { brainId: "7", sheetId: "07" },
        { brainId: "9", sheetId: "07" },
      ]).status,
    ).toBe(422);
  });

  it("reports ids that collide under the rule as duplicates and does not merge them", () => {
    const r = joinRoster(["sub-01", "01", "sub-02"], ["01", "02", "Sub-02"]);
    expect(r.duplicates).toEqual([
      { source: "brainTable", file: "brain table", key: "01", ids: ["sub-01", "01"] },
      { source: "participantSheet", file: "participant sheet", key: "02", ids: ["02", "Sub-02"] },
    ]);
    // "01" is identical in both files; "sub-01" is left over; "sub-02" cannot choose between two sheet rows.
    expect(r.matched).toEqual([{ brainId: "01", sheetId: "01", via: "identical" }]);
    expect(r.onlyInBrainTable).toEqual(["sub-01", "sub-02"]);
    expect(r.onlyInParticipantSheet).toEqual(["02", "Sub-02"]);
  });

  it("one edit apart (Damerau–Levenshtein distance 1, checked by hand)", () => {
    expect(oneEditApart("abcd", "abce")).toBe("differs by one character");
    expect(oneEditApart("abcd", "abdc")).toBe("two neighbouring characters swapped");
    expect(oneEditApart("abcd", "abcde")).toBe("one character more or less");
    expect(oneEditApart("abcd", "bcd")).toBe("one character more or less");
    expect(oneEditApart("abcd", "badc")).toBeNull();
    expect(oneEditApart("abcd", "abcd")).toBeNull();
    expect(oneEditApart("abcd", "acbe")).toBeNull();
  });
});

describe("near misses found through shared deletion keys", () => {
  // The pairwise comparison the index replaces (every unmatched brain id against every unmatched sheet id).
  function pairwise(
    brainIds: readonly string[],
    sheetIds: readonly string[],
  ): { brainId: string; sheetId: string; reason: string }[] {
    const out: { brainId: string; sheetId: string; reason: string }[] = [];
    for (const b of brainIds) {
      const nb = normaliseId(b);
      if (nb.length < 4) continue;
      for (const s of sheetIds) {
        const ns = normaliseId(s);
        if (ns.length < 4) continue;
        const kind = oneEditApart(nb, ns);
        if (kind) out.push({ brainId: b, sheetId: s, reason: kind });
      }
    }
    return out;
  }

  it("finds exactly the one-edit pairs the pairwise comparison finds, in the same order (seeded random ids)", () => {
    const id = fc.stringMatching(/^(sub-)?[ab1-]{3,6}$/);
    fc.assert(
      fc.property(
        fc.uniqueArray(id, { maxLength: 25 }),
        fc.uniqueArray(id, { maxLength: 25 }),
        (brainIds, sheetIds) => {
          const all = findNearMisses(brainIds, sheetIds);
          const oneEdit = (n: { reason: string }) =>
            n.reason !== "same number written with different leading zeros" &&
            n.reason !== "differs only in punctuation or spaces";
          // A pair already reported for leading zeros or punctuation is not reported again.
          const reported = new Set(
            all.filter((n) => !oneEdit(n)).map((n) => `${n.brainId}\u0000${n.sheetId}`),
          );
          const expected = pairwise(brainIds, sheetIds).filter(
            (p) => !reported.has(`${p.brainId}\u0000${p.sheetId}`),
          );
          expect(all.filter(oneEdit)).toEqual(expected); // (exact enumeration: every pair compared)
        },
      ),
      { seed: 18, numRuns: 300 },
    );
  });
});
