import { describe, expect, it } from "vitest";
import { flagThresholds } from "../../../server/stats/diagnostics";
import { regressionDiagnostics } from "../../support/diagnostic-rows";
import { fitLinearModel } from "../../../server/stats/linear-model";
import { carsDist, carsSpeed, withIntercept } from "./reference-data";

describe("flag cut-offs", () => {
  it("are 4/n for Cook's distance and 2p/n for leverage", () => {
    const t = flagThresholds(50, 2);
    expect(t.cooksDistance).toBe(0.08); // 4/n, n = 50 (Bollen & Jackman 1990, p. 266)
    expect(t.leverage).toBe(0.08); // 2p/n, p = 2, n = 50 (Hoaglin & Welsch 1978)
    expect(flagThresholds(3, 2).outlierT).toBeNull(); // n − p − 1 = 0: no reference distribution (exact arithmetic)
  });

  it("are the very values the flags of a fit use, and each flag lies beyond its cut-off", () => {
    const d = withIntercept(carsSpeed);
    const f = fitLinearModel(d.x, d.n, d.p, carsDist, ["(intercept)", "speed"]);
    const dg = regressionDiagnostics(f.qr, f, { interceptColumn: 0 });
    const t = flagThresholds(d.n, d.p);
    expect(dg.thresholds).toEqual(t); // (same module, same values)
    for (const row of dg.rows) {
      expect(row.flags.includes("influence")).toBe(
        row.cooksDistance !== null && row.cooksDistance > t.cooksDistance,
      );
      expect(row.flags.includes("leverage")).toBe(row.leverage > t.leverage);
      expect(row.flags.includes("outlier")).toBe(
        row.externalStudentized !== null &&
          t.outlierT !== null &&
          Math.abs(row.externalStudentized) > t.outlierT,
      );
    }
    // speed and stopping distance (n = 50): Cook's distance of rows 23 and 49 is about 0.0856 and 0.340, the only ones above 4/n = 0.08 (value from memory)
    expect(dg.rows.flatMap((r, i) => (r.flags.includes("influence") ? [i + 1] : []))).toEqual([
      23, 49,
    ]);
    expect(dg.rows[48].cooksDistance).toBeCloseTo(0.3404, 3); // (value from memory)
  });
});
