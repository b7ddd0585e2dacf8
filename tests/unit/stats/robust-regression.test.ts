import { describe, expect, it } from "vitest";
import { median } from "../../../server/stats/descriptive";
import { studentTTwoSidedP } from "../../../server/stats/distributions";
import {
  fitLinearModel,
  qrDecompose,
  solveLinearModel,
  unscaledCovariance,
} from "../../../server/stats/linear-model";
import {
  type RobustPsi,
  madAboutZero,
  robustCoefficient,
  robustCoefficientByNormalEquations,
  robustLinearModel,
  robustWorkspace,
} from "../../../server/stats/robust-regression";
import { createRng, normalDraw } from "../../../server/stats/rng";
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

/**
 * The straightforward IRLS (each step decomposes √w·X afresh with
 * qrDecompose and solves with solveLinearModel; the MAD by descriptive.ts's
 * median; the standard errors from unscaledCovariance of a fresh QR of X),
 * written out here as the reference the workspace implementation must match
 * bit for bit (same algorithm, same arithmetic; common practice, no source).
 */
function straightforward(
  x: Float64Array,
  n: number,
  p: number,
  y: Float64Array,
  psi: RobustPsi,
  start: "ls" | "huber",
  maxIterations = 20,
) {
  const k = psi === "huber" ? 1.345 : 4.685;
  const weightOf = (u: number) => {
    if (psi === "huber") return Math.abs(u) <= k ? 1 : k / Math.abs(u);
    const a = Math.min(1, Math.abs(u / k));
    return (1 - a * a) * (1 - a * a);
  };
  const derivativeOf = (u: number) => {
    if (psi === "huber") return Math.abs(u) <= k ? 1 : 0;
    const t = (u / k) * (u / k);
    return t < 1 ? (1 - t) * (1 - 5 * t) : 0;
  };
  const solve = (w: Float64Array | null) => {
    const xs = new Float64Array(n * p);
    const ys = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const sw = w ? Math.sqrt(w[i]) : 1;
      ys[i] = y[i] * sw;
      for (let j = 0; j < p; j++) xs[i * p + j] = x[i * p + j] * sw;
    }
    const b = solveLinearModel(qrDecompose(xs, n, p), ys).coefficients;
    const r = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let f = 0;
      for (let j = 0; j < p; j++) f += x[i * p + j] * b[j];
      r[i] = y[i] - f;
    }
    return { b, r };
  };
  const mad = (r: Float64Array) => median(Array.from(r, Math.abs)) / 0.6745;
  let { b, r } =
    start === "huber" && psi !== "huber"
      ? (() => {
          const h = robustLinearModel(x, n, p, y, { psi: "huber", maxIterations });
          return { b: h.coefficients, r: h.residuals };
        })()
      : solve(null);
  let scale = mad(r);
  let iterations = 0;
  const changes: number[] = [];
  for (let iter = 1; iter <= maxIterations; iter++) {
    iterations = iter;
    const old = r;
    scale = mad(old);
    if (scale === 0) break;
    ({ b, r } = solve(Float64Array.from(old, (v) => weightOf(v / scale))));
    let num = 0;
    let den = 0;
    for (let i = 0; i < n; i++) {
      num += (old[i] - r[i]) * (old[i] - r[i]);
      den += old[i] * old[i];
    }
    const change = Math.sqrt(num / Math.max(1e-20, den));
    changes.push(change);
    if (change <= 1e-4) break;
  }
  let sumPsi2 = 0;
  let meanD = 0;
  const deriv = Float64Array.from(r, (v) => derivativeOf(v / scale));
  for (let i = 0; i < n; i++) {
    const w = weightOf(r[i] / scale);
    sumPsi2 += r[i] * w * (r[i] * w);
    meanD += deriv[i];
  }
  meanD /= n;
  let varD = 0;
  for (let i = 0; i < n; i++) varD += (deriv[i] - meanD) * (deriv[i] - meanD);
  varD /= n - 1;
  const kappa = 1 + (p * varD) / (n * meanD * meanD);
  const sd = Math.sqrt(sumPsi2 / (n - p)) * (kappa / meanD);
  const cov = unscaledCovariance(qrDecompose(x, n, p));
  const se = Array.from({ length: p }, (_, j) => sd * Math.sqrt(cov[j * p + j]));
  const t = se.map((v, j) => b[j] / v);
  return {
    coefficients: Array.from(b),
    se,
    t,
    pValues: t.map((v) => studentTTwoSidedP(v, n - p)),
    residuals: Array.from(r),
    scale,
    iterations,
    changes,
  };
}

describe("the workspace IRLS against the straightforward computation", () => {
  // Random designs with an intercept, heavy-tailed responses (every fifth an outlier) and a 0/1 column.
  function sample(seed: number, n: number, p: number) {
    const rng = createRng(seed);
    const x = new Float64Array(n * p);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i * p] = 1;
      for (let j = 1; j < p; j++) x[i * p + j] = j === 3 ? (i % 3 === 0 ? 1 : 0) : normalDraw(rng);
      y[i] = 0.3 * (p > 1 ? x[i * p + 1] : 0) + normalDraw(rng) * (i % 5 === 0 ? 6 : 1);
    }
    return { x, y };
  }

  it("every output equal to the last bit: Huber and bisquare, both starts, odd and even n", () => {
    for (let trial = 0; trial < 24; trial++) {
      const n = 30 + trial * 7;
      const p = 1 + (trial % 5);
      const { x, y } = sample(100 + trial, n, p);
      for (const [psi, start] of [
        ["huber", "ls"],
        ["bisquare", "ls"],
        ["bisquare", "huber"],
      ] as const) {
        const ref = straightforward(x, n, p, y, psi, start);
        const fit = robustLinearModel(x, n, p, y, { psi, start });
        const label = `trial ${trial}, ${psi} from ${start}`;
        expect(Array.from(fit.coefficients), label).toEqual(ref.coefficients);
        expect(Array.from(fit.se), label).toEqual(ref.se);
        expect(Array.from(fit.t), label).toEqual(ref.t);
        expect(Array.from(fit.pValues), label).toEqual(ref.pValues);
        expect(Array.from(fit.residuals), label).toEqual(ref.residuals);
        expect(fit.scale, label).toBe(ref.scale);
        expect(fit.iterations, label).toBe(ref.iterations);
        expect(fit.changes, label).toEqual(ref.changes);
      }
    }
  });

  it("stops after the iteration cap at the same point", () => {
    const { x, y } = sample(7, 41, 3);
    const ref = straightforward(x, 41, 3, y, "bisquare", "ls", 2);
    const fit = robustLinearModel(x, 41, 3, y, { psi: "bisquare", start: "ls", maxIterations: 2 });
    expect(Array.from(fit.coefficients)).toEqual(ref.coefficients);
    expect(fit.scale).toBe(ref.scale);
  });

  it("robustCoefficient in one reused workspace gives robustLinearModel's coefficient, se, t and p", () => {
    const n = 57;
    const p = 4;
    const ws = robustWorkspace(n, p);
    for (let trial = 0; trial < 12; trial++) {
      const { x, y } = sample(300 + trial, n, p);
      for (const psi of ["huber", "bisquare"] as const) {
        const full = robustLinearModel(x, n, p, y, { psi });
        for (let j = 0; j < p; j++) {
          const one = robustCoefficient(x, y, j, ws, { psi });
          expect(one.estimate).toBe(full.coefficients[j]);
          expect(one.se).toBe(full.se[j]);
          expect(one.t).toBe(full.t[j]);
          expect(one.p).toBe(full.pValues[j]);
        }
      }
    }
  });

  it("robustCoefficient keeps the errors: a collinear column is named, a design of the wrong size refused", () => {
    const n = 12;
    const x = new Float64Array(n * 3);
    for (let i = 0; i < n; i++) {
      x[i * 3] = 1;
      x[i * 3 + 1] = i;
      x[i * 3 + 2] = 2 * i;
    }
    const y = Float64Array.from({ length: n }, (_, i) => Math.sin(i));
    const ws = robustWorkspace(n, 3);
    expect(() =>
      robustCoefficient(x, y, 1, ws, { psi: "huber", columnNames: ["(intercept)", "a", "b"] }),
    ).toThrow(/column 'b' is a linear combination/);
    expect(() => robustCoefficient(x.subarray(3), y, 1, ws, { psi: "huber" })).toThrow(
      /n·p entries/,
    );
  });
});

describe("robustCoefficientByNormalEquations against the QR steps of robustLinearModel", () => {
  function sample(seed: number, n: number, p: number) {
    const rng = createRng(seed);
    const x = new Float64Array(n * p);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i * p] = 1;
      // An uncentred covariate (mean 3) and a 0/1 column, as designs with covariates have.
      for (let j = 1; j < p; j++)
        x[i * p + j] = j === 3 ? (i % 4 === 0 ? 1 : 0) : normalDraw(rng) + (j === 2 ? 3 : 0);
      y[i] = 0.2 * x[i * p + 1] + normalDraw(rng) * (i % 7 === 0 ? 5 : 1);
    }
    return { x, y };
  }

  it("the same iterations and, to rounding (1e-10 of the standard error), the same estimate, se, t and p", () => {
    for (let trial = 0; trial < 60; trial++) {
      const n = 25 + trial * 9;
      const p = 2 + (trial % 4);
      const { x, y } = sample(500 + trial, n, p);
      const ws = robustWorkspace(n, p);
      for (const psi of ["huber", "bisquare"] as const) {
        const ref = robustLinearModel(x, n, p, y, { psi });
        for (let j = 0; j < p; j++) {
          const f = robustCoefficientByNormalEquations(x, y, j, ws, { psi });
          const label = `trial ${trial}, ${psi}, coefficient ${j}`;
          expect(f.iterations, label).toBe(ref.iterations);
          expect(Math.abs(f.estimate - ref.coefficients[j]), label).toBeLessThan(1e-10 * ref.se[j]);
          expect(Math.abs(f.se - ref.se[j]), label).toBeLessThan(1e-10 * ref.se[j]);
          expect(Math.abs(f.t - ref.t[j]), label).toBeLessThan(
            1e-10 * Math.max(1, Math.abs(ref.t[j])),
          );
          expect(Math.abs(f.p - ref.pValues[j]), label).toBeLessThan(1e-9 * ref.pValues[j] + 1e-15);
        }
      }
    }
  });

  it("fits a nearly collinear design by the QR steps (the numbers of robustCoefficient, to the bit)", () => {
    const n = 40;
    const { x, y } = sample(77, n, 3);
    // Column 3 = column 2 + 1e-6·noise: a Cholesky pivot far below 1e-8 of its diagonal.
    const rng = createRng(78);
    for (let i = 0; i < n; i++) x[i * 3 + 2] = x[i * 3 + 1] + 1e-6 * normalDraw(rng);
    const viaQr = robustCoefficient(x, y, 1, robustWorkspace(n, 3), { psi: "huber" });
    const f = robustCoefficientByNormalEquations(x, y, 1, robustWorkspace(n, 3), { psi: "huber" });
    expect(f).toEqual(viaQr);
  });

  it("keeps robustLinearModel's errors: a collinear column named, non-finite responses refused", () => {
    const n = 12;
    const x = new Float64Array(n * 3);
    for (let i = 0; i < n; i++) {
      x[i * 3] = 1;
      x[i * 3 + 1] = i;
      x[i * 3 + 2] = 2 * i;
    }
    const y = Float64Array.from({ length: n }, (_, i) => Math.sin(i));
    const ws = robustWorkspace(n, 3);
    expect(() =>
      robustCoefficientByNormalEquations(x, y, 1, ws, {
        psi: "huber",
        columnNames: ["(intercept)", "a", "b"],
      }),
    ).toThrow(/column 'b' is a linear combination/);
    y[4] = Number.NaN;
    expect(() => robustCoefficientByNormalEquations(x, y, 1, ws, { psi: "huber" })).toThrow(
      /finite responses \(row 5\)/,
    );
  });
});

describe("madAboutZero with the last step's median as a hint", () => {
  it("equals median(|r|)/0.6745 (descriptive.ts) whatever the hint: odd and even n, ties, a NaN", () => {
    const rng = createRng(41);
    for (let trial = 0; trial < 300; trial++) {
      const n = 2 + (trial % 61);
      // Every third vector from few distinct values, so ties straddle the middle.
      const r = Float64Array.from({ length: n }, () =>
        trial % 3 === 0 ? Math.round(normalDraw(rng) * 2) / 2 : normalDraw(rng),
      );
      if (trial % 50 === 7) r[0] = Number.NaN;
      const expected = median(Array.from(r, Math.abs)) / 0.6745;
      const m = expected * 0.6745;
      for (const near of [0, m, m * 1.04, m * 0.97, m * 1.2, m * 0.5, 1e-9, 1e9]) {
        const got = madAboutZero(r, new Float64Array(n), near);
        expect(got, `trial ${trial}, hint ${near}`).toBe(expected);
      }
    }
  });
});
