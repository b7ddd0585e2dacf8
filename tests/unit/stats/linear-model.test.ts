import { describe, expect, it } from "vitest";
import { buildDesign, treatmentCoding } from "../../../server/stats/design-matrix";
import { regressionDiagnostics } from "../../support/diagnostic-rows";
import { StatsError } from "../../../server/stats/errors";
import { fitLinearModel, unscaledCovariance } from "../../../server/stats/linear-model";
import {
  anscombeX1,
  anscombeX4,
  anscombeY1,
  anscombeY4,
  carsDist,
  carsSpeed,
  stackloss,
  withIntercept,
} from "./reference-data";

describe("least squares by Householder QR", () => {
  it("cars: R's lm(dist ~ speed, cars)", () => {
    const { x, n, p } = withIntercept(carsSpeed);
    const f = fitLinearModel(x, n, p, carsDist);
    expect(f.coefficients[0]).toBeCloseTo(-17.5791, 4); // (R summary(lm(dist ~ speed, cars)), documented output)
    expect(f.coefficients[1]).toBeCloseTo(3.9324, 4); // (same)
    expect(f.se[0]).toBeCloseTo(6.7584, 4); // (same)
    expect(f.se[1]).toBeCloseTo(0.4155, 4); // (same)
    expect(f.t[1]).toBeCloseTo(9.464, 3); // (same)
    expect(f.sigma).toBeCloseTo(15.38, 2); // (same: residual standard error 15.38 on 48 df)
    expect(f.df).toBe(48);
    expect(f.pValues[1]).toBeCloseTo(1.49e-12, 14); // (same: p = 1.49e-12)
  });
  it("Anscombe's quartet set I: slope 0.500, intercept 3.00", () => {
    const { x, n, p } = withIntercept(anscombeX1);
    const f = fitLinearModel(x, n, p, anscombeY1);
    expect(f.coefficients[1]).toBeCloseTo(0.5, 3); // (Anscombe 1973, Table 1)
    expect(f.coefficients[0]).toBeCloseTo(3.0, 2); // (Anscombe 1973, Table 1)
    expect(f.rss).toBeCloseTo(13.75, 1); // (Anscombe 1973: residual sum of squares 13.75; value from memory)
  });
  it("stack loss: multiple regression with three predictors", () => {
    const { x, n, p } = withIntercept(
      stackloss.map((r) => r[0]),
      stackloss.map((r) => r[1]),
      stackloss.map((r) => r[2]),
    );
    const f = fitLinearModel(
      x,
      n,
      p,
      stackloss.map((r) => r[3]),
    );
    expect(f.coefficients[0]).toBeCloseTo(-39.9197, 4); // (R lm(stack.loss ~ ., stackloss); value from memory)
    expect(f.coefficients[1]).toBeCloseTo(0.7156, 4); // (same)
    expect(f.coefficients[2]).toBeCloseTo(1.2953, 4); // (same)
    expect(f.coefficients[3]).toBeCloseTo(-0.1521, 4); // (same)
    expect(f.sigma).toBeCloseTo(3.243, 3); // (R: residual standard error 3.243 on 17 df, printed in MASS examples)
  });
  it("fitted values are the projection: residuals orthogonal to every column (exact algebra)", () => {
    const { x, n, p } = withIntercept(
      carsSpeed,
      carsSpeed.map((s) => s * s),
    );
    const f = fitLinearModel(x, n, p, carsDist);
    for (let j = 0; j < p; j++) {
      let dot = 0;
      for (let i = 0; i < n; i++) dot += x[i * p + j] * f.residuals[i];
      expect(Math.abs(dot)).toBeLessThan(1e-8);
    }
  });
  it("names the collinear column", () => {
    const { x, n, p } = withIntercept(
      carsSpeed,
      carsSpeed.map((s) => 2 * s + 1),
    );
    expect(() =>
      fitLinearModel(x, n, p, carsDist, ["(intercept)", "speed", "double speed"]),
    ).toThrow(
      "the design is rank deficient: column 'double speed' is a linear combination of the columns before it",
    );
  });
});

describe("treatment coding", () => {
  it("takes the first level in code-point order as reference, or the first given level", () => {
    const c = treatmentCoding("site", ["b", "a", "c", "a"]);
    expect(c.reference).toBe("a");
    expect(c.levels).toEqual(["a", "b", "c"]);
    expect(Array.from(c.columns[0])).toEqual([1, 0, 0, 0]); // b
    expect(Array.from(c.columns[1])).toEqual([0, 0, 1, 0]); // c
    const given = treatmentCoding("site", ["b", "a", "c", "a"], ["c", "a", "b"]);
    expect(given.reference).toBe("c");
  });
  it("group means from dummy coding equal the cell means (exact algebra)", () => {
    const y = [1, 2, 3, 10, 11, 30];
    const d = buildDesign(6, [
      { name: "(intercept)", kind: "intercept" },
      { name: "arm", kind: "categorical", values: ["x", "x", "x", "y", "y", "z"] },
    ]);
    const f = fitLinearModel(d.x, d.n, d.p, y, d.columnNames);
    expect(f.coefficients[0]).toBeCloseTo(2, 12); // mean of x
    expect(f.coefficients[1]).toBeCloseTo(10.5 - 2, 12); // mean y − mean x
    expect(f.coefficients[2]).toBeCloseTo(30 - 2, 12); // mean z − mean x
    expect(d.columnNames).toEqual(["(intercept)", "arm: y", "arm: z"]);
  });
  it("refuses a value outside the given levels", () => {
    expect(() => treatmentCoding("site", ["a", "q"], ["a", "b"])).toThrow(StatsError);
  });
});

/** Refit without row i (independent deletion computation for the diagnostics). */
function deleted(x: Float64Array, n: number, p: number, y: readonly number[], i: number) {
  const xs = new Float64Array((n - 1) * p);
  const ys: number[] = [];
  let k = 0;
  for (let r = 0; r < n; r++) {
    if (r === i) continue;
    for (let j = 0; j < p; j++) xs[k * p + j] = x[r * p + j];
    ys.push(y[r]);
    k++;
  }
  return fitLinearModel(xs, n - 1, p, ys);
}

describe("regression diagnostics", () => {
  const { x, n, p } = withIntercept(carsSpeed);
  const full = fitLinearModel(x, n, p, carsDist);
  const diag = regressionDiagnostics(full.qr, full, { interceptColumn: 0 });
  it("Cook's distance, studentized residuals, DFFITS and DFBETAS equal their deletion definitions", () => {
    for (const i of [0, 22, 48]) {
      const del = deleted(x, n, p, carsDist, i);
      const s = full.sigma as number;
      // Cook (1977): D_i = ‖X(b − b_(i))‖² / (p s²) (exact deletion computation)
      let num = 0;
      for (let r = 0; r < n; r++) {
        let dv = 0;
        for (let j = 0; j < p; j++)
          dv += x[r * p + j] * (full.coefficients[j] - del.coefficients[j]);
        num += dv * dv;
      }
      expect(diag.rows[i].cooksDistance).toBeCloseTo(num / (p * s * s), 10);
      // externally studentized: e_i / (s_(i) √(1 − h_i)) with s_(i) from the deleted fit (exact deletion)
      const sDel = del.sigma as number;
      const h = full.qr.hat[i];
      expect(diag.rows[i].externalStudentized).toBeCloseTo(
        full.residuals[i] / (sDel * Math.sqrt(1 - h)),
        10,
      );
      // DFFITS: (ŷ_i − ŷ_i(i)) / (s_(i) √h_i)
      let predDel = 0;
      for (let j = 0; j < p; j++) predDel += x[i * p + j] * del.coefficients[j];
      expect(diag.rows[i].dffits).toBeCloseTo(
        (full.fitted[i] - predDel) / (sDel * Math.sqrt(h)),
        10,
      );
      // DFBETAS: (b_j − b_j(i)) / (s_(i) √[(XᵀX)⁻¹]_jj)
      const c = unscaledCovariance(full.qr);
      for (let j = 0; j < p; j++) {
        expect((diag.rows[i].dfbetas as number[])[j]).toBeCloseTo(
          (full.coefficients[j] - del.coefficients[j]) / (sDel * Math.sqrt(c[j * p + j])),
          10,
        );
      }
    }
  });
  it("leverage of a simple regression is 1/n + (x − x̄)²/Sxx and Mahalanobis D² = (x − x̄)²/s²", () => {
    const mx = carsSpeed.reduce((a, b) => a + b, 0) / n;
    const sxx = carsSpeed.reduce((a, b) => a + (b - mx) ** 2, 0);
    carsSpeed.forEach((v, i) => {
      expect(diag.rows[i].leverage).toBeCloseTo(1 / n + (v - mx) ** 2 / sxx, 12); // (exact algebra)
      expect(diag.rows[i].mahalanobis).toBeCloseTo(((v - mx) ** 2 * (n - 1)) / sxx, 9); // (exact algebra)
    });
  });
  it("VIF of two predictors is 1/(1 − r²) (exact algebra)", () => {
    const a = [1, 2, 3, 4, 5, 6, 7, 8];
    const b = [2, 1, 4, 3, 6, 8, 7, 5];
    const y = [3, 1, 4, 1, 5, 9, 2, 6];
    const d = withIntercept(a, b);
    const f = fitLinearModel(d.x, d.n, d.p, y, ["(intercept)", "a", "b"]);
    const dg = regressionDiagnostics(f.qr, f, { interceptColumn: 0 });
    const ma = 4.5;
    const mb = 4.5;
    let sab = 0;
    let saa = 0;
    let sbb = 0;
    a.forEach((v, i) => {
      sab += (v - ma) * (b[i] - mb);
      saa += (v - ma) ** 2;
      sbb += (b[i] - mb) ** 2;
    });
    const r2 = (sab * sab) / (saa * sbb);
    expect(dg.vif[0].value).toBeCloseTo(1 / (1 - r2), 10);
    expect(dg.vif[1].value).toBeCloseTo(1 / (1 - r2), 10);
  });
  it("Anscombe IV: the participant at x = 19 has leverage 1 and undefined residual measures, never NaN", () => {
    const d = withIntercept(anscombeX4);
    const f = fitLinearModel(d.x, d.n, d.p, anscombeY4);
    const dg = regressionDiagnostics(f.qr, f, { interceptColumn: 0 });
    const row = dg.rows[7];
    expect(row.leverage).toBe(1); // (exact algebra: the only point away from x = 8 fixes the slope alone)
    expect(row.cooksDistance).toBeNull();
    expect(row.externalStudentized).toBeNull();
    expect(row.internalStudentized).toBeNull();
    expect(row.dfbetas).toBeNull();
    expect(row.flags).toContain("leverage");
    // the ten points at x = 8: h = 1/11 + 1/110 = 0.1 (exact algebra: x̄ = 9, Sxx = 110)
    expect(dg.rows[0].leverage).toBeCloseTo(0.1, 12);
    expect(JSON.stringify(dg)).not.toMatch(/NaN|Infinity/);
  });
  it("flags use the documented thresholds", () => {
    const cut = (2 * p) / n;
    diag.rows.forEach((r) => {
      expect(r.flags.includes("leverage")).toBe(r.leverage > cut);
      expect(r.flags.includes("influence")).toBe((r.cooksDistance as number) > 4 / n);
    });
    expect(diag.thresholds.outlierT).toBeGreaterThan(3); // Bonferroni critical value for n = 50
  });
});
