/**
 * The beta family: the regularized incomplete beta function I_x(a, b), both
 * of its tails, the beta distribution and its quantile.
 *
 * I_x(a, b) by its continued fraction evaluated with the modified Lentz
 * method (Press et al. 2007, Numerical Recipes 3rd ed., §6.4, routine betacf),
 * with the symmetry I_x(a, b) = 1 − I_{1−x}(b, a) so that the fraction is
 * always evaluated where it converges fast, x < (a + 1)/(a + b + 2); the
 * other tail is its complement, which then lies above about 0.08, so neither
 * tail suffers cancellation. The front factor x^a (1 − x)^b / (a B(a, b)) is
 * formed from log Γ differences that avoid cancellation for large a and b
 * (Stirling corrections and Loader's bd0, see gamma.ts). Callers pass both x
 * and y = 1 − x, each computed to full relative precision, so that
 * 1 − x is never formed by subtraction near 1.
 */
import { StatsError } from "../errors";
import { checkNumber, checkProbability } from "./arguments";
import {
  bd0,
  HALF_LOG_TWO_PI,
  logGamma,
  logGammaRatio,
  stirlingCorrection,
  type Tails,
} from "./gamma";
import { solveTail } from "./solve";

const EPS = 1e-16;
const FPMIN = 1e-300;

/** log B(a, b) = log Γ(a) + log Γ(b) − log Γ(a + b), a, b > 0. Cost O(1). */
export function logBeta(a: number, b: number): number {
  const p = Math.min(a, b);
  const q = Math.max(a, b);
  if (p >= 10) {
    const n = p + q;
    return (
      -0.5 * Math.log(q) +
      HALF_LOG_TWO_PI +
      stirlingCorrection(p) +
      stirlingCorrection(q) -
      stirlingCorrection(n) +
      (p - 0.5) * Math.log(p / n) +
      q * Math.log1p(-p / n)
    );
  }
  if (q >= 10) return logGamma(p) - logGammaRatio(q, p);
  return logGamma(p) + logGamma(q) - logGamma(p + q);
}

/**
 * log of x^a y^b / B(a, b), y = 1 − x, both given to full relative
 * precision. Cost O(1).
 */
export function logBetaFront(x: number, y: number, a: number, b: number): number {
  const logX = x < 0.5 ? Math.log(x) : Math.log1p(-y);
  const logY = y < 0.5 ? Math.log(y) : Math.log1p(-x);
  if (a >= 10 && b >= 10) {
    const n = a + b;
    return (
      -bd0(a, n * x) -
      bd0(b, n * y) +
      0.5 * Math.log((a / n) * (b / (2 * Math.PI))) +
      stirlingCorrection(n) -
      stirlingCorrection(a) -
      stirlingCorrection(b)
    );
  }
  return a * logX + b * logY - logBeta(a, b);
}

/**
 * Continued fraction of I_x(a, b) (modified Lentz, Numerical Recipes §6.4),
 * y = 1 − x. The first denominator 1 − (a + b)x/(a + 1) is formed as
 * (1 − b + (a + b)y)/(a + 1) when x > ½, where it would otherwise cancel.
 */
function betaFraction(x: number, y: number, a: number, b: number): number {
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = x > 0.5 ? (1 - b + qab * y) / qap : 1 - (qab * x) / qap;
  if (Math.abs(d) < FPMIN) d = FPMIN;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 1000000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = 1 + aa / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = 1 + aa / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) return h;
  }
  throw new StatsError(`the incomplete beta function did not converge for a = ${a}, b = ${b}`);
}

/**
 * Both tails of the regularized incomplete beta function: lower = I_x(a, b),
 * upper = 1 − I_x(a, b) = I_y(b, a), for 0 ≤ x ≤ 1 with y = 1 − x passed
 * separately (each to full relative precision), a, b > 0.
 * Cost O(√max(a, b)) terms. Throws StatsError on invalid arguments.
 */
export function incompleteBeta(x: number, y: number, a: number, b: number): Tails {
  if (!(a > 0 && b > 0) || !Number.isFinite(a) || !Number.isFinite(b))
    throw new StatsError(`incompleteBeta requires positive shape parameters (got ${a}, ${b})`);
  if (!(x >= 0 && x <= 1 && y >= 0 && y <= 1))
    throw new StatsError(`incompleteBeta requires 0 ≤ x ≤ 1 (got ${x})`);
  if (x === 0) return { lower: 0, upper: 1 };
  if (y === 0) return { lower: 1, upper: 0 };
  const logFront = logBetaFront(x, y, a, b);
  if (x < (a + 1) / (a + b + 2)) {
    const lower = (Math.exp(logFront) * betaFraction(x, y, a, b)) / a;
    return { lower, upper: 1 - lower };
  }
  const upper = (Math.exp(logFront) * betaFraction(y, x, b, a)) / b;
  return { lower: 1 - upper, upper };
}

/**
 * Regularized incomplete beta function I_x(a, b), 0 ≤ x ≤ 1, a, b > 0.
 * Cost O(√max(a, b)). Throws StatsError on invalid arguments.
 */
export function regularizedBeta(x: number, a: number, b: number): number {
  if (!(x >= 0 && x <= 1)) throw new StatsError(`regularizedBeta requires 0 ≤ x ≤ 1 (got ${x})`);
  return incompleteBeta(x, 1 - x, a, b).lower;
}

/**
 * x^(a−1) (1 − x)^(b−1) / B(a, b), the beta density, given x and y = 1 − x.
 * Cost O(1).
 */
export function betaDensityXY(x: number, y: number, a: number, b: number): number {
  if (x <= 0 || y <= 0) {
    const edge = x <= 0 ? a : b;
    return edge > 1 ? 0 : edge === 1 ? Math.exp(-logBeta(a, b)) : Infinity;
  }
  return Math.exp(logBetaFront(x, y, a, b)) / (x * y);
}

function checkShapes(a: number, b: number, name: string): void {
  if (!(a > 0 && b > 0) || !Number.isFinite(a) || !Number.isFinite(b))
    throw new StatsError(`${name} requires positive finite shape parameters (got ${a}, ${b})`);
}

/** Beta distribution function P(X ≤ x), X ~ Beta(a, b). Cost O(√max(a, b)). */
export function betaCdf(x: number, a: number, b: number): number {
  checkShapes(a, b, "betaCdf");
  checkNumber(x, "betaCdf");
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  return incompleteBeta(x, 1 - x, a, b).lower;
}

/** Beta upper tail P(X > x), computed directly. Cost O(√max(a, b)). */
export function betaUpper(x: number, a: number, b: number): number {
  checkShapes(a, b, "betaUpper");
  checkNumber(x, "betaUpper");
  if (x <= 0) return 1;
  if (x >= 1) return 0;
  return incompleteBeta(x, 1 - x, a, b).upper;
}

/**
 * Beta quantile: the x with P(X ≤ x) = p, 0 < p < 1, by safeguarded Newton
 * steps on the logarithm of the smaller tail (solve.ts), in the variable
 * x when p ≤ ½ and in 1 − x otherwise. Cost: about 10 evaluations of I_x.
 */
export function betaQuantile(p: number, a: number, b: number): number {
  checkShapes(a, b, "betaQuantile");
  checkProbability(p, "betaQuantile");
  const mean = a / (a + b);
  if (p <= 0.5) {
    // solve in x: lower tail I_x(a, b) = p
    const x = solveTail({
      logTail: (v) => Math.log(incompleteBeta(v, 1 - v, a, b).lower),
      logTailSlope: (v) => betaDensityXY(v, 1 - v, a, b) / incompleteBeta(v, 1 - v, a, b).lower,
      target: p,
      increasing: true,
      start: mean,
      upperBound: 1,
      name: "betaQuantile",
    });
    return x;
  }
  // solve in y = 1 − x: I_y(b, a) = 1 − p
  const y = solveTail({
    logTail: (v) => Math.log(incompleteBeta(v, 1 - v, b, a).lower),
    logTailSlope: (v) => betaDensityXY(v, 1 - v, b, a) / incompleteBeta(v, 1 - v, b, a).lower,
    target: 1 - p,
    increasing: true,
    start: 1 - mean,
    upperBound: 1,
    name: "betaQuantile",
  });
  return 1 - y;
}
