/**
 * The one quantile solver of the distribution families: safeguarded Newton
 * steps on the logarithm of a tail probability, in the logarithm of the
 * variable (Press et al. 2007, Numerical Recipes 3rd ed., §9.4, routine
 * rtsafe: a Newton step that would leave the bracket is replaced by
 * bisection, so the iteration never diverges).
 *
 * Solving log tail(v) = log target rather than tail(v) = target keeps full
 * relative precision for targets down to about 1e-300, and the logarithm of
 * the variable makes the heavy power-law tails of Student's t and F nearly
 * linear, so Newton converges in a few steps from a rough start.
 */
import { StatsError } from "../errors";

export interface TailEquation {
  /** log of the tail probability at v > 0 (may be −Infinity where it underflows). */
  logTail: (v: number) => number;
  /** d log tail / dv at v (negative for an upper tail, positive for a lower tail). */
  logTailSlope: (v: number) => number;
  /** The tail probability sought, 0 < target < 1. */
  target: number;
  /** Whether the tail grows with v (a lower tail) or shrinks (an upper tail). */
  increasing: boolean;
  /** A starting value > 0, the closer the fewer steps. */
  start: number;
  /** The upper end of the variable's range: Infinity, or 1 for a proportion. */
  upperBound: number;
  /** The public function's name, for errors. */
  name: string;
}

/**
 * Solves log tail(v) = log target for v in (0, upperBound), the tail being
 * monotone in v. Cost: typically 4–8 evaluations of the tail and its slope,
 * at most 400. Throws StatsError when no solution is found.
 */
export function solveTail(eq: TailEquation): number {
  const logTarget = Math.log(eq.target);
  const increasing = eq.increasing;
  let lo = 0;
  let hi = eq.upperBound;
  let v = eq.start > 0 && eq.start < hi ? eq.start : hi === Infinity ? 1 : hi / 2;
  for (let iteration = 0; iteration < 400; iteration++) {
    const g = eq.logTail(v) - logTarget;
    if (g === 0) return v;
    // Root above v when the tail is still too small (increasing) or too large (decreasing).
    if (g < 0 === increasing) lo = v;
    else hi = v;
    let next = Number.NaN;
    let relativeStep = Infinity;
    if (Number.isFinite(g)) {
      const slope = v * eq.logTailSlope(v);
      if (Number.isFinite(slope) && slope !== 0) {
        relativeStep = -g / slope;
        next = v * Math.exp(relativeStep);
      }
    }
    if (!(next > lo && next < hi)) {
      relativeStep = Infinity;
      if (hi === Infinity) next = Math.max(lo, Number.MIN_VALUE) * 16;
      else if (lo === 0) next = hi / 16;
      else next = hi / lo > 4 ? Math.sqrt(lo * hi) : 0.5 * (lo + hi);
      if (!(next > lo && next < hi)) return v;
    }
    v = next;
    if (Math.abs(relativeStep) < 1e-13) return v;
  }
  throw new StatsError(`${eq.name} did not converge`);
}
