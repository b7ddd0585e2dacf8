/**
 * Student's t distribution on ν degrees of freedom (ν > 0, fractional ν as
 * in Welch's test; ν = Infinity is the standard normal).
 *
 * P(|T| ≥ |t|) = I_x(ν/2, ½) with x = ν/(ν + t²) (Abramowitz & Stegun 1964,
 * 26.7.1 with 26.5.27), by the incomplete beta function of beta.ts, given
 * both x and 1 − x = t²/(ν + t²) to full precision; each tail is computed
 * directly. The quantile solves the smaller tail by safeguarded Newton steps
 * (solve.ts) from the normal quantile.
 */
import { checkDf, checkNumber, checkProbability } from "./arguments";
import { incompleteBeta, logBeta } from "./beta";
import { logGamma, logGammaRatio } from "./gamma";
import { normalCdf, normalDensity, normalQuantile, normalTwoSidedP, normalUpper } from "./normal";
import { gaussLegendre16 } from "./quadrature";
import { solveTail } from "./solve";

function checkTDf(df: number, name: string): void {
  if (df !== Infinity) checkDf(df, name);
}

/**
 * P(T > t) for t ≥ 0 and ν > 1800(t² + 1), by Gauss–Legendre quadrature of
 * the density: ½ − ∫₀^t f for t ≤ 1, else ∫_t^∞ f over panels on each of
 * which log f falls by at most about 4, until a panel adds less than 1e-17
 * of the sum.
 */
function upperTailByQuadrature(t: number, df: number): number {
  const logC = logDensityConstant(df);
  const f = (s: number): number => Math.exp(logC - (0.5 * df + 0.5) * Math.log1p((s * s) / df));
  if (t <= 1) return 0.5 - gaussLegendre16(f, 0, t);
  let sum = 0;
  let s = t;
  for (let panel = 0; panel < 1000; panel++) {
    const slope = (s * (df + 1)) / (df + s * s);
    const width = 4 / Math.max(slope, 0.25);
    const piece = gaussLegendre16(f, s, s + width);
    sum += piece;
    s += width;
    if (piece <= 1e-17 * sum) break;
  }
  return sum;
}

function logDensityConstant(df: number): number {
  const h = 0.5 * df;
  return (
    (h >= 10 ? logGammaRatio(h, 0.5) : logGamma(h + 0.5) - logGamma(h)) -
    0.5 * Math.log(df * Math.PI)
  );
}

/**
 * P(T > t) for t ≥ 0, ν finite. The continued fraction of I_x(ν/2, ½) loses
 * about ν·ε/(t² + 1) relative precision when x = ν/(ν + t²) is near 1 (its
 * first denominators cancel), so for ν > 1800(t² + 1), where that would
 * exceed about 1e-13, the density is integrated instead.
 */
function upperTailPositive(t: number, df: number): number {
  if (t === Infinity) return 0;
  if (t === 0) return 0.5;
  if (df > 1800 * (t * t + 1)) return upperTailByQuadrature(t, df);
  if (t > 1e10 * Math.sqrt(df)) {
    // x = ν/(ν + t²) < 1e-20: I_x(ν/2, ½) = x^(ν/2) / ((ν/2) B(ν/2, ½)) to relative O(x),
    // in logarithms so that t² may overflow
    const a = 0.5 * df;
    return 0.5 * Math.exp(a * (Math.log(df) - 2 * Math.log(t)) - logBeta(a, 0.5) - Math.log(a));
  }
  const t2 = t * t;
  let x: number;
  let y: number;
  if (t2 === Infinity) {
    x = df / t / t;
    y = 1;
  } else {
    x = df / (df + t2);
    y = t2 / (df + t2);
  }
  return 0.5 * incompleteBeta(x, y, 0.5 * df, 0.5).lower;
}

/** P(|T| < t) for t ≥ 0, ν finite, computed directly where it is small. */
function centralPositive(t: number, df: number): number {
  if (t === 0) return 0;
  if (df > 1800 * (t * t + 1) && t <= 1) {
    const logC = logDensityConstant(df);
    return (
      2 * gaussLegendre16((s) => Math.exp(logC - (0.5 * df + 0.5) * Math.log1p((s * s) / df)), 0, t)
    );
  }
  if (t > 1) return 1 - 2 * upperTailPositive(t, df);
  const t2 = t * t;
  return incompleteBeta(df / (df + t2), t2 / (df + t2), 0.5 * df, 0.5).upper;
}

/** Student t density on ν degrees of freedom. Cost O(1). */
export function studentTDensity(t: number, df: number): number {
  checkTDf(df, "studentTDensity");
  if (df === Infinity) return normalDensity(t);
  const z = (t * t) / df;
  const log1pZ = z < 1e20 ? Math.log1p(z) : 2 * Math.log(Math.abs(t)) - Math.log(df);
  return Math.exp(logDensityConstant(df) - (0.5 * df + 0.5) * log1pZ);
}

/** Upper tail P(T > t) on ν = df degrees of freedom, computed directly. Cost O(√ν). */
export function studentTUpper(t: number, df: number): number {
  checkTDf(df, "studentTUpper");
  checkNumber(t, "studentTUpper");
  if (df === Infinity) return normalUpper(t);
  return t >= 0 ? upperTailPositive(t, df) : 1 - upperTailPositive(-t, df);
}

/** Student t distribution function P(T ≤ t) on ν = df degrees of freedom. Cost O(√ν). */
export function studentTCdf(t: number, df: number): number {
  checkTDf(df, "studentTCdf");
  checkNumber(t, "studentTCdf");
  if (df === Infinity) return normalCdf(t);
  return t <= 0 ? upperTailPositive(-t, df) : 1 - upperTailPositive(t, df);
}

/** Two-sided p-value P(|T| ≥ |t|) on ν = df degrees of freedom. Cost O(√ν). */
export function studentTTwoSidedP(t: number, df: number): number {
  checkTDf(df, "studentTTwoSidedP");
  checkNumber(t, "studentTTwoSidedP");
  if (df === Infinity) return normalTwoSidedP(t);
  return Math.min(1, 2 * upperTailPositive(Math.abs(t), df));
}

/**
 * Student t quantile: the t with P(T ≤ t) = p on ν = df degrees of freedom,
 * 0 < p < 1. Cost: a few evaluations of the tail. Throws StatsError on
 * invalid arguments.
 */
export function studentTQuantile(p: number, df: number): number {
  checkTDf(df, "studentTQuantile");
  checkProbability(p, "studentTQuantile");
  if (df === Infinity) return normalQuantile(p);
  if (p === 0.5) return 0;
  const q = p < 0.5 ? p : 1 - p;
  if (q > 0.25) {
    // near the centre solve P(|T| < t) = |2p − 1| (exact in floating point)
    const t = solveTail({
      logTail: (v) => Math.log(centralPositive(v, df)),
      logTailSlope: (v) => (2 * studentTDensity(v, df)) / centralPositive(v, df),
      target: Math.abs(2 * p - 1),
      increasing: true,
      start: Math.max(Math.abs(normalQuantile(p)), 1e-300),
      upperBound: Infinity,
      name: "studentTQuantile",
    });
    return p < 0.5 ? -t : t;
  }
  const z = -normalQuantile(q);
  // Start: the Cornish–Fisher term for moderate ν, the power-law tail
  // P(T > t) ≈ C t^−ν for the far tail of few degrees of freedom.
  const cornishFisher = z + (z * z * z + z) / (4 * df);
  const logC =
    (df / 2 >= 10 ? logGammaRatio(df / 2, 0.5) : logGamma(df / 2 + 0.5) - logGamma(df / 2)) +
    (df / 2) * Math.log(df) -
    0.5 * Math.log(Math.PI) -
    Math.log(df);
  const powerTail = Math.exp((logC - Math.log(q)) / df);
  const start = Math.max(cornishFisher, Number.isFinite(powerTail) ? powerTail : 0, 1e-3);
  const t = solveTail({
    logTail: (v) => Math.log(upperTailPositive(v, df)),
    logTailSlope: (v) => -studentTDensity(v, df) / upperTailPositive(v, df),
    target: q,
    increasing: false,
    start,
    upperBound: Infinity,
    name: "studentTQuantile",
  });
  return p < 0.5 ? -t : t;
}
