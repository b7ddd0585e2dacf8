/**
 * The noncentral t distribution: T = (Z + δ)/√(V/ν), Z standard normal, V
 * chi-square on ν degrees of freedom, δ the noncentrality.
 *
 * For t ≥ 0, with x = t²/(ν + t²), y = ν/(ν + t²), λ = δ²/2 (Lenth 1989,
 * Applied Statistics AS 243, equation (2)):
 *   P(T ≤ t) = Φ(−δ) + Σ_j [P_j I_x(j + ½, ν/2) + Q_j I_x(j + 1, ν/2)],
 *   P(T > t) =         Σ_j [P_j I_y(ν/2, j + ½) + Q_j I_y(ν/2, j + 1)],
 * P_j = ½ e^−λ λ^j / j!, Q_j = ½ sign(δ) e^−λ λ^(j+½) / Γ(j + 3/2); the second
 * line follows from the first because ΣP_j = ½ and ΣQ_j = Φ(δ) − ½. Negative
 * t is reflected, P(T ≤ t; ν, δ) = P(T > −t; ν, −δ).
 *
 * AS 243 sums from j = 0, whose Poisson weight e^−λ underflows for |δ| > 37.6
 * and then needs a normal approximation; here the sum starts at the mode
 * j = ⌊λ⌋ and runs forward and backward, as in Benton & Krishnamoorthy (2003),
 * "Computing discrete mixtures of continuous distributions: noncentral
 * chisquare, noncentral t and the distribution of the square of the sample
 * multiple correlation coefficient", Computational Statistics & Data Analysis
 * 43, 249–267. The two incomplete beta values at the mode come from beta.ts
 * (both tails at once); the others follow from the exact recurrences
 * I_x(a + 1, b) = I_x(a, b) − g_a and I_y(b, a + 1) = I_y(b, a) + g_a,
 * g_a = x^a y^b / (a B(a, b)). Summation stops when the Poisson mass left,
 * times a bound on the beta factor, is below 1e-17 of the sum. With δ ≥ 0
 * every term of both sums is positive, so both tails keep full relative
 * precision; with δ < 0 the lower tail is at least ½ and the upper tail is a
 * difference of positive sums (absolute error about 1e-16 times the larger).
 * Cost: two incomplete beta evaluations and O(√λ + 40) terms.
 */
import { StatsError } from "../errors";
import { checkDf, checkNumber, checkProbability } from "./arguments";
import { incompleteBeta, logBetaFront } from "./beta";
import { bd0, logGamma, logGammaFront, stirlingCorrection, type Tails } from "./gamma";
import { logNormalUpper, normalCdf, normalHazard, normalQuantile } from "./normal";
import { gaussLegendre16 } from "./quadrature";
import { solveTail } from "./solve";

const TOLERANCE = 1e-17;
const MAX_TERMS = 200000;

/** One Poisson-weighted incomplete beta sequence, shape a = a0 + j, walked from the mode. */
interface BetaWalk {
  a: number;
  lower: number;
  upper: number;
  g: number;
}

function startWalk(x: number, y: number, a: number, b: number): BetaWalk {
  const tails = incompleteBeta(x, y, a, b);
  return { a, lower: tails.lower, upper: tails.upper, g: Math.exp(logBetaFront(x, y, a, b)) / a };
}

/** Both tails for t ≥ 0 (finite), ν > 0, finite δ. */
function tailsPositive(t: number, df: number, ncp: number): Tails {
  if (t === 0) return { lower: normalCdf(-ncp), upper: normalCdf(ncp) };
  const t2 = t * t;
  let x: number;
  let y: number;
  if (t2 === Infinity) {
    y = df / t / t;
    x = 1 - y;
  } else {
    x = t2 / (df + t2);
    y = df / (df + t2);
  }
  const b = df / 2;
  const lambda = 0.5 * ncp * ncp;
  const k = Math.floor(lambda);
  const sign = ncp < 0 ? -1 : 1;
  const p0 = 0.5 * Math.exp(k > 0 ? logGammaFront(k, lambda) : -lambda);
  const q0 = lambda > 0 ? 0.5 * sign * Math.exp(logGammaFront(k + 0.5, lambda)) : 0;
  const pStart = startWalk(x, y, k + 0.5, b);
  const qStart = startWalk(x, y, k + 1, b);
  let lowerSum = p0 * pStart.lower + q0 * qStart.lower;
  let upperSum = p0 * pStart.upper + q0 * qStart.upper;

  // Forward from the mode: I_x decreases, I_y increases towards 1.
  {
    let p = p0;
    let q = q0;
    const pw = { ...pStart };
    const qw = { ...qStart };
    for (let j = k + 1; ; j++) {
      if (j - k > MAX_TERMS) throw new StatsError("noncentral t series did not converge");
      pw.lower -= pw.g;
      pw.upper += pw.g;
      pw.g *= (x * (pw.a + b)) / (pw.a + 1);
      pw.a += 1;
      qw.lower -= qw.g;
      qw.upper += qw.g;
      qw.g *= (x * (qw.a + b)) / (qw.a + 1);
      qw.a += 1;
      p *= lambda / j;
      q *= lambda / (j + 0.5);
      lowerSum += p * Math.max(pw.lower, 0) + q * Math.max(qw.lower, 0);
      upperSum += p * pw.upper + q * qw.upper;
      const r = lambda / (j + 1);
      if (r < 1) {
        const mass = ((Math.abs(p) + Math.abs(q)) * r) / (1 - r);
        const lowerLeft = mass * Math.max(pw.lower, 0);
        if (
          lowerLeft <= TOLERANCE * Math.abs(lowerSum) + 1e-320 &&
          mass <= TOLERANCE * Math.abs(upperSum) + 1e-320
        )
          break;
      }
    }
  }
  // Backward from the mode: I_x increases, I_y decreases.
  {
    let p = p0;
    let q = q0;
    const pw = { ...pStart };
    const qw = { ...qStart };
    for (let j = k - 1; j >= 0; j--) {
      pw.g *= pw.a / (x * (pw.a - 1 + b));
      pw.a -= 1;
      pw.lower += pw.g;
      pw.upper -= pw.g;
      qw.g *= qw.a / (x * (qw.a - 1 + b));
      qw.a -= 1;
      qw.lower += qw.g;
      qw.upper -= qw.g;
      p *= (j + 1) / lambda;
      q *= (j + 1.5) / lambda;
      lowerSum += p * pw.lower + q * qw.lower;
      upperSum += p * Math.max(pw.upper, 0) + q * Math.max(qw.upper, 0);
      const r = j / lambda;
      const mass = ((Math.abs(p) + Math.abs(q)) * r) / (1 - r);
      if (
        mass <= TOLERANCE * Math.abs(lowerSum) + 1e-320 &&
        mass * Math.max(pw.upper, 0) <= TOLERANCE * Math.abs(upperSum) + 1e-320
      )
        break;
    }
  }
  let lower = Math.min(1, normalCdf(-ncp) + lowerSum);
  let upper = Math.min(1, Math.max(0, upperSum));
  // With δ < 0 the upper sum has terms of both signs; where it is small, integrate instead.
  if (ncp < 0 && df >= 1 && upper < 0.01) upper = tailByQuadrature(t, -ncp, df);
  // With large δ > 0 and small t both factors of the lower terms can underflow while their
  // product does not; below 1e-200 integrate instead.
  if (ncp > 0 && df >= 1 && lower < 1e-200) lower = tailByQuadrature(-t, ncp, df);
  return { lower, upper };
}

/** log of the density of S = √(V/ν), V chi-square on ν ≥ 1 df, at s > 0, without cancellation for large ν. */
function logScaleDensity(s: number, df: number): number {
  const h = df / 2;
  if (h < 10) return Math.LN2 + h * Math.log(h) - logGamma(h) + (df - 1) * Math.log(s) - h * s * s;
  // Stirling: log 2 + h log h − log Γ(h) + (2h − 1) log s − h s² = log 2 + ½ log(h/2π) − c(h) − log s − h·bd0(1, s²)
  return (
    Math.LN2 +
    0.5 * Math.log(h / (2 * Math.PI)) -
    stirlingCorrection(h) -
    Math.log(s) -
    h * bd0(1, s * s)
  );
}

/**
 * ∫ f_S(s) Φ̄(α·s + β) ds, ν ≥ 1: with (α, β) = (t, −δ) the upper tail P(T > t),
 * with (−t, δ) the lower tail P(T ≤ t) (Johnson, Kotz & Balakrishnan 1995,
 * Continuous Univariate Distributions vol. 2, ch. 31): a positive integrand,
 * so a small tail keeps full relative precision. The
 * logarithm of the integrand is concave; its maximum is found by Newton steps
 * and the integral taken by 16-point Gauss–Legendre panels of one local
 * standard deviation each, out to where the integrand has fallen by e^−60.
 */
function tailByQuadrature(alpha: number, beta: number, df: number): number {
  const logIntegrand = (s: number): number =>
    s <= 0 ? -Infinity : logScaleDensity(s, df) + logNormalUpper(alpha * s + beta);
  // d/ds and d²/ds² of the log integrand; the Mills ratio m(u) = φ(u)/Φ̄(u)
  const derivatives = (s: number): [number, number] => {
    const u = alpha * s + beta;
    const m = normalHazard(u);
    const d1 = (df - 1) / s - df * s - alpha * m;
    const d2 = -(df - 1) / (s * s) - df - alpha * alpha * m * (m - u);
    return [d1, d2];
  };
  let s = 1;
  for (let i = 0; i < 100; i++) {
    const [d1, d2] = derivatives(s);
    let next = s - d1 / d2;
    if (!(next > 0)) next = s / 2;
    if (Math.abs(next - s) < 1e-12 * s) {
      s = next;
      break;
    }
    s = next;
  }
  const width = 1 / Math.sqrt(-derivatives(s)[1]);
  const peak = logIntegrand(s);
  const f = (v: number): number => Math.exp(logIntegrand(v) - peak);
  let sum = 0;
  // outward from the peak in panels of one width, each side until a panel adds < 1e-18 of the sum
  for (const direction of [1, -1]) {
    let a = s;
    for (let k = 0; k < 400; k++) {
      let b = a + direction * width;
      if (b <= 0) b = 0;
      const piece = Math.abs(gaussLegendre16(f, Math.min(a, b), Math.max(a, b)));
      sum += piece;
      a = b;
      if (b === 0 || piece <= 1e-18 * sum) break;
    }
  }
  return sum * Math.exp(peak);
}

function checkArguments(t: number, df: number, ncp: number, name: string): void {
  checkDf(df, name);
  checkNumber(t, name);
  if (!Number.isFinite(ncp)) throw new StatsError(`${name} requires a finite noncentrality`);
}

function tails(t: number, df: number, ncp: number): Tails {
  if (t === Infinity) return { lower: 1, upper: 0 };
  if (t === -Infinity) return { lower: 0, upper: 1 };
  if (t >= 0) return tailsPositive(t, df, ncp);
  const mirrored = tailsPositive(-t, df, -ncp);
  return { lower: mirrored.upper, upper: mirrored.lower };
}

/**
 * Noncentral t distribution function P(T ≤ t) on ν = df degrees of freedom
 * (ν > 0) with noncentrality δ = ncp. Cost O(√λ + 40) terms.
 * Throws StatsError on invalid arguments.
 */
export function noncentralTCdf(t: number, df: number, ncp: number): number {
  checkArguments(t, df, ncp, "noncentralTCdf");
  return tails(t, df, ncp).lower;
}

/** Noncentral t upper tail P(T > t), computed directly. Cost O(√λ + 40) terms. */
export function noncentralTUpper(t: number, df: number, ncp: number): number {
  checkArguments(t, df, ncp, "noncentralTUpper");
  return tails(t, df, ncp).upper;
}

/**
 * Noncentral t quantile: the t with P(T ≤ t) = p, 0 < p < 1, by safeguarded
 * Newton steps on the smaller tail (solve.ts) with the slope taken by a
 * forward difference. Cost: about 10–20 evaluations of the distribution
 * function.
 */
export function noncentralTQuantile(p: number, df: number, ncp: number): number {
  checkArguments(0, df, ncp, "noncentralTQuantile");
  checkProbability(p, "noncentralTQuantile");
  const atZero = normalCdf(-ncp);
  if (p === atZero) return 0;
  const negative = p < atZero;
  // Negative t: solve P(T ≤ −v) = p; positive t: the smaller of the two tails.
  const useLower = !negative && p <= 0.5;
  const target = negative || useLower ? p : 1 - p;
  const tail = (v: number): number => {
    if (negative) return tailsPositive(v, df, -ncp).upper;
    const both = tailsPositive(v, df, ncp);
    return useLower ? both.lower : both.upper;
  };
  const logTail = (v: number): number => Math.log(tail(v));
  const shift = Math.abs(ncp) + Math.abs(normalQuantile(p)) * Math.sqrt(1 + (ncp * ncp) / (2 * df));
  return (
    (negative ? -1 : 1) *
    solveTail({
      logTail,
      logTailSlope: (v) => {
        const h = 1e-7 * v;
        return (logTail(v + h) - logTail(v)) / h;
      },
      target,
      increasing: useLower,
      start: Math.max(shift, 1e-3),
      upperBound: Infinity,
      name: "noncentralTQuantile",
    })
  );
}
