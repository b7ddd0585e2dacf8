/**
 * Brent's root finder (Brent 1973, "Algorithms for Minimization without
 * Derivatives", ch. 4): inverse quadratic interpolation with bisection
 * safeguards. Used to invert distribution functions in a parameter (for
 * example the noncentrality of a noncentral t). Cost: O(log(1/tol))
 * evaluations of f, typically 10–20.
 *
 * Precondition: f is continuous on [a, b] and f(a), f(b) have opposite signs
 * (or one is zero). Throws StatsError otherwise.
 */
import { StatsError } from "./errors";

export function brentRoot(
  f: (x: number) => number,
  a: number,
  b: number,
  tol = 1e-10,
  maxIterations = 200,
): number {
  let fa = f(a);
  let fb = f(b);
  if (fa === 0) return a;
  if (fb === 0) return b;
  if (!(fa * fb < 0)) throw new StatsError("brentRoot requires a bracketing interval");
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let iter = 0; iter < maxIterations; iter++) {
    if ((fb > 0 && fc > 0) || (fb < 0 && fc < 0)) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const tol1 = 2 * Number.EPSILON * Math.abs(b) + 0.5 * tol;
    const xm = 0.5 * (c - b);
    if (Math.abs(xm) <= tol1 || fb === 0) return b;
    if (Math.abs(e) >= tol1 && Math.abs(fa) > Math.abs(fb)) {
      const s = fb / fa;
      let p: number;
      let q: number;
      if (a === c) {
        p = 2 * xm * s;
        q = 1 - s;
      } else {
        const qq = fa / fc;
        const r = fb / fc;
        p = s * (2 * xm * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      p = Math.abs(p);
      const min1 = 3 * xm * q - Math.abs(tol1 * q);
      const min2 = Math.abs(e * q);
      if (2 * p < Math.min(min1, min2)) {
        e = d;
        d = p / q;
      } else {
        d = xm;
        e = d;
      }
    } else {
      d = xm;
      e = d;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol1 ? d : xm > 0 ? tol1 : -tol1;
    fb = f(b);
  }
  return b;
}

/**
 * Brent's root finder on a bracketing interval [a, b], to machine precision:
 * `brentRoot` with no absolute tolerance, so the relative tolerance is about
 * 2·ε. Throws StatsError naming `name` when [a, b] does not bracket a root.
 */
export function findRoot(f: (x: number) => number, a0: number, b0: number, name: string): number {
  const fa = f(a0);
  const fb = f(b0);
  if (!(fa === 0 || fb === 0 || fa * fb < 0))
    throw new StatsError(`${name} could not bracket the solution`);
  return brentRoot(f, a0, b0, 1e-300, 300);
}
