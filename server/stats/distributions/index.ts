/**
 * The engine's distribution functions, one file per family: normal, Student
 * t, F, chi-square, beta (with the regularized incomplete beta function),
 * gamma (log Γ and the regularized incomplete gamma functions) and the
 * noncentral t. Upper tails are computed directly, never as 1 − cdf; every
 * quantile is found by the one safeguarded Newton solver of solve.ts.
 */
export { betaCdf, betaQuantile, betaUpper, incompleteBeta, logBeta, regularizedBeta } from "./beta";
export {
  chiSquareCdf,
  chiSquareDensity,
  chiSquareQuantile,
  chiSquareUpper,
} from "./chi-square";
export { fCdf, fDensity, fQuantile, fUpper } from "./f";
export { logGamma, regularizedGamma, regularizedGammaP, regularizedGammaQ } from "./gamma";
export { noncentralTCdf, noncentralTQuantile, noncentralTUpper } from "./noncentral-t";
export { normalCdf, normalDensity, normalQuantile, normalTwoSidedP, normalUpper } from "./normal";
export {
  studentTCdf,
  studentTDensity,
  studentTQuantile,
  studentTTwoSidedP,
  studentTUpper,
} from "./student-t";
