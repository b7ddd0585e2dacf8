import { describe, expect, it } from "vitest";
import { correctForAttenuation } from "../../../server/stats/attenuation";
import { StatsError } from "../../../server/stats/errors";

/** 97.5% point of the standard normal (Abramowitz & Stegun 1964, Table 26.5: 1.959963985). */
const Z975 = 1.959963984540054;

describe("correctForAttenuation", () => {
  it("divides r and its Fisher z interval by √(rel_brain · rel_trait)", () => {
    const r = correctForAttenuation({
      r: 0.3,
      n: 100,
      reliabilityBrain: 0.7,
      reliabilityTrait: 0.8,
    });
    const ceiling = Math.sqrt(0.56);
    expect(r.ceiling).toBeCloseTo(ceiling, 15); // (exact algebra: √(.7 × .8))
    expect(r.corrected).toBeCloseTo(0.3 / ceiling, 15); // (exact algebra: Spearman 1904)
    expect(r.corrected).toBeCloseTo(0.4009, 4); // (exact algebra: .3 / .7483)
    const low = Math.tanh(Math.atanh(0.3) - Z975 / Math.sqrt(97));
    const high = Math.tanh(Math.atanh(0.3) + Z975 / Math.sqrt(97));
    // (exact algebra: Fisher 1921 z interval, then the same division)
    expect(r.observedCiLow).toBeCloseTo(low, 12);
    expect(r.observedCiHigh).toBeCloseTo(high, 12);
    expect(r.correctedCiLow).toBeCloseTo(low / ceiling, 12);
    expect(r.correctedCiHigh).toBeCloseTo(high / ceiling, 12);
    expect(r.caution).toBeNull();
  });

  it("leaves r unchanged with perfectly reliable measures", () => {
    const r = correctForAttenuation({ r: -0.25, n: 40, reliabilityBrain: 1, reliabilityTrait: 1 });
    expect(r.corrected).toBe(-0.25); // (exact algebra)
    expect(r.correctedCiLow).toBe(r.observedCiLow);
  });

  it("warns and clips the interval when the corrected value exceeds 1", () => {
    // Task-imaging reliability near the published mean ICC of .40 (Elliott et al. 2020) with a trait of reliability .8.
    const r = correctForAttenuation({
      r: 0.62,
      n: 30,
      reliabilityBrain: 0.4,
      reliabilityTrait: 0.8,
    });
    expect(r.ceiling).toBeCloseTo(Math.sqrt(0.32), 15); // (exact algebra)
    expect(r.corrected).toBeCloseTo(0.62 / Math.sqrt(0.32), 15); // (exact algebra: 1.096, not clipped)
    expect(r.corrected).toBeGreaterThan(1);
    expect(r.correctedCiHigh).toBe(1); // (clipped to [−1, 1])
    expect(r.caution).toMatch(/larger than 1/);
  });

  it("warns when the observed correlation is near the ceiling", () => {
    const r = correctForAttenuation({
      r: -0.5,
      n: 200,
      reliabilityBrain: 0.6,
      reliabilityTrait: 0.5,
    });
    expect(Math.abs(r.corrected)).toBeLessThanOrEqual(1);
    expect(r.caution).toMatch(/close to the largest value/);
  });

  it("names the field that is out of range", () => {
    expect(() =>
      correctForAttenuation({ r: 1, n: 30, reliabilityBrain: 0.5, reliabilityTrait: 0.5 }),
    ).toThrow(StatsError);
    expect(() =>
      correctForAttenuation({ r: 0.2, n: 3, reliabilityBrain: 0.5, reliabilityTrait: 0.5 }),
    ).toThrow("correctForAttenuation requires n of at least 4 participants (got 3)");
    expect(() =>
      correctForAttenuation({ r: 0.2, n: 30, reliabilityBrain: 0, reliabilityTrait: 0.5 }),
    ).toThrow(
      "correctForAttenuation requires reliabilityBrain greater than 0 and at most 1 (got 0)",
    );
    expect(() =>
      correctForAttenuation({ r: 0.2, n: 30, reliabilityBrain: 0.5, reliabilityTrait: 1.2 }),
    ).toThrow("reliabilityTrait");
  });
});
