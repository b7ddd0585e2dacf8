import { describe, expect, it } from "vitest";
import {
  adjustPValues,
  benjaminiHochberg,
  bonferroni,
  holm,
} from "../../../server/stats/corrections";
import { StatsError } from "../../../server/stats/errors";

describe("multiplicity corrections", () => {
  const p = [0.01, 0.04, 0.03, 0.02, 0.05];
  it("Bonferroni, Holm and Benjamini–Hochberg by hand", () => {
    expect(bonferroni(p)).toEqual([0.05, 0.2, 0.15, 0.1, 0.25].map((v) => expect.closeTo(v, 12))); // (m·p, hand computation)
    // Holm on sorted p: 5·0.01, max(4·0.02), max(3·0.03), max(0.09, 2·0.04), max(0.09, 0.05) (hand computation)
    expect(holm(p)).toEqual([0.05, 0.09, 0.09, 0.08, 0.09].map((v) => expect.closeTo(v, 12)));
    // BH: m·p_(i)/i = 0.05 for every i, running minimum from the top (hand computation)
    expect(benjaminiHochberg(p)).toEqual(
      [0.05, 0.05, 0.05, 0.05, 0.05].map((v) => expect.closeTo(v, 12)),
    );
  });
  it("Benjamini & Hochberg's example of 15 p-values: 4 discoveries at q = 0.05, Bonferroni and Holm 3", () => {
    // (Benjamini & Hochberg 1995, §4 example; the p-values are recalled from memory)
    const ps = [
      0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719,
      0.6528, 0.759, 1.0,
    ];
    expect(benjaminiHochberg(ps).filter((v) => v <= 0.05).length).toBe(4); // (exact algebra on these p-values)
    expect(bonferroni(ps).filter((v) => v <= 0.05).length).toBe(3); // (exact algebra)
    expect(holm(ps).filter((v) => v <= 0.05).length).toBe(3); // (exact algebra)
  });
  it("keeps input order, handles ties, and refuses bad p", () => {
    expect(holm([0.02, 0.02])).toEqual([0.04, 0.04]);
    expect(adjustPValues([0.3], "bh")).toEqual([0.3]);
    expect(() => holm([0.2, 1.2])).toThrow(StatsError);
    expect(() => bonferroni([])).toThrow("bonferroni requires at least one p-value");
  });
});
