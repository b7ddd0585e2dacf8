/**
 * Cook's distance contours for the residual-versus-leverage plot.
 *
 * Cook's distance of participant i (Cook 1977, Technometrics 19:15–18;
 * Cook & Weisberg 1982, "Residuals and Influence in Regression", §3.5):
 *   D = r² · h / (p · (1 − h)),
 * with r the internally studentized residual, h the leverage and p the number
 * of model coefficients. Solving for r gives the contour of constant D:
 *   r = ±√(D · p · (1 − h) / h),
 * and solving for h gives where a contour reaches a given |r|:
 *   h = D · p / (r² + D · p).
 * The contours are exact for internally studentized residuals; drawn under
 * externally studentized residuals they are a close guide, not exact.
 */
import { ChartInputError } from "./chart-input-error";

function checkCommon(d: number, p: number): void {
  if (!(Number.isFinite(d) && d > 0)) throw new ChartInputError("cooksDistance", `must be a positive number (got ${d})`);
  if (!(Number.isInteger(p) && p >= 1)) throw new ChartInputError("coefficients", `must be a whole number of at least 1 (got ${p})`);
}

/** Cook's distance from an internally studentized residual `r`, leverage `h` (0 ≤ h < 1) and `p` coefficients. */
export function cooksDistanceFrom(r: number, h: number, p: number): number {
  if (!(h >= 0 && h < 1)) throw new ChartInputError("leverage", `must lie in [0, 1) (got ${h})`);
  if (!(Number.isInteger(p) && p >= 1)) throw new ChartInputError("coefficients", `must be a whole number of at least 1 (got ${p})`);
  return (r * r * h) / (p * (1 - h));
}

/** |r| on the contour of Cook's distance `d` at leverage `h` (0 < h < 1): √(d·p·(1 − h)/h). */
export function contourResidual(d: number, p: number, h: number): number {
  checkCommon(d, p);
  if (!(h > 0 && h < 1)) throw new ChartInputError("leverage", `must lie strictly between 0 and 1 (got ${h})`);
  return Math.sqrt((d * p * (1 - h)) / h);
}

/** The leverage at which the contour of Cook's distance `d` reaches |r| = `r`: d·p/(r² + d·p). */
export function contourLeverageAt(d: number, p: number, r: number): number {
  checkCommon(d, p);
  if (!Number.isFinite(r)) throw new ChartInputError("residual", `must be a finite number (got ${r})`);
  return (d * p) / (r * r + d * p);
}

export interface ContourPoint {
  h: number;
  r: number;
}

/**
 * Points along the upper half of the contour of Cook's distance `d` (mirror
 * r for the lower half), from where it enters the box |r| ≤ `rMax` to
 * leverage `hMax`, at `steps` + 1 leverages spaced evenly in log(h) so the
 * steep start is drawn smoothly. Empty when the contour stays outside the
 * box. Cost O(steps).
 */
export function contourPoints(d: number, p: number, options: { hMax: number; rMax: number; steps?: number }): ContourPoint[] {
  const { hMax, rMax } = options;
  const steps = Math.max(1, Math.round(options.steps ?? 48));
  if (!(hMax > 0 && hMax < 1)) throw new ChartInputError("hMax", `must lie strictly between 0 and 1 (got ${hMax})`);
  if (!(rMax > 0)) throw new ChartInputError("rMax", `must be positive (got ${rMax})`);
  const hStart = contourLeverageAt(d, p, rMax);
  if (hStart >= hMax) return [];
  const points: ContourPoint[] = [];
  const logStart = Math.log(hStart);
  const logEnd = Math.log(hMax);
  for (let i = 0; i <= steps; i++) {
    const h = i === 0 ? hStart : i === steps ? hMax : Math.exp(logStart + ((logEnd - logStart) * i) / steps);
    points.push({ h, r: contourResidual(d, p, h) });
  }
  return points;
}
