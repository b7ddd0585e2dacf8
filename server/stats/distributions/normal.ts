/**
 * The standard normal distribution: density φ, distribution function Φ, its
 * upper tail and two-sided p-value, and the quantile Φ⁻¹.
 *
 * The upper tail Φ̄(z) = ½ Q(½, z²/2) (Abramowitz & Stegun 1964, 26.2.30 with
 * 6.5.17), by the incomplete gamma series for z < 2 and by its continued
 * fraction for z ≥ 2 (Numerical Recipes §6.2, see gamma.ts), where
 * Φ̄(z) = ½ z φ(z) h(z) and φ(z) is formed from a split z² = z₀² + (z − z₀)(z + z₀),
 * z₀ = ⌊16z⌋/16, so that e^(−z²/2) keeps full relative precision down to
 * the smallest representable tails (z ≈ 38). The quantile solves the
 * smaller tail by safeguarded Newton steps (solve.ts) from the rational
 * approximation of A&S 26.2.23.
 */
import { checkNumber, checkProbability } from "./arguments";
import { lowerGammaSeries, upperGammaFraction } from "./gamma";
import { solveTail } from "./solve";

const INV_SQRT_TWO_PI = 0.3989422804014327;
const INV_GAMMA_THREE_HALVES = 1.1283791670955126; // 1/Γ(3/2) = 2/√π

/** Standard normal density φ(z), to full relative precision for every z. Cost O(1). */
export function normalDensity(z: number): number {
  const a = Math.abs(z);
  if (a < 5) return INV_SQRT_TWO_PI * Math.exp(-0.5 * a * a);
  const z0 = Math.trunc(a * 16) / 16;
  const del = (a - z0) * (a + z0);
  return INV_SQRT_TWO_PI * Math.exp(-0.5 * z0 * z0) * Math.exp(-0.5 * del);
}

/** P(|Z| < z) = P(½, z²/2) for 0 ≤ z < 2, by the incomplete gamma series. */
function centralSeries(z: number): number {
  const x = 0.5 * z * z;
  // P(½, x) = x^½ e^−x / Γ(3/2) · series
  return (z / Math.SQRT2) * Math.exp(-x) * INV_GAMMA_THREE_HALVES * lowerGammaSeries(0.5, x);
}

/** Φ̄(z) = P(Z > z) for z ≥ 0. */
function upperTailPositive(z: number): number {
  if (z === Infinity) return 0;
  if (z < 2) return 0.5 - 0.5 * centralSeries(z);
  return 0.5 * z * normalDensity(z) * upperGammaFraction(0.5, 0.5 * z * z);
}

/** P(|Z| < z) for z ≥ 0. */
function centralPositive(z: number): number {
  return z < 2 ? centralSeries(z) : 1 - 2 * upperTailPositive(z);
}

/** Standard normal distribution function Φ(z), to full relative precision in both tails. Cost O(1). */
export function normalCdf(z: number): number {
  checkNumber(z, "normalCdf");
  return z < 0 ? upperTailPositive(-z) : 1 - upperTailPositive(z);
}

/** Standard normal upper tail P(Z > z) = Φ(−z), computed directly. Cost O(1). */
export function normalUpper(z: number): number {
  checkNumber(z, "normalUpper");
  return z > 0 ? upperTailPositive(z) : 1 - upperTailPositive(-z);
}

/**
 * log Φ̄(z), finite for every finite z: the direct tail below z = 37, the
 * asymptotic series of the Mills ratio Φ̄(z)/φ(z) ~ 1/z − 1/z³ + 3/z⁵ − 15/z⁷ +
 * 105/z⁹ (A&S 26.2.12) above, where its truncation error is below 1e-13.
 */
export function logNormalUpper(z: number): number {
  if (z < 37) return Math.log(normalUpper(z));
  const z0 = Math.trunc(z * 16) / 16;
  const r = 1 / (z * z);
  const mills = (1 / z) * (1 - r * (1 - r * (3 - r * (15 - r * 105))));
  return -0.5 * z0 * z0 - 0.5 * (z - z0) * (z + z0) - 0.9189385332046728 + Math.log(mills);
}

/** The Mills ratio φ(z)/Φ̄(z) (the hazard of the standard normal), finite for every finite z. */
export function normalHazard(z: number): number {
  if (z < 37) return normalDensity(z) / normalUpper(z);
  const r = 1 / (z * z);
  return z / (1 - r * (1 - r * (3 - r * (15 - r * 105))));
}

/** Two-sided standard normal p-value P(|Z| ≥ |z|). Cost O(1). */
export function normalTwoSidedP(z: number): number {
  checkNumber(z, "normalTwoSidedP");
  return Math.min(1, 2 * upperTailPositive(Math.abs(z)));
}

/**
 * Standard normal quantile Φ⁻¹(p), 0 < p < 1, to full precision for p down
 * to the smallest positive number. Cost: a few evaluations of Φ̄.
 * Throws StatsError outside (0, 1).
 */
export function normalQuantile(p: number): number {
  checkProbability(p, "normalQuantile");
  if (p === 0.5) return 0;
  const q = p < 0.5 ? p : 1 - p;
  if (q > 0.25) {
    // near the centre solve P(|Z| < z) = |2p − 1| (exact in floating point), not Φ̄(z) = q,
    // whose value near ½ carries too few significant digits of z
    const z = solveTail({
      logTail: (v) => Math.log(centralPositive(v)),
      logTailSlope: (v) => (2 * normalDensity(v)) / centralPositive(v),
      target: Math.abs(2 * p - 1),
      increasing: true,
      start: Math.abs(2 * p - 1) * 1.2533141373155003,
      upperBound: Infinity,
      name: "normalQuantile",
    });
    return p < 0.5 ? -z : z;
  }
  // A&S 26.2.23, absolute error < 4.5e-4
  const t = Math.sqrt(-2 * Math.log(q));
  const start =
    t -
    (2.515517 + 0.802853 * t + 0.010328 * t * t) /
      (1 + 1.432788 * t + 0.189269 * t * t + 0.001308 * t * t * t);
  const z = solveTail({
    logTail: (v) => Math.log(upperTailPositive(v)),
    logTailSlope: (v) => -normalDensity(v) / upperTailPositive(v),
    target: q,
    increasing: false,
    start: Math.max(start, 1e-3),
    upperBound: Infinity,
    name: "normalQuantile",
  });
  return p < 0.5 ? -z : z;
}
