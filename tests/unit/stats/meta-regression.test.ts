import { Matrix, inverse } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { StatsError } from "../../../server/stats/errors";
import { weightedLinearModel } from "../../../server/stats/meta-regression";
import { createRng } from "../../../server/stats/rng";
import { BCG } from "./reference-data";

/** Log risk ratio and its large-sample sampling variance per trial. */
const yi = BCG.map(([a, b, c, d]) => Math.log(a / (a + b) / (c / (c + d))));
const vi = BCG.map(([a, b, c, d]) => 1 / a - 1 / (a + b) + 1 / c - 1 / (c + d));
const sei = vi.map(Math.sqrt);
const intercept = yi.map(() => [1]);
const latitude = BCG.map((row) => [1, row[4]]);

/** Intercept-only weighted mean and Q with weights 1/(v + τ²), written out independently of the engine. */
function pooled(tau2: number) {
  const w = vi.map((v) => 1 / (v + tau2));
  const sw = w.reduce((s, x) => s + x, 0);
  const mu = w.reduce((s, x, i) => s + x * yi[i], 0) / sw;
  const q = w.reduce((s, x, i) => s + x * (yi[i] - mu) ** 2, 0);
  return { w, sw, mu, q };
}

describe("BCG trial effect sizes", () => {
  it("reproduces the documented log risk ratios and variances", () => {
    // (data listing of the documented BCG example, Viechtbauer 2010: trial 1 yi = −0.8893, vi = 0.3256; trial 8 yi = 0.0120, vi = 0.0040)
    expect(yi[0]).toBeCloseTo(-0.8893, 4);
    expect(vi[0]).toBeCloseTo(0.3256, 4);
    expect(yi[7]).toBeCloseTo(0.012, 4);
    expect(vi[7]).toBeCloseTo(0.004, 4);
  });
});

describe("weightedLinearModel, intercept only (random-effects pooling)", () => {
  it("DerSimonian–Laird matches the published BCG result", () => {
    const r = weightedLinearModel({
      y: yi,
      se: sei,
      X: intercept,
      tested: 0,
      tau2Method: "dl",
      smallSample: "none",
    });
    expect(r.tau2).toBeCloseTo(0.3088, 4); // (Viechtbauer 2010, J Stat Softw 36(3), DL fit of the BCG data)
    expect(r.estimate).toBeCloseTo(-0.7141, 4); // (Viechtbauer 2010, DL fit)
    expect(r.se).toBeCloseTo(0.1787, 4); // (Viechtbauer 2010, DL fit)
    expect(r.tau2Se).toBeCloseTo(0.2299, 4); // (value from memory: documented DL output, SE of tau^2 = 0.2299)
    expect(r.df).toBeNull();
  });

  it("DL τ² and I² follow the method-of-moments algebra", () => {
    const r = weightedLinearModel({
      y: yi,
      se: sei,
      X: intercept,
      tested: 0,
      tau2Method: "dl",
      smallSample: "none",
    });
    const fixed = pooled(0);
    const s1 = fixed.sw;
    const s2 = fixed.w.reduce((s, x) => s + x * x, 0);
    const s3 = fixed.w.reduce((s, x) => s + x * x * x, 0);
    const k = yi.length;
    expect(fixed.q).toBeCloseTo(152.233, 3); // (value from memory: documented Q(df = 12) = 152.2330)
    // (exact algebra: DerSimonian & Laird 1986, τ² = (Q − (k − 1)) / (S1 − S2/S1))
    expect(r.tau2).toBeCloseTo((fixed.q - (k - 1)) / (s1 - s2 / s1), 12);
    // (exact algebra: with DL, I² = (Q − df)/Q, Higgins & Thompson 2002)
    expect(r.i2).toBeCloseTo((fixed.q - (k - 1)) / fixed.q, 12);
    expect(r.i2).toBeCloseTo(0.9212, 4); // (brief's documented I² ≈ 92.12%, which is the DL value)
    // (exact algebra: Biggerstaff & Tweedie 1997 variance of Q, Var(τ²_DL) = Var(Q) / (S1 − S2/S1)²)
    const t = r.tau2;
    const varQ =
      2 * (k - 1) +
      4 * (s1 - s2 / s1) * t +
      2 * (s2 - (2 * s3) / s1 + (s2 * s2) / (s1 * s1)) * t * t;
    expect(r.tau2Se).toBeCloseTo(Math.sqrt(varQ) / (s1 - s2 / s1), 12);
    // (exact algebra: pooled estimate with weights 1/(v + τ²))
    const re = pooled(t);
    expect(r.estimate).toBeCloseTo(re.mu, 12);
    expect(r.se).toBeCloseTo(Math.sqrt(1 / re.sw), 12);
  });

  it("REML matches the published BCG result", () => {
    const r = weightedLinearModel({
      y: yi,
      se: sei,
      X: intercept,
      tested: 0,
      tau2Method: "reml",
      smallSample: "none",
    });
    expect(r.tau2).toBeCloseTo(0.3132, 4); // (Viechtbauer 2010, J Stat Softw 36(3), REML fit of the BCG data)
    expect(r.estimate).toBeCloseTo(-0.7145, 4); // (Viechtbauer 2010, REML fit)
    expect(r.se).toBeCloseTo(0.1798, 4); // (Viechtbauer 2010, REML fit)
    expect(r.tau2Se).toBeCloseTo(0.1664, 4); // (value from memory: documented SE of tau^2 = 0.1664)
    expect(r.i2).toBeCloseTo(0.9222, 4); // (value from memory: documented I² = 92.22% for the REML fit)
    expect(r.statistic).toBeCloseTo(-3.9744, 4); // (value from memory: documented z = −3.9744)
    expect(r.ciLow).toBeCloseTo(-1.0669, 4); // (value from memory: documented ci.lb = −1.0669)
    expect(r.ciHigh).toBeCloseTo(-0.3622, 4); // (value from memory: documented ci.ub = −0.3622)
    expect(r.p).toBeLessThan(1e-4); // (documented p < .0001)
  });

  it("REML solves its estimating equation y'PPy = tr(P)", () => {
    const r = weightedLinearModel({
      y: yi,
      se: sei,
      X: intercept,
      tested: 0,
      tau2Method: "reml",
      smallSample: "none",
    });
    const { w, sw, mu } = pooled(r.tau2);
    const yPPy = w.reduce((s, x, i) => s + (x * (yi[i] - mu)) ** 2, 0);
    const traceP = sw - w.reduce((s, x) => s + x * x, 0) / sw;
    // (exact algebra: REML score ½(y'PPy − tr P) = 0 at an interior maximum; Viechtbauer 2005)
    expect(yPPy / traceP).toBeCloseTo(1, 9);
  });

  it("Knapp–Hartung rescales by the weighted residual variance on k − 1 df, without truncation", () => {
    const plain = weightedLinearModel({
      y: yi,
      se: sei,
      X: intercept,
      tested: 0,
      tau2Method: "reml",
      smallSample: "none",
    });
    const kh = weightedLinearModel({
      y: yi,
      se: sei,
      X: intercept,
      tested: 0,
      tau2Method: "reml",
      smallSample: "knapp-hartung",
    });
    const { sw, mu, q } = pooled(kh.tau2);
    const k = yi.length;
    // (exact algebra: Knapp & Hartung 2003, se² = Σw(y − μ)² / ((k − 1) Σw))
    const seKh = Math.sqrt(q / (k - 1) / sw);
    expect(kh.estimate).toBeCloseTo(plain.estimate, 14);
    expect(kh.df).toBe(12); // (exact algebra: k − p)
    expect(kh.se).toBeCloseTo(seKh, 12);
    expect(kh.statistic).toBeCloseTo(mu / seKh, 10);
    // (Student t table: t_{.975, 12} = 2.179, e.g. Zar 2010, Table B.3; the half-width uses the exact quantile 2.17881)
    expect((kh.ciHigh - kh.ciLow) / (2 * kh.se)).toBeCloseTo(2.1788, 4);
    expect(kh.se).toBeCloseTo(0.1808, 4); // (exact algebra above; the brief quotes 0.1809, which we could not confirm)
    expect(kh.p).toBeGreaterThan(0.001);
    expect(kh.p).toBeLessThan(0.003); // (t = −3.95 on 12 df: p ≈ .0019, Student t table bounds .001 < p < .005)
  });

  it("lets the Knapp–Hartung factor fall below 1 when residuals are more homogeneous than their standard errors", () => {
    // Values tightly around 1 with large standard errors: τ² = 0 and s² < 1.
    const y = [1.01, 0.99, 1.02, 0.98, 1.0];
    const se = [0.5, 0.5, 0.5, 0.5, 0.5];
    const X = y.map(() => [1]);
    const plain = weightedLinearModel({
      y,
      se,
      X,
      tested: 0,
      tau2Method: "dl",
      smallSample: "none",
    });
    const kh = weightedLinearModel({
      y,
      se,
      X,
      tested: 0,
      tau2Method: "dl",
      smallSample: "knapp-hartung",
    });
    expect(plain.tau2).toBe(0); // (exact algebra: Q < k − 1, truncated at 0)
    // (exact algebra: s² = Σ(y − ȳ)²/σ² / (k − 1) = 0.001 / 0.25 / 4 = 0.001)
    expect(kh.se / plain.se).toBeCloseTo(Math.sqrt(0.001), 12);
  });
});

describe("weightedLinearModel, with a moderator", () => {
  it("REML meta-regression on latitude matches the published BCG result", () => {
    const slope = weightedLinearModel({
      y: yi,
      se: sei,
      X: latitude,
      tested: 1,
      tau2Method: "reml",
      smallSample: "none",
    });
    expect(slope.coefficients[0]).toBeCloseTo(0.2515, 4); // (Viechtbauer 2010, mixed-effects model with absolute latitude)
    expect(slope.estimate).toBeCloseTo(-0.0291, 4); // (Viechtbauer 2010, latitude coefficient)
    // (Viechtbauer 2010, residual heterogeneity 0.0764. We converge to 0.07635; the documented implementation stops
    // Fisher scoring once τ² changes by less than 1e-5, which explains a last-digit difference, so allow 1e-4.
    // Its documented τ = 0.2763 (value from memory) agrees with ours.)
    expect(Math.abs(slope.tau2 - 0.0764)).toBeLessThan(1e-4);
    expect(Math.sqrt(slope.tau2)).toBeCloseTo(0.2763, 4);
    expect(slope.se).toBeCloseTo(0.0072, 4); // (value from memory: documented se of the latitude coefficient)
    // (value from memory: documented SE of tau^2 = 0.0591, last digit uncertain; ours is 0.05905)
    expect(Math.abs((slope.tau2Se ?? 0) - 0.0591)).toBeLessThan(1e-4);
    expect(slope.i2).toBeCloseTo(0.6839, 4); // (value from memory: documented residual I² = 68.39%)
    const icpt = weightedLinearModel({
      y: yi,
      se: sei,
      X: latitude,
      tested: 0,
      tau2Method: "reml",
      smallSample: "none",
    });
    expect(icpt.estimate).toBeCloseTo(0.2515, 4); // (Viechtbauer 2010)
    expect(icpt.se).toBeCloseTo(0.2491, 4); // (value from memory: documented se of the intercept)
  });

  it("a two-group design with equal standard errors estimates the difference of group means", () => {
    const y = [2.1, 1.4, 3.3, 2.8, 0.9, 1.2, 0.4, 1.9, 0.7, 1.1];
    const group = [1, 1, 1, 1, 1, 0, 0, 0, 0, 0];
    const se = y.map(() => 0.3);
    const X = group.map((g) => [1, g]);
    const r = weightedLinearModel({ y, se, X, tested: 1, tau2Method: "reml", smallSample: "none" });
    const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
    // (exact algebra: equal weights make WLS ordinary least squares; the dummy's coefficient is the mean difference)
    expect(r.estimate).toBeCloseTo(mean(y.slice(0, 5)) - mean(y.slice(5)), 12);
    expect(r.coefficients[0]).toBeCloseTo(mean(y.slice(5)), 12);
    // (exact algebra: with equal se the coefficient variance is (se² + τ²)(1/5 + 1/5))
    expect(r.se).toBeCloseTo(Math.sqrt((0.09 + r.tau2) * 0.4), 12);
  });

  it("is equivariant: scaling values and standard errors by c scales the estimate and se by c, τ² by c²", () => {
    const c = 7.5;
    const a = weightedLinearModel({
      y: yi,
      se: sei,
      X: latitude,
      tested: 1,
      tau2Method: "reml",
      smallSample: "knapp-hartung",
    });
    const b = weightedLinearModel({
      y: yi.map((v) => v * c),
      se: sei.map((s) => s * c),
      X: latitude,
      tested: 1,
      tau2Method: "reml",
      smallSample: "knapp-hartung",
    });
    // (exact algebra)
    expect(b.estimate / a.estimate).toBeCloseTo(c, 8);
    expect(b.se / a.se).toBeCloseTo(c, 8);
    expect(b.tau2 / a.tau2).toBeCloseTo(c * c, 6);
    expect(b.p).toBeCloseTo(a.p, 10);
    expect(b.i2).toBeCloseTo(a.i2, 8);
  });

  it("splits residual variance into measurement noise and true differences", () => {
    const r = weightedLinearModel({
      y: yi,
      se: sei,
      X: latitude,
      tested: 1,
      tau2Method: "reml",
      smallSample: "none",
    });
    const meanV = vi.reduce((s, v) => s + v, 0) / vi.length;
    // (exact algebra: shares of mean(se²) + τ²)
    expect(r.noiseShare).toBeCloseTo(meanV / (meanV + r.tau2), 14);
    expect(r.noiseShare + r.trueShare).toBeCloseTo(1, 15);
  });
});

describe("weightedLinearModel REML on many invented designs", () => {
  it("always solves the REML score equation, or stops at τ² = 0 with a non-positive score", () => {
    // Invented data from a seeded generator: noisy designs with 1–3 columns, where Fisher scoring alone often
    // creeps and the Brent fallback takes over. The check builds P = W − WX(X'WX)⁻¹X'W with a general matrix library.
    const rng = createRng(11);
    for (let trial = 0; trial < 150; trial++) {
      const n = 4 + rng.int(30);
      const p = 1 + rng.int(3);
      const X = Array.from({ length: n }, () => [
        1,
        ...Array.from({ length: p - 1 }, () => rng.next()),
      ]);
      const se = Array.from({ length: n }, () => 0.05 + rng.next());
      const scale = trial % 2 ? 1 : 5;
      const y = se.map((s) => (rng.next() - 0.5) * 3 * s * scale);
      const r = weightedLinearModel({
        y,
        se,
        X,
        tested: p - 1,
        tau2Method: "reml",
        smallSample: "none",
      });
      const W = Matrix.diag(se.map((s) => 1 / (s * s + r.tau2)));
      const Xm = new Matrix(X);
      const WX = W.mmul(Xm);
      const P = W.sub(WX.mmul(inverse(Xm.transpose().mmul(WX))).mmul(WX.transpose()));
      const Py = P.mmul(Matrix.columnVector(y));
      const yPPy = Py.transpose().mmul(Py).get(0, 0);
      const traceP = P.trace();
      // (exact algebra: REML score ½(y'PPy − tr P), Viechtbauer 2005)
      if (r.tau2 > 0) expect(yPPy / traceP).toBeCloseTo(1, 7);
      else expect(yPPy).toBeLessThanOrEqual(traceP * (1 + 1e-9));
      // (exact algebra: WLS coefficients (X'WX)⁻¹X'Wy at the final τ²)
      const beta = inverse(Xm.transpose().mmul(WX))
        .mmul(WX.transpose())
        .mmul(Matrix.columnVector(y));
      expect(r.estimate).toBeCloseTo(beta.get(p - 1, 0), 9);
    }
  });
});

describe("weightedLinearModel preconditions", () => {
  const y = [0.1, 0.4, -0.2, 0.3, 0.5, 0.2, 0.0, 0.6];
  const se = [0.1, 0.2, 0.15, 0.1, 0.2, 0.3, 0, 0.1];
  const X = y.map(() => [1]);

  it("names the row of a non-positive standard error", () => {
    expect(() =>
      weightedLinearModel({ y, se, X, tested: 0, tau2Method: "reml", smallSample: "none" }),
    ).toThrow(
      "weightedLinearModel requires a positive standard error for every participant (row 7 has 0)",
    );
  });

  it("names the participant id when ids are given", () => {
    const participants = y.map((_, i) => `sub-${String(i + 1).padStart(2, "0")}`);
    expect(() =>
      weightedLinearModel({
        y,
        se,
        X,
        tested: 0,
        tau2Method: "dl",
        smallSample: "none",
        participants,
      }),
    ).toThrow(
      "weightedLinearModel requires a positive standard error for every participant (participant sub-07 (row 7) has 0)",
    );
  });

  it("refuses missing values, missing standard errors and bad designs", () => {
    const good = se.map((s) => s || 0.2);
    expect(() =>
      weightedLinearModel({
        y: [...y.slice(0, 2), Number.NaN, ...y.slice(3)],
        se: good,
        X,
        tested: 0,
        tau2Method: "dl",
        smallSample: "none",
      }),
    ).toThrow("weightedLinearModel requires a finite value for every participant (row 3 has NaN)");
    expect(() =>
      weightedLinearModel({
        y,
        se: [...good.slice(0, 7), Number.NaN],
        X,
        tested: 0,
        tau2Method: "dl",
        smallSample: "none",
      }),
    ).toThrow("(row 8 has NaN)");
    expect(() =>
      weightedLinearModel({
        y,
        se: [...good.slice(0, 4), -1, ...good.slice(5)],
        X,
        tested: 0,
        tau2Method: "dl",
        smallSample: "none",
      }),
    ).toThrow("(row 5 has -1)");
    expect(() =>
      weightedLinearModel({
        y,
        se: good,
        X: y.map(() => [1, 2]),
        tested: 1,
        tau2Method: "reml",
        smallSample: "none",
      }),
    ).toThrow("weightedLinearModel requires a design matrix of full column rank");
    expect(() =>
      weightedLinearModel({ y, se: good, X, tested: 1, tau2Method: "reml", smallSample: "none" }),
    ).toThrow(
      "weightedLinearModel requires the tested column to be one of the 1 design columns (got 1)",
    );
    expect(() =>
      weightedLinearModel({
        y: y.slice(0, 1),
        se: good.slice(0, 1),
        X: X.slice(0, 1),
        tested: 0,
        tau2Method: "reml",
        smallSample: "none",
      }),
    ).toThrow(
      "weightedLinearModel requires more participants than design columns (1 participants, 1 columns)",
    );
    expect(() =>
      weightedLinearModel({
        y,
        se: good.slice(1),
        X,
        tested: 0,
        tau2Method: "reml",
        smallSample: "none",
      }),
    ).toThrow(StatsError);
  });
});
