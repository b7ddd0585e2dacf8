/**
 * The time-left estimate of a running fit, in one place: none until the
 * first 5 % of the work is done (before that the rate is too noisy to say
 * anything useful, so the screen shows the fraction only); after that, the
 * measured rate so far (elapsed time per fraction done) applied to what
 * remains. Common practice, no source.
 */

/** The fraction of the work after which a time-left estimate is shown. */
export const timeLeftAfterFraction = 0.05;

/** Seconds left, rounded up, or null while fewer than 5 % of the work is done or no time has passed. */
export function secondsLeftOf(fraction: number, elapsedMs: number): number | null {
  if (!(fraction >= timeLeftAfterFraction) || !(elapsedMs > 0)) return null;
  if (fraction >= 1) return 0;
  return Math.ceil((elapsedMs * (1 - fraction)) / fraction / 1000);
}
