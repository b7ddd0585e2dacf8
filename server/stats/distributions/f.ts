/**
 * The F distribution on (d1, d2) degrees of freedom.
 *
 * P(F ≤ x) = I_u(d1/2, d2/2) with u = d1·x/(d1·x + d2) and
 * 1 − u = d2/(d1·x + d2) (Abramowitz & Stegun 1964, 26.6.2), by the
 * incomplete beta function of beta.ts; each tail is computed directly. The
 * quantile solves the smaller tail by safeguarded Newton steps (solve.ts).
 */
import { checkDf, checkNumber, checkProbability } from "./arguments";
import { incompleteBeta, logBetaFront } from "./beta";
import type { Tails } from "./gamma";
import { solveTail } from "./solve";

function checkF(d1: number, d2: number, name: string): void {
  checkDf(d1, name);
  checkDf(d2, name);
}

/** Both tails at x > 0 (finite). */
function tails(x: number, d1: number, d2: number): Tails {
  const s = d1 * x + d2;
  if (s === Infinity) {
    const y = d2 / (d1 * x);
    return incompleteBeta(1 - y, y, d1 / 2, d2 / 2);
  }
  return incompleteBeta((d1 * x) / s, d2 / s, d1 / 2, d2 / 2);
}

/** F density at x > 0. Cost O(1). */
export function fDensity(x: number, d1: number, d2: number): number {
  checkF(d1, d2, "fDensity");
  if (!(x > 0) || x === Infinity) return 0;
  const s = d1 * x + d2;
  const u = (d1 * x) / s;
  const w = d2 / s;
  // f(x) = u^(d1/2) w^(d2/2) / (x B(d1/2, d2/2))
  return Math.exp(logBetaFront(u, w, d1 / 2, d2 / 2)) / x;
}

/** F distribution function P(F ≤ x) on (d1, d2) degrees of freedom. Cost O(√(d1 + d2)). */
export function fCdf(x: number, d1: number, d2: number): number {
  checkF(d1, d2, "fCdf");
  checkNumber(x, "fCdf");
  if (x <= 0) return 0;
  if (x === Infinity) return 1;
  return tails(x, d1, d2).lower;
}

/** Upper-tail F probability P(F > x), computed directly. Cost O(√(d1 + d2)). */
export function fUpper(x: number, d1: number, d2: number): number {
  checkF(d1, d2, "fUpper");
  checkNumber(x, "fUpper");
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return tails(x, d1, d2).upper;
}

/**
 * F quantile: the x with P(F ≤ x) = p on (d1, d2) degrees of freedom,
 * 0 < p < 1. Cost: a few evaluations of the incomplete beta function.
 */
export function fQuantile(p: number, d1: number, d2: number): number {
  checkF(d1, d2, "fQuantile");
  checkProbability(p, "fQuantile");
  const lower = p <= 0.5;
  const target = lower ? p : 1 - p;
  const tail = (v: number): number => {
    const t = tails(v, d1, d2);
    return lower ? t.lower : t.upper;
  };
  return solveTail({
    logTail: (v) => Math.log(tail(v)),
    logTailSlope: (v) => (lower ? 1 : -1) * (fDensity(v, d1, d2) / tail(v)),
    target,
    increasing: lower,
    start: d2 > 2 ? d2 / (d2 - 2) : 1,
    upperBound: Infinity,
    name: "fQuantile",
  });
}
