import { Matrix, inverse } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { StatsError } from "../../../server/stats/errors";
import { fitLinearModel } from "../../../server/stats/linear-model";
import { meanResponseBand } from "../../../server/stats/mean-response-band";
import { carsDist, carsSpeed, stackloss, withIntercept } from "./reference-data";

describe("confidence interval of the mean response (fitted line's band)", () => {
  it("three points: exact algebra and the t table", () => {
    // x = 0, 1, 2; y = 0, 1, 3: b = 1.5, a = −1/6, RSS = 1/6 on 1 df (exact algebra, by hand).
    const { x, n, p } = withIntercept([0, 1, 2]);
    const f = fitLinearModel(x, n, p, [0, 1, 3]);
    const [atMean, atZero] = meanResponseBand(f, [
      [1, 1],
      [1, 0],
    ]);
    expect(atMean.fit).toBeCloseTo(4 / 3, 12); // (exact algebra: ŷ(1) = −1/6 + 1.5)
    // se² = s²·(1/n + (x₀ − x̄)²/Sxx) = (1/6)(1/3) = 1/18 at x₀ = x̄ (exact algebra)
    expect(atMean.se).toBeCloseTo(Math.sqrt(1 / 18), 12);
    // t(0.975, 1) = 12.706 (Student's t table, e.g. Zar 2010, Table B.3)
    expect((atMean.high - atMean.fit) / atMean.se).toBeCloseTo(12.706, 3);
    // at x₀ = 0: se² = (1/6)(1/3 + 1/2) = 5/36 (exact algebra)
    expect(atZero.fit).toBeCloseTo(-1 / 6, 12);
    expect(atZero.se).toBeCloseTo(Math.sqrt(5 / 36), 12);
    expect(atZero.low).toBeCloseTo(-1 / 6 - 12.7062 * Math.sqrt(5 / 36), 3); // (same t table value)
  });

  it("cars: lm(dist ~ speed) band agrees with the simple-regression formula", () => {
    const { x, n, p } = withIntercept(carsSpeed);
    const f = fitLinearModel(x, n, p, carsDist);
    const grid = [4, 10, 15.4, 21, 25];
    const band = meanResponseBand(
      f,
      grid.map((s) => [1, s]),
    );
    // Independent computation: se(ŷ₀) = s·√(1/n + (x₀ − x̄)²/Sxx) (Draper & Smith 1998, eq. 1.4.5; exact algebra).
    const mean = carsSpeed.reduce((a, b) => a + b, 0) / n;
    const sxx = carsSpeed.reduce((a, b) => a + (b - mean) ** 2, 0);
    grid.forEach((s, k) => {
      const expected = (f.sigma as number) * Math.sqrt(1 / n + (s - mean) ** 2 / sxx);
      expect(band[k].se).toBeCloseTo(expected, 10);
      expect(band[k].fit).toBeCloseTo(f.coefficients[0] + f.coefficients[1] * s, 10);
    });
    expect(mean).toBe(15.4); // (R mean(cars$speed) = 15.4; value from memory)
    // ŷ(21) = −17.579095 + 3.932409·21 = 65.00149 (R predict(lm(dist ~ speed, cars), data.frame(speed = 21)); value from memory)
    expect(band[3].fit).toBeCloseTo(65.00149, 4);
    // narrowest at the mean of speed: ŷ = mean(dist) = 42.98 (exact algebra: the line passes through the means)
    expect(band[2].fit).toBeCloseTo(42.98, 10);
    expect(band[2].se).toBeCloseTo((f.sigma as number) / Math.sqrt(50), 10);
    // t(0.975, 48) = 2.0106 (R qt(0.975, 48); value from memory)
    expect((band[2].high - band[2].fit) / band[2].se).toBeCloseTo(2.0106, 4);
  });

  it("stack loss, three predictors: agrees with x₀ᵀ(XᵀX)⁻¹x₀ from a general matrix library", () => {
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
    const X = new Matrix(n, p);
    for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) X.set(i, j, x[i * p + j]);
    const xtxInv = inverse(X.transpose().mmul(X));
    const rows = [
      [1, 60.43, 21.1, 86.3],
      [1, 80, 27, 89],
      [1, 50, 18, 72],
    ];
    const band = meanResponseBand(f, rows, { level: 0.9 });
    rows.forEach((row, k) => {
      const x0 = Matrix.columnVector(row);
      const quad = x0.transpose().mmul(xtxInv).mmul(x0).get(0, 0);
      expect(band[k].se).toBeCloseTo((f.sigma as number) * Math.sqrt(quad), 9); // (exact algebra with an independent inverse)
    });
    // t(0.95, 17) = 1.740 (Student's t table, e.g. Zar 2010, Table B.3)
    expect((band[0].high - band[0].fit) / band[0].se).toBeCloseTo(1.74, 2);
  });

  it("refuses a fit without residual degrees of freedom, a short row and non-finite values", () => {
    const exact = fitLinearModel(withIntercept([0, 1]).x, 2, 2, [1, 3]);
    expect(() => meanResponseBand(exact, [[1, 0.5]])).toThrow(StatsError);
    expect(() => meanResponseBand(exact, [[1, 0.5]])).toThrow(
      "meanResponseBand requires a fit with residual degrees of freedom (n > p)",
    );
    const { x, n, p } = withIntercept(carsSpeed);
    const f = fitLinearModel(x, n, p, carsDist);
    expect(() => meanResponseBand(f, [[1]])).toThrow(
      "meanResponseBand requires rows of 2 values (row 1 has 1)",
    );
    expect(() => meanResponseBand(f, [[1, Number.NaN]])).toThrow(
      "meanResponseBand requires finite values (row 1, column 2)",
    );
    expect(() => meanResponseBand(f, [[1, 1]], { level: 1 })).toThrow(
      "meanResponseBand requires a level between 0 and 1",
    );
  });
});
