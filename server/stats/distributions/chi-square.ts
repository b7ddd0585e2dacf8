/**
 * The chi-square distribution on k degrees of freedom: P(X ≤ x) =
 * P(k/2, x/2), the regularized incomplete gamma function of gamma.ts
 * (Abramowitz & Stegun 1964, 26.4.19); each tail is computed directly. The
 * quantile solves the smaller tail by safeguarded Newton steps (solve.ts)
 * from the Wilson–Hilferty cube-root approximation (A&S 26.4.17).
 */
import { checkDf, checkNumber, checkProbability } from "./arguments";
import { logGammaFront, regularizedGamma } from "./gamma";
import { normalQuantile } from "./normal";
import { solveTail } from "./solve";

/** Chi-square density at x > 0 on k degrees of freedom. Cost O(1). */
export function chiSquareDensity(x: number, df: number): number {
  checkDf(df, "chiSquareDensity");
  if (!(x > 0) || x === Infinity) return 0;
  // f(x) = ½ (x/2)^(k/2 − 1) e^(−x/2) / Γ(k/2) = (k/2)/x · (x/2)^(k/2) e^(−x/2) / Γ(k/2 + 1)
  const a = df / 2;
  return (a / x) * Math.exp(logGammaFront(a, x / 2));
}

/** Chi-square distribution function P(X ≤ x). Cost O(√k). */
export function chiSquareCdf(x: number, df: number): number {
  checkDf(df, "chiSquareCdf");
  checkNumber(x, "chiSquareCdf");
  if (x <= 0) return 0;
  return regularizedGamma(df / 2, x / 2).lower;
}

/** Chi-square upper tail P(X > x), computed directly. Cost O(√k). */
export function chiSquareUpper(x: number, df: number): number {
  checkDf(df, "chiSquareUpper");
  checkNumber(x, "chiSquareUpper");
  if (x <= 0) return 1;
  return regularizedGamma(df / 2, x / 2).upper;
}

/**
 * Chi-square quantile: the x with P(X ≤ x) = p on k degrees of freedom,
 * 0 < p < 1. Cost: a few evaluations of the incomplete gamma function.
 */
export function chiSquareQuantile(p: number, df: number): number {
  checkDf(df, "chiSquareQuantile");
  checkProbability(p, "chiSquareQuantile");
  const lower = p <= 0.5;
  const target = lower ? p : 1 - p;
  const a = df / 2;
  const tail = (v: number): number => {
    const t = regularizedGamma(a, v / 2);
    return lower ? t.lower : t.upper;
  };
  const c = 2 / (9 * df);
  const wilsonHilferty = df * (1 - c + normalQuantile(p) * Math.sqrt(c)) ** 3;
  return solveTail({
    logTail: (v) => Math.log(tail(v)),
    logTailSlope: (v) => (lower ? 1 : -1) * (chiSquareDensity(v, df) / tail(v)),
    target,
    increasing: lower,
    start: wilsonHilferty > 0 ? wilsonHilferty : df,
    upperBound: Infinity,
    name: "chiSquareQuantile",
  });
}
