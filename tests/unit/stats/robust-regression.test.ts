import { describe, expect, it } from "vitest";
import { fitLinearModel } from "../../../server/stats/linear-model";
import { robustLinearModel } from "../../../server/stats/robust-regression";
import { stackloss, withIntercept } from "./reference-data";

const design = withIntercept(
  stackloss.map((r) => r[0]),
  stackloss.map((r) => r[1]),
  stackloss.map((r) => r[2]),
);
const y = stackloss.map((r) => r[3]);

describe("Huber M-estimation (MASS::rlm defaults)", () => {
  const h = robustLinearModel(design.x, design.n, design.p, y, { psi: "huber" });
  it("stack loss: coefficients, standard errors and scale as printed by summary(rlm(stack.loss ~ ., stackloss))", () => {
    expect(h.coefficients[0]).toBeCloseTo(-41.0265, 4); // (MASS ?rlm example output, R summary.rlm)
    expect(h.coefficients[1]).toBeCloseTo(0.8294, 4); // (same)
    expect(h.coefficients[2]).toBeCloseTo(0.9261, 4); // (same)
    expect(h.coefficients[3]).toBeCloseTo(-0.1278, 4); // (same)
    expect(h.se[0]).toBeCloseTo(9.8073, 4); // (same: Std. Error column)
    expect(h.se[1]).toBeCloseTo(0.1112, 4); // (same)
    expect(h.se[2]).toBeCloseTo(0.3034, 4); // (same)
    expect(h.se[3]).toBeCloseTo(0.1289, 4); // (same)
    expect(h.t[1]).toBeCloseTo(7.4597, 3); // (same: t value column)
    expect(h.scale).toBeCloseTo(2.441, 3); // (same: residual standard error 2.441 on 17 df)
    expect(h.df).toBe(17);
    expect(h.converged).toBe(true);
  });
  it("stopping rule: stops at the first relative residual change ≤ 1e-4, and a tighter rule moves the answer less than that", () => {
    const last = h.changes[h.changes.length - 1];
    expect(last).toBeLessThanOrEqual(1e-4);
    h.changes.slice(0, -1).forEach((c) => {
      expect(c).toBeGreaterThan(1e-4);
    });
    expect(h.iterations).toBe(h.changes.length);
    const tight = robustLinearModel(design.x, design.n, design.p, y, {
      psi: "huber",
      acc: 1e-12,
      maxIterations: 500,
    });
    expect(tight.changes.length).toBeGreaterThan(h.changes.length);
    for (let j = 0; j < 4; j++)
      expect(Math.abs(tight.coefficients[j] - h.coefficients[j])).toBeLessThan(
        2e-3 * Math.max(1, Math.abs(h.coefficients[j])),
      );
    // at the converged solution the estimating equations Σ ψ(r_i/s)·x_ij = 0 hold, with s = median|r|/0.6745
    // of the residuals that produced the final weights (Huber 1981, §7.8; exact algebra)
    const absR = Array.from(tight.residuals, Math.abs).sort((a, b) => a - b);
    const s = absR[10] / 0.6745;
    for (let j = 0; j < 4; j++) {
      let sum = 0;
      tight.residuals.forEach((r, i) => {
        const u = r / s;
        sum += Math.max(-1.345, Math.min(1.345, u)) * design.x[i * 4 + j];
      });
      expect(Math.abs(sum)).toBeLessThan(1e-6);
    }
  });
  it("reports non-convergence honestly when the iteration limit is too low", () => {
    const short = robustLinearModel(design.x, design.n, design.p, y, {
      psi: "huber",
      maxIterations: 2,
    });
    expect(short.converged).toBe(false);
    expect(short.iterations).toBe(2);
  });
  it("with no residual beyond k·s every weight is 1 and the fit is least squares (exact algebra)", () => {
    const xs = [1, 2, 3, 4, 5, 6, 7, 8];
    const ys = [1.1, 1.9, 3.05, 4.0, 4.9, 6.1, 7.0, 7.95];
    const d = withIntercept(xs);
    const r = robustLinearModel(d.x, d.n, d.p, ys, { psi: "huber", tuning: 100 });
    const ls = fitLinearModel(d.x, d.n, d.p, ys);
    expect(r.coefficients[1]).toBeCloseTo(ls.coefficients[1], 12);
  });
  it("robust location of symmetric data is its centre (exact algebra)", () => {
    const values = [5 - 9, 5 - 1, 5 - 0.5, 5, 5 + 0.5, 5 + 1, 5 + 9];
    const ones = new Float64Array(values.length).fill(1);
    expect(
      robustLinearModel(ones, values.length, 1, values, { psi: "huber" }).coefficients[0],
    ).toBeCloseTo(5, 10);
    expect(
      robustLinearModel(ones, values.length, 1, values, { psi: "bisquare" }).coefficients[0],
    ).toBeCloseTo(5, 10);
  });
});

describe("Tukey bisquare M-estimation", () => {
  it("started from least squares, as rlm(stack.loss ~ ., stackloss, psi = psi.bisquare) prints", () => {
    const b = robustLinearModel(design.x, design.n, design.p, y, { psi: "bisquare", start: "ls" });
    expect(b.coefficients[0]).toBeCloseTo(-42.2852537, 5); // (MASS ?rlm example output)
    expect(b.coefficients[1]).toBeCloseTo(0.9275471, 6); // (same)
    expect(b.coefficients[2]).toBeCloseTo(0.6507322, 6); // (same)
    expect(b.coefficients[3]).toBeCloseTo(-0.112331, 6); // (same)
    expect(b.scale).toBeCloseTo(2.28, 2); // (same: scale estimate 2.28)
    expect(b.iterations).toBe(11); // (same: "Converged in 11 iterations")
  });
  it("started from the Huber fit (the default here) it reaches the same solution within the stopping tolerance", () => {
    const fromLs = robustLinearModel(design.x, design.n, design.p, y, {
      psi: "bisquare",
      start: "ls",
    });
    const fromHuber = robustLinearModel(design.x, design.n, design.p, y, { psi: "bisquare" });
    for (let j = 0; j < 4; j++)
      expect(Math.abs(fromHuber.coefficients[j] - fromLs.coefficients[j])).toBeLessThan(
        1e-3 * Math.max(1, Math.abs(fromLs.coefficients[j])),
      );
  });
});
